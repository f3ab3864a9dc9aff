import type { FileProblemKind } from '../core/image/file-problem.js';
import { FileProblem } from '../core/image/file-problem.js';
import type { SkippedFile } from '../core/sequence/report.js';
import { decoderProblem } from './decoder-words.js';

/** What a photographer reads for each file problem (core/image/file-problem.ts). */
const reasonOfKind: Record<FileProblemKind, (p: FileProblem) => Pick<SkippedFile, 'code' | 'reason'>> = {
  'folder': () => ({ code: 'unreadable', reason: 'it is a folder, not a picture' }),
  'not-regular': () => ({ code: 'unreadable', reason: 'it is not a regular file (a pipe, a device or a socket): not read' }),
  // The file ended before its size: the medium failed or the file was cut short while it was read.
  'short-read': () => ({ code: 'unreadable', reason: 'read error: copy it from the card again' }),
  'over-read-limit': () => ({ code: 'too-large', reason: 'too large to read safely (over the size read at most)' }),
  'over-pixel-limit': () => ({ code: 'too-large', reason: 'too large to decode safely (over the pixel limit)' }),
  'decode-timeout': () => ({ code: 'unreadable', reason: 'decoding took too long' }),
  'unread-container': (p) => ({ code: 'no-preview', reason: `RAW ${p.ending ?? 'container'} files are not read yet: shoot RAW+JPEG, or check exported JPEGs` }),
  'no-preview': () => ({ code: 'no-preview', reason: 'holds no embedded preview Seamscout can read: shoot RAW+JPEG, or check exported JPEGs' }),
  'garbled': () => ({ code: 'unreadable', reason: 'damaged (part of the picture is garbled): copy it from the card again' }),
  'cut-short': () => ({ code: 'unreadable', reason: 'damaged or cut short: copy it from the card again' }),
  'not-an-image': () => ({ code: 'not-an-image', reason: 'not an image Seamscout can read' }),
};

/** What a photographer reads for the system's errors, by their code. */
function errnoReason(code: string | undefined): Pick<SkippedFile, 'code' | 'reason'> | null {
  if (code === 'ENOENT') return { code: 'unreadable', reason: 'the file went away during the check' };
  if (code === 'EACCES' || code === 'EPERM') return { code: 'unreadable', reason: 'no permission to read it' };
  // The medium failed (a bad sector, a card pulled, a failing reader).
  if (code === 'EIO' || code === 'ENXIO' || code === 'ENODEV') return { code: 'unreadable', reason: 'read error: copy it from the card again' };
  if (code === 'EISDIR') return { code: 'unreadable', reason: 'it is a folder, not a picture' };
  if (code === 'EFBIG') return { code: 'too-large', reason: 'too large to read safely (over the size read at most)' };
  return null;
}

/**
 * Why a file was left out, in the words a photographer reads: from the file problem found where it
 * was read, the system's error code, or else the decoder's own words (decoder-words.ts).
 */
export function skipOf(file: string, err: unknown, size?: number): SkippedFile {
  if (size === 0) return { file, code: 'unreadable', reason: 'empty file (0 bytes): copy it from the card again' };
  const problem = err instanceof FileProblem ? err : null;
  const known = problem ? reasonOfKind[problem.kind](problem) : errnoReason((err as NodeJS.ErrnoException | null)?.code);
  if (known) return { file, ...known };
  const fromDecoder = decoderProblem(err);
  if (fromDecoder) return { file, ...reasonOfKind[fromDecoder.kind](fromDecoder) };
  const message = err instanceof Error ? err.message : String(err);
  return { file, code: 'unreadable', reason: `cannot be read: ${message.split('\n')[0]}` };
}
