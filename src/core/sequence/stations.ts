import { exposureOf } from './exposure-value.js';
import type { FrameSettings } from './report.js';
import { median } from '../numeric/median.js';

export interface StationInput {
  readonly settings: FrameSettings;
  /** Capture time in ms, or null. */
  readonly captureMs: number | null;
  /** EXIF ExposureMode (CIPA DC-008: 0 auto exposure, 1 manual, 2 auto bracket), null or absent when unknown. */
  readonly exposureMode?: number | null;
}

export interface StationGroup {
  /** Indices into the input, in shooting order. */
  readonly members: number[];
  /** Index (into the input) of the reference frame: bias nearest 0 EV, else the middle exposure. */
  readonly reference: number;
  /** Each member's exposure offset in EV against the reference (from EXIF), or null when unknown. */
  readonly offsets: (number | null)[];
  readonly groupedBy: 'exif' | 'content' | 'single';
}

const sameExposure = 0.15;

/**
 * The exposure that distinguishes bracket frames: the exposure bias when it varies across the
 * sequence (auto-exposure bracketing records it), else the exposure the settings let in (manual
 * brackets), else nothing.
 */
function bracketKeys(frames: readonly StationInput[]): { keys: (number | null)[]; source: 'bias' | 'settings' | null } {
  const bias = frames.map((f) => f.settings.evBias);
  const varies = (xs: (number | null)[]): boolean => {
    const known = xs.filter((x): x is number => x !== null);
    return known.length >= frames.length / 2 && Math.max(...known) - Math.min(...known) > sameExposure;
  };
  if (varies(bias)) return { keys: bias, source: 'bias' };
  const exposure = frames.map((f) => exposureOf(f.settings));
  if (varies(exposure)) return { keys: exposure, source: 'settings' };
  return { keys: frames.map(() => null), source: null };
}


/**
 * Groups frames (in shooting order) into stations. From EXIF: a frame starts a new station when its
 * bracket exposure repeats one already in the current station, or when the time since the previous
 * frame is far longer than the gaps inside brackets (a camera fires a bracket in well under a second;
 * turning the head takes longer: common practice). Without EXIF exposure data, `contentLinks[i]`
 * (frames i and i + 1 show one view at different brightness) decides; with neither, every frame is a
 * station.
 */
export function groupStations(frames: readonly StationInput[], contentLinks: readonly boolean[] | null = null): StationGroup[] {
  const n = frames.length;
  if (n === 0) return [];
  const { keys, source } = bracketKeys(frames);
  let groups: number[][] = [];
  let groupedBy: StationGroup['groupedBy'] = 'exif';
  if (source !== null) {
    // First pass: split where a bracket exposure repeats, to learn the gaps inside brackets.
    const byRepeat = splitOnRepeat([...frames.keys()], keys);
    // Then split at long pauses first and on repeats inside each stretch between pauses.
    groups = splitByTime([[...frames.keys()]], frames, innerGaps(byRepeat, frames)).flatMap((run) => splitOnRepeat(run, keys));
    if (source === 'settings') groups = groups.flatMap((g) => (isBracket(g, groups, frames, keys) ? [g] : g.map((i) => [i])));
  } else if (contentLinks) {
    groupedBy = 'content';
    let current: number[] = [0];
    for (let i = 1; i < n; i++) {
      if (contentLinks[i - 1]) current.push(i);
      else {
        groups.push(current);
        current = [i];
      }
    }
    groups.push(current);
  } else {
    groups = frames.map((_, i) => [i]);
  }
  return groups.map((members) => {
    const reference = pickReference(members, keys, source);
    const refKey = keys[reference];
    const offsets = members.map((i) => (keys[i] !== null && refKey !== null ? (keys[i] as number) - refKey : null));
    return { members, reference, offsets, groupedBy: members.length === 1 ? 'single' : groupedBy };
  });
}

/**
 * Whether a group found from exposure settings alone (no exposure bias recorded) is a bracket. The
 * camera says so (ExposureMode 2, auto bracket), or denies it (every member metered automatically,
 * ExposureMode 0: the exposure followed the scene). Otherwise a bracket repeats: its pattern of
 * exposures recurs in another station, or is part of one that does. A lone exposure change without
 * bias and without a repeat is auto exposure between two stations, not a bracket.
 */
function isBracket(group: number[], groups: readonly number[][], frames: readonly StationInput[], keys: (number | null)[]): boolean {
  if (group.length < 2) return true;
  const modes = group.map((i) => frames[i].exposureMode ?? null);
  if (modes.includes(2)) return true;
  if (modes.every((m) => m === 0)) return false;
  const steps = (g: number[]): number[] | null => {
    const ks = g.map((i) => keys[i]);
    if (ks.some((k) => k === null)) return null;
    const lo = Math.min(...(ks as number[]));
    return (ks as number[]).map((k) => Math.round((k - lo) * 3) / 3).sort((a, b) => a - b);
  };
  const mine = steps(group);
  if (mine === null) return true;
  const within = (small: number[], big: number[]): boolean => {
    // Whether `small` fits into `big` at some shift (an incomplete bracket of the same pattern).
    for (const base of big) {
      const shift = base - small[0];
      if (small.every((s) => big.some((b) => Math.abs(b - (s + shift)) < 0.2))) return true;
    }
    return false;
  };
  return groups.some((other) => other !== group && other.length >= 2 && other.length >= group.length && (() => {
    const theirs = steps(other);
    return theirs !== null && within(mine, theirs);
  })());
}

/** Splits a run of frames wherever a bracket exposure repeats one already in the current station. */
function splitOnRepeat(run: number[], keys: (number | null)[]): number[][] {
  const out: number[][] = [];
  let current: number[] = [];
  for (const i of run) {
    const k = keys[i];
    const repeats = current.length > 0 && (k === null || current.some((j) => keys[j] !== null && Math.abs((keys[j] as number) - k) < sameExposure));
    if (repeats) {
      out.push(current);
      current = [];
    }
    current.push(i);
  }
  if (current.length) out.push(current);
  return out;
}

/** Time gaps between consecutive members of the groups, in ms, where both times are known. */
function innerGaps(groups: number[][], frames: readonly StationInput[]): number[] {
  const gaps: number[] = [];
  for (const g of groups)
    for (let k = 1; k < g.length; k++) {
      const a = frames[g[k - 1]].captureMs, b = frames[g[k]].captureMs;
      if (a !== null && b !== null) gaps.push(Math.abs(b - a));
    }
  return gaps;
}

/** Splits groups where the time between two members is far longer than the typical bracket gap. */
function splitByTime(groups: number[][], frames: readonly StationInput[], inner: number[]): number[][] {
  if (inner.length === 0) return groups;
  const typical = median(inner);
  const limit = Math.max(3 * typical, typical + 1000);
  const out: number[][] = [];
  for (const g of groups) {
    let current = [g[0]];
    for (let k = 1; k < g.length; k++) {
      const a = frames[g[k - 1]].captureMs, b = frames[g[k]].captureMs;
      if (a !== null && b !== null && Math.abs(b - a) > limit) {
        out.push(current);
        current = [g[k]];
      } else current.push(g[k]);
    }
    out.push(current);
  }
  return out;
}

function pickReference(members: number[], keys: (number | null)[], source: 'bias' | 'settings' | null): number {
  const known = members.filter((i) => keys[i] !== null);
  if (known.length === 0) return members[0];
  const target = source === 'bias' ? 0 : median(known.map((i) => keys[i] as number));
  let best = known[0];
  for (const i of known) if (Math.abs((keys[i] as number) - target) < Math.abs((keys[best] as number) - target) - 1e-9) best = i;
  return best;
}

/** A station's bracket pattern: its offsets rounded to 1/3 EV, sorted, as text ("-2.00,0.00,2.00"). */
export function patternOf(offsets: readonly (number | null)[]): string {
  return offsets
    .map((o) => (o === null ? 'x' : (Math.round(o * 3) / 3 + 0).toFixed(2)))
    .sort((a, b) => Number(a) - Number(b))
    .join(',');
}

/**
 * The pattern most stations share (ties: the one with more frames). Stations with fewer frames or
 * another pattern are incomplete.
 */
export function modalPattern(patterns: readonly string[]): string | null {
  const counts = new Map<string, number>();
  for (const p of patterns) counts.set(p, (counts.get(p) ?? 0) + 1);
  let best: string | null = null;
  let bestCount = 0;
  for (const [key, c] of counts) {
    const size = key.split(',').length;
    if (c > bestCount || (c === bestCount && best !== null && size > best.split(',').length)) {
      best = key;
      bestCount = c;
    }
  }
  return best;
}

/** The offsets (as `patternOf` writes them) the modal pattern has and a station's pattern lacks, each as often as it lacks it. */
export function missingOffsets(modal: string, pattern: string): string[] {
  const have = pattern.split(',');
  return modal.split(',').filter((o) => {
    const at = have.indexOf(o);
    if (at < 0) return true;
    have.splice(at, 1);
    return false;
  });
}
