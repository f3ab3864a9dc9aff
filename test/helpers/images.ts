import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import type { GrayImage } from '../../src/core/image/image.js';
import { tempDir } from '../../tools/paths.js';

// Shared with bench/, so kept in tools/; the tests keep importing them from here.
export { externalFixture } from '../../tools/paths.js';
export { type Degradation, jpegRoundTrip, meanCornerError, toCameraFrame } from '../../tools/images.js';

/** Decodes a file to an 8-bit greyscale frame with sharp. */
export async function loadGray(path: string): Promise<GrayImage> {
  const { data, info } = await sharp(path).greyscale().raw().toBuffer({ resolveWithObject: true });
  return { width: info.width, height: info.height, data: new Uint8Array(data.buffer, data.byteOffset, data.length) };
}

/** A copy of a folder's JPEGs re-encoded without metadata (sharp drops EXIF unless asked to keep it). */
export async function copyWithoutExif(folder: string): Promise<string> {
  const bare = tempDir('seamscout-bare-');
  for (const f of readdirSync(folder).filter((n) => n.endsWith('.JPG'))) await sharp(join(folder, f)).jpeg({ quality: 92 }).toFile(join(bare, f));
  return bare;
}
