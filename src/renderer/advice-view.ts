// "What to do": every piece of advice in the report once, reshoot first, each pointing at its pair
// when it came from one.
import type { Report, Verdict } from '../core/report.js';
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
