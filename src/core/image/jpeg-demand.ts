/**
 * What a JPEG stream's header claims, weighed against the bytes it has, before anything decodes it:
 * a header may claim any size up to 65535 x 65535, and a decoder sets aside memory for what it
 * claims (a progressive stream's whole coefficient array), whatever follows.
 *
 * The floor: with Huffman coding (SOF0, SOF1, SOF2; ITU-T T.81, annexes F and G), every 8 x 8 block
 * of every component is coded with at least one Huffman code word (its DC difference, in the
 * sequential modes followed by at least an end-of-block code; in the progressive mode, in the
 * first DC scan), and a Huffman code word is at least 1 bit long (T.81, C: code lengths 1..16). So
 * the entropy-coded data of a whole image holds at least one bit per block of its largest
 * component: a stream with less is cut short or lies about its size, whatever the picture. Flat
 * grey at quality 1 (the least an encoder writes) stays above it (test/main/bad-input-reading.test.ts).
 * Arithmetic coding (SOF9 and up) has no such floor and is left to the decoder's pixel limit.
 */

export interface JpegDemand {
  readonly width: number;
  readonly height: number;
  readonly progressive: boolean;
  /** Huffman-coded (a floor on its data applies). */
  readonly huffman: boolean;
  /** 8 x 8 blocks of the largest component. */
  readonly blocks: number;
  /** 8 x 8 blocks of all components. */
  readonly allBlocks: number;
  /** Where the first scan's data starts. */
  readonly scanStart: number;
  /** Bytes from the first scan's data to the end of the bytes given. */
  readonly entropyBytes: number;
  /** The least number of entropy-coded bytes the claimed size needs (one bit per block). */
  readonly minEntropyBytes: number;
  /**
   * Bytes a decoder holds for the whole image before it gives out a line: a progressive stream's
   * coefficients, 64 of 2 bytes per block (libjpeg's JCOEF arrays); 0 for a sequential stream,
   * decoded a band at a time.
   */
  readonly decoderBytes: number;
}

/**
 * The claims of the JPEG stream at the start of `bytes` (its first frame header and first scan),
 * or null when it is no JPEG stream or its header segments end before a scan starts.
 */
export function jpegDemand(bytes: Uint8Array): JpegDemand | null {
  if (bytes.length < 4 || bytes[0] !== 0xff || bytes[1] !== 0xd8) return null;
  let frame: { marker: number; width: number; height: number; sampling: [number, number][] } | null = null;
  for (let p = 2; p + 4 <= bytes.length; ) {
    if (bytes[p] !== 0xff) return null;
    const marker = bytes[p + 1];
    if (marker === 0xff) {
      p++;
      continue;
    }
    if (marker === 0xd8 || marker === 0x01 || (marker >= 0xd0 && marker <= 0xd7)) {
      p += 2;
      continue;
    }
    const len = (bytes[p + 2] << 8) | bytes[p + 3];
    if (len < 2 || p + 2 + len > bytes.length) return null;
    if (marker >= 0xc0 && marker <= 0xcf && marker !== 0xc4 && marker !== 0xc8 && marker !== 0xcc && frame === null && len >= 8) {
      // B.2.2: P, Y, X, Nf, then per component: id, H<<4 | V, Tq.
      const height = (bytes[p + 5] << 8) | bytes[p + 6], width = (bytes[p + 7] << 8) | bytes[p + 8], nf = bytes[p + 9];
      const sampling: [number, number][] = [];
      for (let c = 0; c < nf && p + 12 + 3 * c <= p + 2 + len; c++) {
        const hv = bytes[p + 11 + 3 * c];
        sampling.push([Math.max(1, hv >> 4), Math.max(1, hv & 15)]);
      }
      frame = { marker, width, height, sampling };
    }
    p += 2 + len;
    if (marker === 0xda) {
      if (!frame || frame.sampling.length === 0) return null;
      const hMax = Math.max(...frame.sampling.map((s) => s[0])), vMax = Math.max(...frame.sampling.map((s) => s[1]));
      const perComponent = frame.sampling.map(([h, v]) => Math.ceil(Math.ceil((frame!.width * h) / hMax) / 8) * Math.ceil(Math.ceil((frame!.height * v) / vMax) / 8));
      const blocks = Math.max(...perComponent), allBlocks = perComponent.reduce((t, n) => t + n, 0);
      const progressive = frame.marker === 0xc2 || frame.marker === 0xc6 || frame.marker === 0xca || frame.marker === 0xce;
      return {
        width: frame.width,
        height: frame.height,
        progressive,
        huffman: frame.marker <= 0xc2,
        blocks,
        allBlocks,
        scanStart: p,
        entropyBytes: bytes.length - p,
        minEntropyBytes: Math.ceil(blocks / 8),
        decoderBytes: progressive ? allBlocks * 128 : 0,
      };
    }
  }
  return null;
}

/**
 * Whether a Huffman-coded stream's data is shorter than the least its claimed size needs (see
 * above); `streamBytes` is the whole stream's length where only its head was given.
 */
export const tooShortForItsSize = (d: JpegDemand, streamBytes?: number): boolean => d.huffman && (streamBytes === undefined ? d.entropyBytes : streamBytes - d.scanStart) < d.minEntropyBytes;
