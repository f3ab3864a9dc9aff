// OpenCV's JavaScript build (@techstark/opencv-js, a test-only dependency) as an outside reference.
// The module object is a thenable whose promise never settles under Node: never await it or return
// it from an async function; poll until cv.Mat exists instead.
import { createRequire } from 'node:module';

// eslint-disable-next-line @typescript-eslint/no-explicit-any
export type OpenCV = any;

let loaded: OpenCV | null = null;

export function loadOpenCV(timeoutMs = 30_000): Promise<{ cv: OpenCV }> {
  const require = createRequire(import.meta.url);
  if (!loaded) loaded = require('@techstark/opencv-js');
  const cv = loaded;
  const start = Date.now();
  return new Promise((resolve, reject) => {
    const poll = (): void => {
      if (cv && cv.Mat) resolve({ cv });
      else if (Date.now() - start > timeoutMs) reject(new Error('OpenCV.js did not initialise in time'));
      else setTimeout(poll, 5);
    };
    poll();
  });
}
