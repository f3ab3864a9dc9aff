// The contract now lives in src/common/api.ts. This re-export only keeps branches written before the
// move compiling while they are merged; import from '../common/api.js' and delete this file after.
export * from '../common/api.js';
