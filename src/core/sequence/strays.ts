/**
 * Which files belong to a sequence: a card may hold a stray file (a 1x1 image, a phone shot among a
 * camera's frames) that no station should take in. Membership follows the majority of the card,
 * never its first file.
 */

export interface MemberInput {
  /** Upright pixel size, or null when unknown. */
  readonly width: number | null;
  readonly height: number | null;
  /** EXIF Make and Model, or null when either is missing. */
  readonly make: string | null;
  readonly model: string | null;
}

/** What most files of the card share: their size (long and short side) and their camera. */
export interface SequenceLook {
  readonly long: number | null;
  readonly short: number | null;
  readonly camera: string | null;
  /** The camera as the files name it, for the reason given. */
  readonly cameraName: string | null;
}

/**
 * Sides may differ by this factor before a file counts as another kind of picture: a preview or a
 * thumbnail is a quarter of the size or less; a frame cropped a little is not (common practice).
 */
const sideFactor = 2;
/** Aspect ratios (long over short) this far apart are other formats: 3:2 against 4:3 is 12.5 % (common practice). */
const aspectTolerance = 0.08;

const cameraKey = (f: MemberInput): string | null =>
  f.make !== null && f.model !== null ? `${f.make.trim().toLowerCase()}|${f.model.trim().toLowerCase()}` : null;

function differsInSize(long: number, short: number, look: SequenceLook): boolean {
  if (look.long === null || look.short === null) return false;
  const r = long / look.long;
  return r < 1 / sideFactor || r > sideFactor || Math.abs(long / short / (look.long / look.short) - 1) > aspectTolerance;
}

/**
 * The card's majority: the most common size when the files that fit it (by `strayReason`'s rule)
 * are more than half of the files with a known size, at least three; and the most common camera
 * when more than half of all files name it. Null where there is no such majority.
 */
export function sequenceLook(frames: readonly MemberInput[]): SequenceLook {
  const sized = frames.filter((f) => f.width !== null && f.height !== null && f.width > 0 && f.height > 0);
  const sizeCounts = new Map<string, number>();
  for (const f of sized) {
    const key = `${Math.max(f.width!, f.height!)}x${Math.min(f.width!, f.height!)}`;
    sizeCounts.set(key, (sizeCounts.get(key) ?? 0) + 1);
  }
  let long: number | null = null, short: number | null = null;
  let best = 0;
  for (const [key, c] of sizeCounts) {
    const [l, s] = key.split('x').map(Number);
    // Ties: the larger size, so that the answer does not depend on the order of the files.
    if (c > best || (c === best && long !== null && l * s > long * short!)) [long, short, best] = [l, s, c];
  }
  if (long !== null && short !== null && sized.length >= 3) {
    const look = { long, short, camera: null, cameraName: null };
    const fit = sized.filter((f) => !differsInSize(Math.max(f.width!, f.height!), Math.min(f.width!, f.height!), look)).length;
    if (fit * 2 <= sized.length) long = short = null;
  } else long = short = null;

  const cameraCounts = new Map<string, { count: number; name: string }>();
  for (const f of frames) {
    const key = cameraKey(f);
    if (key === null) continue;
    const c = cameraCounts.get(key);
    if (c) c.count++;
    else cameraCounts.set(key, { count: 1, name: `${f.make!.trim()} ${f.model!.trim()}` });
  }
  let camera: string | null = null, cameraName: string | null = null;
  for (const [key, c] of cameraCounts) if (c.count * 2 > frames.length && frames.length >= 3) [camera, cameraName] = [key, c.name];
  return { long, short, camera, cameraName };
}

/**
 * Why a file is not part of the sequence in plain words, or null when it may be: another camera
 * (both named in EXIF), a size under half or over twice the sequence's, or another aspect ratio. A
 * file without EXIF is not judged by its camera; a file of unknown size not by its size.
 */
export function strayReason(frame: MemberInput, look: SequenceLook): string | null {
  const key = cameraKey(frame);
  if (look.camera !== null && key !== null && key !== look.camera) {
    return `taken with ${frame.make!.trim()} ${frame.model!.trim()} while the sequence was taken with ${look.cameraName}: not part of the sequence, left out`;
  }
  if (frame.width !== null && frame.height !== null && look.long !== null && look.short !== null) {
    const long = Math.max(frame.width, frame.height), short = Math.max(1, Math.min(frame.width, frame.height));
    if (differsInSize(long, short, look)) {
      return `${frame.width}x${frame.height} px while the sequence's frames are ${look.long}x${look.short}: not part of the sequence, left out`;
    }
  }
  return null;
}
