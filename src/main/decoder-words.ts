import { FileProblem } from '../core/image/file-problem.js';

// The one module that reads error text: the decoder's errors (sharp's, libvips' and libjpeg's
// messages) carry no code or type, and their words are not ours to change.

/**
 * The decoder's failure words as the file problem they name, or null for words it does not know.
 * The message and the decoder's error (as the cause) are kept; a FileProblem is returned as it is.
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

/**
 * What libjpeg says of entropy-coded data that does not decode as written (ITU-T T.81 data with
 * flipped or lost bytes: a bad sector read back wrong, a card going bad): the decoder goes on and
 * fills the rest with grey or garbage, which the check would then blame on the photographer
 * (parallax, an exposure jump). Extraneous bytes just before the end-of-image marker are not
 * damage: some cameras and editors write them, and the picture is whole.
 */
export function garbledData(message: string): boolean {
  if (/extraneous bytes before marker 0xd9/i.test(message)) return false;
  return /corrupt JPEG data|inconsistent progression|premature end/i.test(message);
}

/**
 * Whether a decode's failure lost the decoder's own words: libvips keeps one error text for the
 * process, which any decode that ends clears, so under load a failure may say only sharp's
 * stand-ins ("Unknown error"; "Warning treated as error due to failOn setting" with no warning
 * after it) and libvips' "error in tile" lines. Measured: 6 of 20 strict decodes of a garbled JPEG
 * among 40 other decodes at once said nothing more.
 */
export function wordsLost(message: string): boolean {
  return message
    .split('\n')
    .map((l) => l.trim())
    .every((l) => l === '' || /^(unknown error|warning treated as error due to failOn setting|error in tile \d+ x \d+)$/i.test(l));
}
