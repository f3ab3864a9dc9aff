import { FileProblem } from '../core/file-problem.js';

/**
 * The decoder's own failure words (sharp's, libvips' and libjpeg's messages) as the file problem
 * they name, or null for words it does not know. This is the one place that reads error text: the
 * decoder's errors carry no code or type, and their words are not ours to change. The message and
 * the decoder's error (as the cause) are kept; a FileProblem is returned as it is.
 */
export function decoderProblem(err: unknown): FileProblem | null {
  if (err instanceof FileProblem) return err;
  const message = err instanceof Error ? err.message : String(err);
  const kind =
    /pixel limit/i.test(message) ? 'over-pixel-limit' :
    /timeout/i.test(message) ? 'decode-timeout' :
    /corrupt JPEG data|inconsistent progression/i.test(message) ? 'garbled' :
    /premature end|truncated|unexpected end|corrupt|invalid|cut short/i.test(message) ? 'cut-short' :
    /unsupported image format|bad seek|not a known file format|improper image header|input buffer/i.test(message) ? 'not-an-image' :
    null;
  return kind === null ? null : new FileProblem(kind, message, { cause: err });
}
