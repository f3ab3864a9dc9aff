// Which pairs the strip shows, in the order the arrow keys walk them.
import type { Report, ReportPair } from '../core/sequence/report.js';

export const pairKey = (p: { readonly a: string; readonly b: string }): string => `${p.a}|${p.b}`;

export function findPair(report: Report, key: string): ReportPair | null {
  return report.pairs.find((p) => pairKey(p) === key) ?? null;
}

/** One place between stations in the strip: the neighbour pair joining station `from` to `to`, or null while not measured. */
export interface ChainSlot {
  readonly from: number;
  readonly to: number;
  readonly pair: ReportPair | null;
}

/**
 * The links of the strip: the neighbour pair between each two consecutive stations (null where it
 * is missing, as in a partial report), then the closure pair when present.
 */
export function chainSlots(report: Report): ChainSlot[] {
  const stations = report.stations;
  const slots: ChainSlot[] = [];
  const links = (p: ReportPair, x: string, y: string): boolean => (p.a === x && p.b === y) || (p.a === y && p.b === x);
  for (let s = 0; s + 1 < stations.length; s++) {
    const x = stations[s].reference, y = stations[s + 1].reference;
    slots.push({ from: s, to: s + 1, pair: report.pairs.find((p) => p.kind === 'neighbour' && links(p, x, y)) ?? null });
  }
  const closure = report.pairs.find((p) => p.kind === 'closure');
  if (closure && stations.length > 1) slots.push({ from: stations.length - 1, to: 0, pair: closure });
  return slots;
}

/** The pairs the arrow keys move between, in strip order. */
export function chainPairs(report: Report): ReportPair[] {
  return chainSlots(report).flatMap((s) => (s.pair ? [s.pair] : []));
}

/** The bracket pair that ties a frame to its station's reference, if any. */
export function bracketPairOf(report: Report, file: string): ReportPair | null {
  return report.pairs.find((p) => p.kind === 'bracket' && p.b === file) ?? null;
}
