// Numbers and codes as the page shows them: plain words, units always written out.
import type { FlagCode, PairKind, Verdict } from '../core/sequence/report.js';

/** 0..1 as a whole percent with a space before the sign ("45 %"), or a dash when unknown. */
export function percent(v: number | null | undefined): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '—' : `${Math.round(100 * v)} %`;
}

/** A signed exposure difference with one decimal ("+1.3 EV", "-0.7 EV", "0.0 EV"). */
export function evStep(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const r = Math.round(v * 10) / 10;
  if (r === 0) return '0.0 EV';
  return `${r > 0 ? '+' : '-'}${Math.abs(r).toFixed(1)} EV`;
}

/** A bracket frame's offset against its station's reference ("+2 EV", "-1.3 EV", "0 EV"). */
export function evOffset(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return 'EV unknown';
  const r = Math.round(v * 10) / 10;
  if (r === 0) return '0 EV';
  return `${r > 0 ? '+' : '-'}${Number(Math.abs(r).toFixed(1))} EV`;
}

export function pixels(v: number | null | undefined, digits = 1): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '—' : `${v.toFixed(digits)} px`;
}

export function plural(n: number, one: string, many = `${one}s`): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** Seconds left as "about 40 s left" / "about 3 min left". */
export function timeLeft(seconds: number | null | undefined): string | null {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds) || seconds < 0) return null;
  if (seconds < 1) return 'almost done';
  if (seconds < 60) return `about ${Math.ceil(seconds)} s left`;
  const min = Math.floor(seconds / 60);
  const s = Math.round(seconds - 60 * min);
  return min < 10 && s > 0 ? `about ${min} min ${s} s left` : `about ${Math.round(seconds / 60)} min left`;
}

/** A flag code in plain words. */
export function flagWords(code: FlagCode): string {
  return code.replace(/-/g, ' ');
}

/** What each flag means, for tooltips and the detail view. */
export const flagMeaning: Record<FlagCode, string> = {
  'low-overlap': 'the frames share too little of the scene',
  'few-inliers': 'too few points agree on how the frames line up',
  'no-match': 'the frames could not be lined up at all',
  'exposure-jump': 'the brightness changed between the frames',
  'settings-drift': 'aperture, ISO, shutter, focal length or white balance changed',
  blurred: 'the frame is much less sharp than the rest of the sequence',
  'incomplete-bracket': 'the station has fewer bracket frames than the others',
  'bracket-drift': 'the camera moved between frames of the bracket',
  'no-closure': 'the last station does not line up with the first',
  'coverage-hole': 'part of the view around the camera is in no frame',
  movement: 'something in the overlap moved between the two shots',
  parallax: 'near and far things do not line up together: the camera moved, not only turned',
  'size-mismatch': 'the frame has another size than the rest of the sequence',
  'lens-misfit': 'the frames do not fit one lens model: the focal length changed, or the lens is a fisheye',
};

export const verdictWords: Record<Verdict, string> = { ok: 'ok', weak: 'weak', reshoot: 'reshoot' };

export const kindWords: Record<PairKind, string> = { neighbour: 'neighbour pair', closure: 'closure pair', bracket: 'bracket pair', other: 'other pair' };

/** What went wrong, as said to the user: an Error's message, or whatever was thrown as text. */
export const messageOf = (e: unknown): string => (e instanceof Error ? e.message : String(e));
