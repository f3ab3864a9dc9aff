/**
 * Keypoints as a struct of arrays (one entry per keypoint, same index in every array), in level-0
 * pixel coordinates with pixel centres at integers.
 */
export interface Keypoints {
  count: number;
  x: Float32Array;
  y: Float32Array;
  /** Harris response at the keypoint (on its own pyramid level). */
  response: Float32Array;
  /** Orientation in radians, counter-clockwise from +x with y pointing down the image. */
  angle: Float32Array;
  /** Pyramid level the keypoint was found on. */
  level: Uint8Array;
  /** Diameter of the described patch in level-0 pixels. */
  size: Float32Array;
}

export function createKeypoints(capacity: number): Keypoints {
  return {
    count: 0,
    x: new Float32Array(capacity),
    y: new Float32Array(capacity),
    response: new Float32Array(capacity),
    angle: new Float32Array(capacity),
    level: new Uint8Array(capacity),
    size: new Float32Array(capacity),
  };
}
