/**
 * The sRGB transfer function (IEC 61966-2-1): encoded value in 0..1 to linear light in 0..1 and back.
 */
export function srgbToLinear(v: number): number {
  return v <= 0.04045 ? v / 12.92 : Math.pow((v + 0.055) / 1.055, 2.4);
}

export function linearToSrgb(l: number): number {
  return l <= 0.0031308 ? 12.92 * l : 1.055 * Math.pow(l, 1 / 2.4) - 0.055;
}

/** Linear light of each 8-bit code value. */
export const linearOf8bit: Float64Array = Float64Array.from({ length: 256 }, (_, i) => srgbToLinear(i / 255));
