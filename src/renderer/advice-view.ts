// "What to do": every piece of advice in the report once, reshoot first, each pointing at its pair
// when it came from one (shown for reports without a plan); and, for the plan that replaces it, where
// each plan item can be seen: its pairs, its frame or its station.
import type { PlanItem } from '../core/sequence/reshoot-plan.js';
import type { FlagCode, Report, ReportPair, Verdict } from '../core/sequence/report.js';
import { button, el } from './dom.js';
import { verdictBadge } from './icons.js';
import { pairKey } from './pairs.js';

export interface AdviceItem {
  readonly verdict: Verdict;
  readonly text: string;
  readonly pair: string | null;
}

const rank: Record<Verdict, number> = { reshoot: 0, weak: 1, ok: 2 };

export function adviceItems(report: Report): AdviceItem[] {
  const seen = new Map<string, AdviceItem>();
  const add = (verdict: Verdict, text: string, pair: string | null): void => {
    const had = seen.get(text);
    if (!had) seen.set(text, { verdict, text, pair });
    else seen.set(text, { verdict: rank[verdict] < rank[had.verdict] ? verdict : had.verdict, text, pair: had.pair ?? pair });
  };
  for (const p of report.pairs) if (p.kind !== 'other') for (const a of p.advice) add(p.verdict, a, pairKey(p));
  for (const s of report.stations) for (const a of s.advice) add(s.verdict, a, null);
  for (const f of report.frames) for (const a of f.advice) add(f.verdict, a, null);
  for (const h of report.holes ?? []) add(h.verdict, h.advice, null);
  return [...seen.values()].filter((i) => i.verdict !== 'ok').sort((x, y) => rank[x.verdict] - rank[y.verdict]);
}

export function renderAdvice(report: Report, onOpen: (key: string) => void): HTMLElement {
  const items = adviceItems(report);
  return el(
    'section',
    { class: 'advice-list', 'data-advice': items.length, 'aria-label': 'What to do' },
    el('h2', {}, 'What to do'),
    items.length === 0
      ? el('p', { class: 'empty' }, 'Nothing: every pair and frame is within the match budget.')
      : el('ol', {}, items.map((i) => el(
          'li',
          { class: `advice advice-${i.verdict}`, 'data-verdict': i.verdict },
          verdictBadge(i.verdict, 20),
          el('span', { class: 'advice-text' }, i.text),
          i.pair ? button({ class: 'small', 'data-open-pair': i.pair }, () => onOpen(i.pair as string), 'Show pair') : null,
        ))),
  );
}

/** Where a plan item can be seen: its flagged pairs, else its one flagged frame, else its stations. */
export interface PlanTargets {
  readonly pairs: readonly ReportPair[];
  readonly frames: readonly string[];
  /** Station indices as in the report's stations list (from 0). */
  readonly stations: readonly number[];
}

/**
 * The findings a plan item was made from, found again in the report: the flagged pairs that touch
 * its frames for one of its reasons (the pair across a gap, the links around a station whose
 * exposure jumped, a drifted frame's bracket pair), else the one flagged frame it names (a blurred
 * frame), else the station itself (a bracket with a frame missing flags every frame of it).
 */
export function planTargets(report: Report, item: PlanItem): PlanTargets {
  const files = new Set(item.files), reasons = new Set<FlagCode>(item.reasons);
  const pairs = report.pairs.filter((p) => p.kind !== 'other' && p.verdict !== 'ok' && (files.has(p.a) || files.has(p.b)) && p.reasons.some((r) => reasons.has(r)));
  const frames = report.frames
    .filter((f) => files.has(f.file) && f.verdict !== 'ok' && f.flags.some((r) => reasons.has(r)) && !pairs.some((p) => p.b === f.file && p.kind === 'bracket'))
    .map((f) => f.file);
  const known = new Set(report.stations.map((s) => s.index));
  const stations = item.stationIndices.filter((i) => known.has(i));
  if (pairs.length > 0) return { pairs, frames: frames.length === 1 ? frames : [], stations: [] };
  if (frames.length === 1) return { pairs, frames, stations: [] };
  return { pairs, frames: [], stations };
}

export interface PlanActions {
  readonly onOpenPair: (key: string) => void;
  readonly onShowFrame: (file: string) => void;
  readonly onShowStation: (index: number) => void;
}

/** The buttons beside a plan item: "Show pair" (with the stations it joins when there are several), "Show frame", "Show station". */
export function planButtons(report: Report, item: PlanItem, act: PlanActions): HTMLElement[] {
  const t = planTargets(report, item);
  const stationOf = new Map(report.frames.map((f) => [f.file, f.station]));
  const number = (file: string): string => String((stationOf.get(file) ?? -1) + 1);
  const pairName = (p: ReportPair): string => (p.kind === 'bracket' ? `bracket pair ${p.b}` : `pair ${number(p.a)} to ${number(p.b)}`);
  return [
    ...t.pairs.map((p) => button(
      { class: 'small', 'data-open-pair': pairKey(p), 'aria-label': `Show ${pairName(p)} (${p.a} and ${p.b})` },
      () => act.onOpenPair(pairKey(p)),
      t.pairs.length === 1 ? 'Show pair' : p.kind === 'bracket' ? `Show pair ${p.b.replace(/\.[A-Za-z0-9]{1,5}$/, '')}` : `Show pair ${number(p.a)}–${number(p.b)}`,
    )),
    ...t.frames.map((file) => button({ class: 'small', 'data-show-frame': file, 'aria-label': `Show ${file} in the strip` }, () => act.onShowFrame(file), 'Show frame')),
    ...t.stations.map((i) => button(
      { class: 'small', 'data-show-station': i, 'aria-label': `Show station ${i + 1} in the strip` },
      () => act.onShowStation(i),
      t.stations.length === 1 ? 'Show station' : `Show station ${i + 1}`,
    )),
  ];
}
