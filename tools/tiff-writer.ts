// Writes TIFF-structured files to the TIFF 6.0 specification (section 2: header, IFDs of 12-byte
// entries sorted by tag, values over 4 bytes stored elsewhere and pointed to), enough to build
// DNG-like and other TIFF-based RAW layouts with embedded JPEG previews for the tests and the bench.

export interface TiffEntry {
  readonly tag: number;
  /** 2 ASCII, 3 SHORT, 4 LONG, 5 RATIONAL (pairs), 13 IFD. */
  readonly type: 2 | 3 | 4 | 5 | 13;
  /** Numbers, or the name of a blob / IFD whose offset goes here; for ASCII, the text. */
  readonly values: readonly (number | string)[];
}

export interface TiffIfd {
  readonly name: string;
  readonly entries: readonly TiffEntry[];
  /** The IFD this one's next-IFD pointer names, if any. */
  readonly next?: string;
}

const size = { 2: 1, 3: 2, 4: 4, 5: 8, 13: 4 } as const;
/** How many values an entry holds: ASCII counts its bytes and the closing NUL. */
const countOf = (e: TiffEntry): number => (e.type === 2 ? String(e.values[0]).length + 1 : e.type === 5 ? e.values.length / 2 : e.values.length);
const byteLength = (e: TiffEntry): number => size[e.type] * countOf(e);

/** Lays out the IFDs and blobs (named byte strings, e.g. JPEG streams) and returns the file. */
export function writeTiff(littleEndian: boolean, ifds: readonly TiffIfd[], blobs: Record<string, Uint8Array>, magic = 42): Uint8Array {
  // Offsets: header, then each IFD with its out-of-line values, then the blobs.
  const at = new Map<string, number>();
  let p = 8;
  for (const ifd of ifds) {
    at.set(ifd.name, p);
    p += 2 + 12 * ifd.entries.length + 4;
    for (const e of ifd.entries) if (byteLength(e) > 4) p += byteLength(e);
    p += p % 2;
  }
  for (const [name, b] of Object.entries(blobs)) {
    at.set(name, p);
    p += b.length + (b.length % 2);
  }
  const out = new Uint8Array(p);
  const v = new DataView(out.buffer);
  out[0] = out[1] = littleEndian ? 0x49 : 0x4d;
  v.setUint16(2, magic, littleEndian);
  v.setUint32(4, at.get(ifds[0].name)!, littleEndian);
  const num = (x: number | string): number => (typeof x === 'string' ? at.get(x)! : x);
  for (const ifd of ifds) {
    let o = at.get(ifd.name)!;
    const sorted = [...ifd.entries].sort((a, b) => a.tag - b.tag);
    v.setUint16(o, sorted.length, littleEndian);
    let extra = o + 2 + 12 * sorted.length + 4;
    o += 2;
    for (const e of sorted) {
      v.setUint16(o, e.tag, littleEndian);
      v.setUint16(o + 2, e.type, littleEndian);
      v.setUint32(o + 4, countOf(e), littleEndian);
      const bytes = byteLength(e);
      let w = bytes > 4 ? extra : o + 8;
      if (bytes > 4) {
        v.setUint32(o + 8, extra, littleEndian);
        extra += bytes;
      }
      if (e.type === 2) out.set(new TextEncoder().encode(String(e.values[0])), w);
      else for (const x of e.values) {
        if (e.type === 3) v.setUint16(w, num(x), littleEndian);
        else v.setUint32(w, num(x), littleEndian);
        w += e.type === 3 ? 2 : 4;
      }
      o += 12;
    }
    v.setUint32(o, ifd.next ? at.get(ifd.next)! : 0, littleEndian);
  }
  for (const [name, b] of Object.entries(blobs)) out.set(b, at.get(name)!);
  return out;
}

/**
 * A DNG-shaped file around a JPEG preview (DNG 1.6: IFD0 a small thumbnail with the orientation,
 * SubIFDs for the raw image, NewSubfileType 0 with its DefaultCropSize, and the preview,
 * NewSubfileType 1, JPEG-compressed). The raw image's data is a stub: only the layout matters here.
 */
export function dngAround(preview: Uint8Array | null, options: { orientation?: number; sensor: [number, number]; littleEndian?: boolean }): Uint8Array {
  const [w, h] = options.sensor;
  const subs: (string)[] = ['raw', ...(preview ? ['preview'] : [])];
  return writeTiff(options.littleEndian ?? true, [
    {
      name: 'ifd0', entries: [
        { tag: 254, type: 4, values: [1] }, { tag: 256, type: 3, values: [16] }, { tag: 257, type: 3, values: [8] }, { tag: 259, type: 3, values: [1] },
        { tag: 274, type: 3, values: [options.orientation ?? 1] }, { tag: 273, type: 4, values: ['thumb'] }, { tag: 279, type: 4, values: [16 * 8 * 3] },
        { tag: 330, type: 4, values: subs },
      ],
    },
    { name: 'raw', entries: [{ tag: 254, type: 4, values: [0] }, { tag: 256, type: 4, values: [w + 16] }, { tag: 257, type: 4, values: [h + 16] }, { tag: 259, type: 3, values: [1] }, { tag: 50720, type: 5, values: [w, 1, h, 1] }] },
    ...(preview ? [{ name: 'preview', entries: [{ tag: 254, type: 4 as const, values: [1] }, { tag: 259, type: 3 as const, values: [7] }, { tag: 273, type: 4 as const, values: ['jpeg'] }, { tag: 279, type: 4 as const, values: [preview.length] }] }] : []),
  ], { thumb: new Uint8Array(16 * 8 * 3), ...(preview ? { jpeg: preview } : {}) });
}
