// Where the user is within the results, as plain data, without a DOM: stepping through a strip or a
// card's list, opening and closing the detail and a card's sequence, and a fuller report that no
// longer has the opened sequence. The card is the hand-measured one of test/helpers/card-analysis.ts,
// judged by core's `judge`.
import { describe, expect, it } from 'vitest';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { afterReport, backToList, openedSequence, startNavigation, stepTo, withDetail, withoutDetail } from '../../src/renderer/navigation.js';
import { cardAnalysis } from '../helpers/card-analysis.js';

describe('stepTo', () => {
  const chain = ['a|b', 'b|c', 'c|d'];

  it('moves one entry and holds at both ends', () => {
    expect(stepTo(chain, 'a|b', 1)).toBe('b|c');
    expect(stepTo(chain, 'b|c', -1)).toBe('a|b');
    expect(stepTo(chain, 'c|d', 1)).toBe('c|d');
    expect(stepTo(chain, 'a|b', -1)).toBe('a|b');
  });

  it('starts at the first going forward and the last going back, from nothing or from an entry not there', () => {
    expect(stepTo(chain, null, 1)).toBe('a|b');
    expect(stepTo(chain, null, -1)).toBe('c|d');
    expect(stepTo(chain, 'x|y', 1)).toBe('a|b');
    expect(stepTo([3, 5, 8], 7, -1)).toBe(8);
  });

  it('has nowhere to go in an empty order', () => {
    expect(stepTo([], null, 1)).toBeUndefined();
    expect(stepTo<string>([], 'a|b', -1)).toBeUndefined();
  });
});

describe('the detail and the card', () => {
  it('selects a pair of the chain as its detail opens, keeps the selection for another pair, and closes', () => {
    const chained = withDetail({ ...startNavigation, selected: 'a|b' }, 'b|c', true);
    expect(chained).toMatchObject({ detail: 'b|c', selected: 'b|c' });
    const closure = withDetail({ ...startNavigation, selected: 'a|b' }, 'd|a', false);
    expect(closure).toMatchObject({ detail: 'd|a', selected: 'a|b' });
    expect(withoutDetail(closure)).toMatchObject({ detail: null, selected: 'a|b' });
  });

  it('opens a sequence with nothing selected in it, and goes back to the list keeping the list entry', () => {
    const open = openedSequence(2);
    expect(open).toEqual({ openSeq: 2, listSelected: 2, selected: null, detail: null });
    const back = backToList(withDetail(open, 'S2_02.jpg|S2_05.jpg', true));
    expect(back).toEqual({ openSeq: null, listSelected: 2, selected: null, detail: null });
  });
});

describe('afterReport', () => {
  const card = judge(cardAnalysis, defaultBudget);
  const fewer = judge({ ...cardAnalysis, sequences: cardAnalysis.sequences!.slice(0, 2) }, defaultBudget);
  const inThird = withDetail(openedSequence(3), 'S3_01.jpg|S3_02.jpg', true);

  it('keeps an opened sequence the fuller report still has', () => {
    expect(afterReport(inThird, card)).toBe(inThird);
    expect(afterReport(startNavigation, fewer)).toBe(startNavigation);
  });

  it('goes back to the list when the opened sequence is gone', () => {
    // The third sequence of the hand-measured card is not among the first two.
    expect(fewer.sequences?.some((q) => q.index === 3)).toBe(false);
    expect(afterReport(inThird, fewer)).toEqual({ openSeq: null, listSelected: 3, selected: null, detail: null });
  });
});
