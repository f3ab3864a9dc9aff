/**
 * The embedded JPEG and the sensor's image size of a Fujifilm RAF file. The layout, all
 * big-endian, as public descriptions of the format give it (fileformats.archiveteam.org,
 * "Fujifilm RAF", and the open decoders that follow it): the magic "FUJIFILMCCD-RAW" at 0, then
 * at 84 and 88 the offset and length of the embedded JPEG (which carries the EXIF), at 92 and 96
 * those of a metadata block: a record count, then records of a 16-bit tag, a 16-bit length and
 * the data. Tag 0x100 is the raw image's full size and 0x111 its cropped size, each as height
 * then width.
 */
import type { ByteRange } from './cr3-layout.js';
import type { ByteSource, EmbeddedJpeg } from './raw-preview.js';
import { jpegHeader } from './raw-preview.js';

export interface RafLayout {
  /** The embedded JPEG where the header points and it parses, else null. */
  readonly preview: EmbeddedJpeg | null;
  /** Where the header says the JPEG is, whether or not it parses. */
  readonly jpeg: ByteRange;
  /** The cropped (else full) raw image size from the metadata block, or null. */
  readonly sensorWidth: number | null;
  readonly sensorHeight: number | null;
}

const magic = 'FUJIFILMCCD-RAW';

/** Reads a RAF file's header and metadata block; null when it is not a RAF file. */
export function rafLayout(src: ByteSource): RafLayout | null {
  const u8 = (o: number): number => src.byte(o);
  const u16 = (o: number): number => (u8(o) << 8) | u8(o + 1);
  const u32 = (o: number): number => u8(o) * 2 ** 24 + ((u8(o + 1) << 16) | (u8(o + 2) << 8) | u8(o + 3));
  if (src.length < 100 || String.fromCharCode(...Array.from({ length: magic.length }, (_, k) => u8(k))) !== magic) return null;
  const jpeg = { offset: u32(84), length: u32(88) };
  let preview: EmbeddedJpeg | null = null;
  if (jpeg.length > 4 && jpeg.offset + jpeg.length <= src.length) {
    const head = jpegHeader(src, jpeg.offset);
    if (head) preview = { ...jpeg, width: head.size.width, height: head.size.height };
  }
  const sizes = new Map<number, { width: number; height: number }>();
  const at = u32(92), end = Math.min(src.length, at + u32(96));
  if (at >= 100 && at + 4 <= end) {
    let p = at + 4;
    for (let k = 0, n = Math.min(u32(at), 1024); k < n && p + 4 <= end; k++) {
      const tag = u16(p), size = u16(p + 2);
      if (p + 4 + size > end) break;
      if ((tag === 0x100 || tag === 0x111) && size >= 4) sizes.set(tag, { height: u16(p + 4), width: u16(p + 6) });
      p += 4 + size;
    }
  }
  const sensor = [sizes.get(0x111), sizes.get(0x100)].find((s) => s && s.width > 0 && s.height > 0) ?? null;
  return { preview, jpeg, sensorWidth: sensor?.width ?? null, sensorHeight: sensor?.height ?? null };
}
