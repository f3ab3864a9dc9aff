import type { Sharp } from 'sharp';
import sharp from 'sharp';
import type { GrayImage } from '../core/image/image.js';
import type { RawPreview } from './raw-file.js';
import { isRawFile, maxPreviewBytes, orient, readRawPreview } from './raw-file.js';
import { jpegDemand, tooShortForItsSize } from '../core/image/jpeg-demand.js';
import type { InputPath } from './input-file.js';
import { inputBudget, readInputHead, readInputRest } from './input-file.js';
import { tooShortError } from './exif.js';
import { FileProblem } from '../core/image/file-problem.js';
import { decoderProblem, garbledData, wordsLost } from './decoder-words.js';

// libvips' operation cache keeps a finished decode's loader alive, and with it what the decoder
// allocated (a progressive JPEG's coefficients: 432 MB for 12000 x 12000), which the cache does
// not count: four such frames held 1.8 GB after they were done. A check never decodes one input twice.
sharp.cache(false);

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

/** Bytes of a file's head read first, to weigh what decoding it will hold before the file is read whole. */
const headBytes = 256 * 1024;

/**
 * Runs `work` on a frame as sharp reads it, to be turned upright: a RAW file through its largest
 * embedded JPEG preview (and the RAW's own orientation and sensor size), any other image as it is.
 * The bytes are read into memory first (input-file.ts: a read fault is an error, never a signal),
 * within this thread's input budget together with what the decoder will hold for them; a JPEG
 * whose data is too short for the size its header claims is refused before it is decoded.
 */
async function withFrame<T>(path: InputPath, work: (f: { source: Sharp; upright: Sharp; raw: RawPreview | null }) => Promise<T>): Promise<T> {
  const raw = isRawFile(path) ? await readRawPreview(path) : null;
  const { bytes: head, size } = raw ? { bytes: raw.jpeg, size: raw.jpeg.length } : await readInputHead(path, headBytes);
  const decoderBytes = jpegDemand(head)?.decoderBytes ?? 0;
  return inputBudget.hold(size + decoderBytes, async () => run(await readInputRest(path, head, size)));

  function run(data: Buffer): Promise<T> {
    const demand = jpegDemand(data);
    if (demand && tooShortForItsSize(demand)) throw tooShortError(demand, data.length);
    // The decoder's failures come as the file problem its words name (decoder-words.ts).
    const attempt = async (failOn: 'warning' | 'error'): Promise<T> => {
      const source = sharp(data, { limitInputPixels: pixelLimit, failOn });
      try {
        return await work({ source, upright: raw && raw.orientation !== null ? orient(source, raw.orientation) : source.autoOrient(), raw });
      } catch (err) {
        throw decoderProblem(err) ?? err;
      }
    };
    return demand ? strictThenLenient(attempt, endsWhole(data, demand.scanStart)) : lenient(attempt);
  }
}

/**
 * Whether a JPEG stream reaches its end-of-image marker after its first scan begins. In the
 * entropy-coded data a 0xFF byte is always followed by 0x00 or a restart marker (ITU-T T.81 B.1.1.5),
 * so 0xFF 0xD9 there is the real end; a file cut short has none (a thumbnail's sits before the scan).
 */
const endsWhole = (data: Buffer, scanStart: number): boolean => data.indexOf(endOfImage, scanStart) !== -1;
const endOfImage = Buffer.from([0xff, 0xd9]);

/**
 * A JPEG is decoded with libjpeg's warnings as errors, so that a picture garbled part way is named
 * as damaged, and one that stops before its end as cut short. libvips keeps one error text for the
 * whole process and sharp one queue of warnings, and every decode clears the text when it ends, so
 * under load a failure may carry another decode's words, or none (decoder-words.ts, wordsLost):
 * a failure without words is no evidence and is tried again, and the words are trusted only when
 * two strict decodes in a row say the same kind of thing (garbled, or a harmless warning), at most
 * eight tries. On a harmless warning the file is decoded again with errors alone failing.
 */
async function strictThenLenient<T>(attempt: (failOn: 'warning' | 'error') => Promise<T>, whole: boolean): Promise<T> {
  let last: 'garbled' | 'harmless' | null = null;
  for (let tries = 0; tries < 8; tries++) {
    let message: string;
    try {
      return await attempt('warning');
    } catch (err) {
      message = err instanceof Error ? err.message : String(err);
      if (err instanceof FileProblem && (err.kind === 'over-pixel-limit' || err.kind === 'decode-timeout')) throw err;
      if (!whole) throw new FileProblem('cut-short', 'Premature end of JPEG file: the file stops before its picture does', { cause: err });
      if (wordsLost(message)) continue;
      const kind = garbledData(message) ? 'garbled' : 'harmless';
      if (kind === last) {
        if (kind === 'garbled') throw err;
        break;
      }
      last = kind;
    }
  }
  if (last === 'garbled') throw new FileProblem('garbled', 'Corrupt JPEG data: the picture is garbled part way (libjpeg said so once, then its words were lost)');
  return lenient(attempt);
}

/** Decodes with errors alone failing, once more when the reason was lost (see above). */
async function lenient<T>(attempt: (failOn: 'warning' | 'error') => Promise<T>): Promise<T> {
  try {
    return await attempt('error');
  } catch (err) {
    if (err instanceof Error && wordsLost(err.message)) return attempt('error');
    throw err;
  }
}

/**
 * Bytes decoding a file will hold, as `withFrame` counts them, from its head alone (a RAW file
 * counts as its size up to the largest preview read); 0 for a file that cannot be read (its
 * decode then says why). For a dispatcher that sends decodes to worker threads, each of which
 * has a budget of its own.
 */
export async function decodeCost(path: InputPath): Promise<number> {
  try {
    const { bytes, size } = await readInputHead(path, isRawFile(path) ? 0 : headBytes);
    return isRawFile(path) ? Math.min(size, maxPreviewBytes) : size + (jpegDemand(bytes)?.decoderBytes ?? 0);
  } catch {
    return 0;
  }
}

/** A frame upright at most `maxSide` px, as a JPEG to show (RAW files through their preview). */
export async function frameForDisplay(path: InputPath, maxSide: number): Promise<Buffer> {
  return withFrame(path, ({ upright }) => upright.resize(maxSide, maxSide, { fit: 'inside' }).timeout({ seconds: decodeTimeLimit }).jpeg({ quality: 82 }).toBuffer());
}

/**
 * Decodes a file to greyscale at most `maxSide` pixels on its longer side, upright by its EXIF
 * orientation. JPEG shrinks on load by 1/2, 1/4 or 1/8, so a size at one of those ratios is far
 * cheaper than one just above it.
 */
export async function decodeForAnalysis(path: InputPath, maxSide: number): Promise<DecodedFrame> {
  // A RAW file is read through its largest embedded JPEG preview, turned upright by the RAW's own
  // orientation; its full size is the sensor's, so geometry maps back to sensor pixels.
  return withFrame(path, (f) => decodeFrame(f, maxSide));
}

async function decodeFrame({ source, upright: img, raw }: { source: Sharp; upright: Sharp; raw: RawPreview | null }, maxSide: number): Promise<DecodedFrame> {
  const meta = await source.metadata();
  if (!meta.width || !meta.height) throw new Error(`Expected an image with a size but received none`);
  const swap = (raw?.orientation ?? meta.orientation ?? 1) >= 5;
  const storedW = raw?.sensorWidth ?? meta.width, storedH = raw?.sensorHeight ?? meta.height;
  const fullWidth = swap ? storedH : storedW;
  const fullHeight = swap ? storedW : storedH;
  // The analysis image keeps the decoded picture's own aspect (a preview may be cropped a little).
  const picW = swap ? meta.height : meta.width, picH = swap ? meta.width : meta.height;
  const scale = Math.min(1, maxSide / Math.max(picW, picH));
  const width = Math.max(1, Math.round(picW * scale));
  const height = Math.max(1, Math.round(picH * scale));
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
