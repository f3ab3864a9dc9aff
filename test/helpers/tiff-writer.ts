// Writes TIFF-structured files to the TIFF 6.0 specification (section 2: header, IFDs of 12-byte
// entries sorted by tag, values over 4 bytes stored elsewhere and pointed to), enough to build
// DNG-like and other TIFF-based RAW layouts with embedded JPEG previews for the tests.

export interface TiffEntry {
  readonly tag: number;
  /** 3 SHORT, 4 LONG, 5 RATIONAL (pairs), 13 IFD. */
  readonly type: 3 | 4 | 5 | 13;
  /** Numbers, or the name of a blob / IFD whose offset goes here. */
  readonly values: readonly (number | string)[];
}

export interface TiffIfd {
  readonly name: string;
  readonly entries: readonly TiffEntry[];
  /** The IFD this one's next-IFD pointer names, if any. */
  readonly next?: string;
}

const size = { 3: 2, 4: 4, 5: 8, 13: 4 } as const;

/** Lays out the IFDs and blobs (named byte strings, e.g. JPEG streams) and returns the file. */
export function writeTiff(littleEndian: boolean, ifds: readonly TiffIfd[], blobs: Record<string, Uint8Array>, magic = 42): Uint8Array {
  // Offsets: header, then each IFD with its out-of-line values, then the blobs.
  const at = new Map<string, number>();
  let p = 8;
  for (const ifd of ifds) {
    at.set(ifd.name, p);
    p += 2 + 12 * ifd.entries.length + 4;
    for (const e of ifd.entries) if (size[e.type] * e.values.length > 4) p += size[e.type] * e.values.length;
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
      v.setUint32(o + 4, e.type === 5 ? e.values.length / 2 : e.values.length, littleEndian);
      const bytes = size[e.type] * (e.type === 5 ? e.values.length / 2 : e.values.length);
      let w = bytes > 4 ? extra : o + 8;
      if (bytes > 4) {
        v.setUint32(o + 8, extra, littleEndian);
        extra += bytes;
      }
      for (const x of e.values) {
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
