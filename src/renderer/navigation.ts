// Where the user is within the shown results, as plain data: a card's opened sequence (or its list),
// the selected entry of the list and of the strip, and the pair whose detail is open. The page moves
// the focus; these functions only say where to.
import type { Report } from '../core/sequence/report.js';
import { isCard } from './sequence-list-view.js';

export interface Navigation {
  /** The card's sequence shown (its index), or null for the card's list (or a report of one sequence). */
  readonly openSeq: number | null;
  readonly listSelected: number | null;
  /** The strip's selected pair (its key). */
  readonly selected: string | null;
  /** The pair whose detail is open. */
  readonly detail: string | null;
}

export const startNavigation: Navigation = { openSeq: null, listSelected: null, selected: null, detail: null };

/**
 * The entry `step` away from `current` in `order`, held at the ends; from no entry (or one not in
 * `order`) the first going forward, the last going back. Undefined when `order` is empty.
 */
export function stepTo<T>(order: readonly T[], current: T | null, step: 1 | -1): T | undefined {
  if (order.length === 0) return undefined;
  const at = current !== null ? order.indexOf(current) : -1;
  return order[at < 0 ? (step > 0 ? 0 : order.length - 1) : Math.max(0, Math.min(order.length - 1, at + step))];
}

/** The detail of `key` opens; a pair of the strip's chain becomes the selected one too. */
export const withDetail = (n: Navigation, key: string, inChain: boolean): Navigation => ({ ...n, detail: key, selected: inChain ? key : n.selected });

export const withoutDetail = (n: Navigation): Navigation => ({ ...n, detail: null });

export const openedSequence = (index: number): Navigation => ({ openSeq: index, listSelected: index, selected: null, detail: null });

export const backToList = (n: Navigation): Navigation => ({ ...n, openSeq: null, selected: null, detail: null });

/** A fuller report may have found the card's sequences otherwise: an opened sequence that is gone goes back to the list. */
export function afterReport(n: Navigation, report: Report): Navigation {
  if (n.openSeq === null || (isCard(report) && report.sequences?.some((q) => q.index === n.openSeq))) return n;
  return { ...n, openSeq: null, selected: null, detail: null };
}
