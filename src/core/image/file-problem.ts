/**
 * What is wrong with an input file, named where it is found (the reader, the RAW parser, the
 * decoder), so that the check can tell the photographer why the file was left out without reading
 * the message (main/skip-reasons.ts turns each kind into one reason). The message keeps the finder's
 * own words, for the command line and logs.
 */
export type FileProblemKind =
  /** A folder where a picture was expected. */
  | 'folder'
  /** A pipe, a device or a socket: never read. */
  | 'not-regular'
  /** The file ended before the size it had when it was opened (cut short while it was read). */
  | 'short-read'
  /** More bytes than one file (or one embedded preview) is read at most. */
  | 'over-read-limit'
  /** More pixels than one decode is allowed. */
  | 'over-pixel-limit'
  /** One decode took longer than it is allowed. */
  | 'decode-timeout'
  /** A RAW container recognised but not read yet (`ending` names it). */
  | 'unread-container'
  /** A RAW file without an embedded JPEG preview that can be read. */
  | 'no-preview'
  /** JPEG data garbled part way (flipped or lost bytes). */
  | 'garbled'
  /** Damaged, or cut short before its picture ends. */
  | 'cut-short'
  /** Not an image the decoder reads. */
  | 'not-an-image';

export const fileProblemKinds: readonly FileProblemKind[] = [
  'folder', 'not-regular', 'short-read', 'over-read-limit', 'over-pixel-limit', 'decode-timeout',
  'unread-container', 'no-preview', 'garbled', 'cut-short', 'not-an-image',
];

/**
 * The errno-style code a file problem of the reader also carries, as system errors do: callers that
 * read system errors by their code (main/argument-words.ts) read these the same way.
 */
const codeOfKind: Partial<Record<FileProblemKind, string>> = {
  'folder': 'EISDIR',
  'not-regular': 'ENOTREGULAR',
  'short-read': 'ESHORTREAD',
  'over-read-limit': 'EFBIG',
};

export class FileProblem extends Error {
  override readonly name = 'FileProblem';
  readonly kind: FileProblemKind;
  /** EISDIR, ENOTREGULAR, ESHORTREAD or EFBIG for the reader's problems; undefined for the rest. */
  readonly code: string | undefined;
  /** The file's ending ('.x3f') for an unread container; undefined for the rest. */
  readonly ending: string | undefined;

  constructor(kind: FileProblemKind, message: string, options: { ending?: string; cause?: unknown } = {}) {
    super(message, options.cause === undefined ? undefined : { cause: options.cause });
    if (!fileProblemKinds.includes(kind)) throw new RangeError(`Expected a file problem kind for kind but received ${JSON.stringify(kind)}`);
    this.kind = kind;
    this.code = codeOfKind[kind];
    this.ending = options.ending;
  }
}
