// Moved to tools/ (shared with bench/); the tests keep importing it from here.
export * from '../../tools/opencv.js';
