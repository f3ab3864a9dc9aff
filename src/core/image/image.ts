/** An 8-bit greyscale frame as decoded (sRGB-encoded values 0..255), row-major, no padding. */
export interface GrayImage {
  readonly width: number;
  readonly height: number;
  readonly data: Uint8Array;
}

/** A single-channel float image (a pyramid level, a response map), row-major, no padding. */
export interface FloatImage {
  readonly width: number;
  readonly height: number;
  readonly data: Float32Array;
}

export function expectImage(image: { width: number; height: number; data: ArrayLike<number> }, name: string): void {
  if (!Number.isInteger(image.width) || image.width <= 0 || !Number.isInteger(image.height) || image.height <= 0) {
    throw new TypeError(`Expected positive integer width and height for ${name} but received ${image.width}x${image.height}`);
  }
  if (image.data.length !== image.width * image.height) {
    throw new TypeError(`Expected ${image.width * image.height} pixels for ${name} but received ${image.data.length}`);
  }
}

/** Copies an 8-bit frame into a float image (values unchanged). */
export function toFloatImage(image: GrayImage, out?: Float32Array): FloatImage {
  const n = image.width * image.height;
  const data = out && out.length >= n ? out.subarray(0, n) : new Float32Array(n);
  const src = image.data;
  for (let i = 0; i < n; i++) data[i] = src[i];
  return { width: image.width, height: image.height, data };
}

/**
 * A fingerprint of a frame's pixels (two 32-bit FNV-1a style hashes over size and data, as hex):
 * equal for copies. Hashes four pixels at a time where the data is aligned for it.
 */
export function imageFingerprint(image: GrayImage): string {
  let h1 = 0x811c9dc5 ^ image.width, h2 = 0x01000193 ^ image.height;
  const d = image.data;
  const words = d.byteOffset % 4 === 0 ? d.length >> 2 : 0;
  const w32 = new Uint32Array(d.buffer, d.byteOffset, words);
  for (let i = 0; i < words; i++) {
    const v = w32[i];
    h1 = Math.imul(h1 ^ v, 0x01000193);
    h2 = Math.imul(h2 ^ v ^ i, 0x01000193) ^ (h2 >>> 15);
  }
  for (let i = 4 * words; i < d.length; i++) {
    h1 = Math.imul(h1 ^ d[i], 0x01000193);
    h2 = Math.imul(h2 ^ d[i] ^ (i & 0xff), 0x01000193);
  }
  return (h1 >>> 0).toString(16).padStart(8, '0') + (h2 >>> 0).toString(16).padStart(8, '0');
}
