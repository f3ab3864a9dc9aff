import sharp from 'sharp';
import type { GrayImage } from '../core/image.js';

/** Largest image sharp is allowed to decode (a guard against decompression bombs): 200 MP. */
export const pixelLimit = 200_000_000;

/** Longest one decode may take before the file is given up, seconds. */
export const decodeTimeLimit = 60;

export interface DecodedFrame {
  /** Greyscale pixels at the analysis size, EXIF orientation applied. */
  readonly image: GrayImage;
  /** Size of the frame at full resolution after orientation. */
  readonly fullWidth: number;
  readonly fullHeight: number;
}

/**
 * Decodes a file to greyscale at most `maxSide` pixels on its longer side, upright by its EXIF
 * orientation. JPEG shrinks on load by 1/2, 1/4 or 1/8, so a size at one of those ratios is far
 * cheaper than one just above it.
 */
export async function decodeForAnalysis(path: string, maxSide: number): Promise<DecodedFrame> {
  const img = sharp(path, { limitInputPixels: pixelLimit, failOn: 'error' }).autoOrient();
  const meta = await img.metadata();
  if (!meta.width || !meta.height) throw new Error(`Expected an image with a size for ${path} but received none`);
  const swap = (meta.orientation ?? 1) >= 5;
  const fullWidth = swap ? meta.height : meta.width;
  const fullHeight = swap ? meta.width : meta.height;
  const scale = Math.min(1, maxSide / Math.max(fullWidth, fullHeight));
  const width = Math.max(1, Math.round(fullWidth * scale));
  const height = Math.max(1, Math.round(fullHeight * scale));
  const { data, info } = await img
    .resize(width, height, { fit: 'fill', kernel: 'linear' })
    .greyscale()
    .timeout({ seconds: decodeTimeLimit })
    .raw()
    .toBuffer({ resolveWithObject: true });
  return {
    image: { width: info.width, height: info.height, data: new Uint8Array(data.buffer, data.byteOffset, data.length) },
    fullWidth,
    fullHeight,
  };
}
