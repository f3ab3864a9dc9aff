// @vitest-environment happy-dom
// A card of several sequences: core's `sequenceReport` (one sequence as a report of its own) and the
// list the app opens on. The card is judged by core's own `judge` from hand-made measurements
// (test/helpers/card-analysis.ts), so the views are tested on what the app would show.
import { describe, expect, it } from 'vitest';
import type { MatchBudget } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { sequenceReport } from '../../src/core/sequence/sequence-report.js';
import { analysisOf, judge, rejudge } from '../../src/core/sequence/verdicts.js';
import { cardWords, isCard, renderSequenceBar, renderSequenceList, splitWords, timeSpan } from '../../src/renderer/sequence-list-view.js';
import { renderSummary } from '../../src/renderer/summary-view.js';
import { aloneInFolder, cardAnalysis } from '../helpers/card-analysis.js';

const card = judge(cardAnalysis, defaultBudget);
const text = (n: Element | null | undefined): string => (n?.textContent ?? '').replace(/\s+/g, ' ').trim();
const thumbnail = (file: string): HTMLImageElement => {
  const img = document.createElement('img');
  img.src = `seamscout-frame://frames/1/${file}?max=320`;
  return img;
};

describe('the fixture', () => {
  it('is judged as the tests below expect', () => {
    expect(card.sequences?.map((q) => q.verdict)).toEqual(['reshoot', 'ok', 'weak']);
    expect(card.verdict).toBe('reshoot');
    // Sequence 3 is shot at 35 mm after 24 mm: judged alone, it has no settings drift.
    expect(card.frames.flatMap((f) => f.flags)).not.toContain('settings-drift');
  });
});

describe('sequenceReport', () => {
  it('gives each sequence exactly the report of checking it alone in a folder of its own', () => {
    for (const index of [1, 2, 3]) {
      expect(sequenceReport(card, index)).toEqual(judge(aloneInFolder(index), defaultBudget));
    }
  });

  it('counts stations from 0 within the sequence, where the card counts them across the card', () => {
    const third = sequenceReport(card, 3);
    expect(third.stations.map((s) => s.index)).toEqual([0, 1, 2]);
    expect(third.frames.map((f) => f.station)).toEqual([0, 1, 2]);
    expect(card.stations.filter((s) => s.frames[0].startsWith('S3')).map((s) => s.index)).toEqual([6, 7, 8]);
    expect(third.sequences).toBeUndefined();
    expect(third.singleShots).toBeUndefined();
    expect(third.skipped).toEqual([]);
  });

  it('follows a re-judged card: the sequence of the card judged again is the sequence alone judged again', () => {
    // A stricter overlap budget turns sequence 2's 45 % pair weak: the comparison is not vacuous.
    const strict: MatchBudget = { ...defaultBudget, weakOverlap: 0.5, reshootOverlap: 0.3 };
    const again = rejudge(card, strict);
    expect(again.sequences?.map((q) => q.verdict)).toEqual(['reshoot', 'weak', 'reshoot']);
    for (const index of [1, 2, 3]) expect(sequenceReport(again, index)).toEqual(judge(aloneInFolder(index), strict));
    // And judging a sequence's report again gives it back.
    expect(judge(analysisOf(sequenceReport(again, 2)), strict)).toEqual(sequenceReport(again, 2));
  });

  it('refuses an index the card does not have, and a report without sequences', () => {
    expect(() => sequenceReport(card, 0)).toThrow('Expected a sequence index from 1 to 3 for index but received 0');
    expect(() => sequenceReport(card, 4)).toThrow(RangeError);
    expect(() => sequenceReport(judge(aloneInFolder(1), defaultBudget), 1)).toThrow('Expected a report with sequences for index but received 1');
  });
});

describe('the list of sequences', () => {
  const list = renderSequenceList(card, { thumbnail, selected: 2, onOpen: () => undefined });

  it('has one entry per sequence in shooting order, with files, counts, time span, verdict in icon and word, and what to reshoot', () => {
    const entries = [...list.querySelectorAll('[data-sequence]')];
    expect(entries.map((e) => e.getAttribute('data-sequence'))).toEqual(['1', '2', '3']);
    expect(entries.map((e) => e.getAttribute('data-verdict'))).toEqual(['reshoot', 'ok', 'weak']);
    const [a, b, c] = entries;
    expect(text(a)).toContain('Sequence 1 of 3');
    expect(text(a)).toContain('S1_01.jpg to S1_04.jpg');
    expect(text(a.querySelector('[data-sequence-counts]'))).toBe('4 frames, 4 stations');
    expect(text(a.querySelector('[data-sequence-time]'))).toBe('10:00');
    expect(text(a.querySelector('[data-sequence-todo]'))).toBe('1 to reshoot');
    expect(a.querySelector('[data-verdict-badge="reshoot"] [data-icon="reshoot"]')).not.toBeNull();
    expect(text(a.querySelector('[data-verdict-badge]'))).toBe('reshoot');
    expect(text(b.querySelector('[data-sequence-counts]'))).toBe('6 frames, 2 stations');
    expect(text(b.querySelector('[data-sequence-time]'))).toBe('10:10');
    expect(text(b.querySelector('[data-sequence-todo]'))).toBe('nothing to reshoot');
    expect(text(b.querySelector('[data-sequence-split]'))).toBe('after a pause of 9 min');
    expect(text(c.querySelector('[data-sequence-time]'))).toBe('10:11');
    // Counted as the summary counts: the sequence's plan items (here one weak finding, worth a look).
    expect(card.sequences![2].plan!.filter((i) => i.optional).length).toBe(1);
    expect(text(c.querySelector('[data-sequence-todo]'))).toBe('nothing to reshoot · 1 worth a look');
    expect(text(c.querySelector('[data-sequence-split]'))).toBe('focal length 24 mm to 35 mm, nothing in common with S2_06.jpg');
    expect(a.getAttribute('aria-label')).toMatch(/^Sequence 1 of 3: S1_01\.jpg to S1_04\.jpg, 4 frames, 4 stations, 10:00, reshoot, 1 to reshoot\. Enter opens it\.$/);
  });

  it('shows a few thumbnails of each sequence: its reference frames, spread over its stations', () => {
    const srcs = (i: number): string[] => [...list.querySelectorAll(`[data-sequence="${i}"] img`)].map((img) => (img as HTMLImageElement).src.replace(/^.*\/1\/|\?.*$/g, ''));
    expect(srcs(1)).toEqual(['S1_01.jpg', 'S1_02.jpg', 'S1_03.jpg', 'S1_04.jpg']);
    expect(srcs(2)).toEqual(['S2_01.jpg', 'S2_04.jpg']);
  });

  it('marks the selected entry and opens an entry on click', () => {
    const opened: number[] = [];
    const l = renderSequenceList(card, { thumbnail, selected: 2, onOpen: (i) => opened.push(i) });
    expect([...l.querySelectorAll('.is-selected')].map((e) => e.getAttribute('data-sequence'))).toEqual(['2']);
    (l.querySelector('[data-sequence="3"]') as HTMLElement).click();
    expect(opened).toEqual([3]);
  });

  it('lists the single shots plainly, with no verdict', () => {
    const shots = list.querySelector('[data-single-shots]')!;
    expect(text(shots.querySelector('h2'))).toBe('2 single shots');
    expect([...shots.querySelectorAll('[data-single-shot]')].map((e) => text(e))).toEqual([
      'S0_01.jpg · 09:41 · shares nothing with the frames before or after it',
      'S4_01.jpg · shares nothing with the frames before or after it',
    ]);
    expect(shots.querySelector('[data-verdict], [data-verdict-badge], [data-flag]')).toBeNull();
  });

  it('has a bar above an opened sequence with the way back', () => {
    let back = 0;
    const bar = renderSequenceBar(card, 2, () => back++)!;
    expect(text(bar.querySelector('h2'))).toBe('Sequence 2 of 3: S2_01.jpg to S2_06.jpg');
    (bar.querySelector('[data-back-to-list]') as HTMLElement).click();
    expect(back).toBe(1);
    expect(renderSequenceBar(card, 9, () => undefined)).toBeNull();
  });
});

describe('the card\'s summary', () => {
  it('sums the card up by its sequences\' verdicts and counts its sequences', () => {
    expect(cardWords(card)).toBe('3 sequences: 1 ok, 1 weak, 1 to reshoot; 2 single shots');
    const s = renderSummary(card);
    expect(text(s.querySelector('.overall-words'))).toBe('3 sequences: 1 ok, 1 weak, 1 to reshoot; 2 single shots.');
    expect(text(s.querySelector('[data-stat="sequences"] dd'))).toBe('3');
    expect(text(s.querySelector('[data-stat="frames"] dd'))).toBe('13');
  });

  it('stays as it was for one sequence and for reports without sequences', () => {
    const alone = judge(aloneInFolder(1), defaultBudget);
    const withOne = judge({ ...aloneInFolder(1), sequences: [{ ...cardAnalysis.sequences![0] }], singleShots: [] }, defaultBudget);
    expect(isCard(alone)).toBe(false);
    expect(isCard(withOne)).toBe(false);
    expect(renderSummary(withOne).outerHTML).toBe(renderSummary(alone).outerHTML);
    expect(renderSummary(alone).querySelector('[data-stat="sequences"]')).toBeNull();
  });
});

describe('times and evidence in words', () => {
  it('writes time spans, pauses and splits as a person would', () => {
    expect(timeSpan('2026-06-14T19:12:05.000', '2026-06-14T19:13:40.000')).toBe('19:12 to 19:13');
    expect(timeSpan('2026-06-14T23:58:00.000', '2026-06-15T00:03:00.000')).toBe('2026-06-14 23:58 to 2026-06-15 00:03');
    expect(timeSpan(null, null)).toBe('time unknown');
    expect(timeSpan(null, '2026-06-14T19:13:40.000')).toBe('19:13');
    expect(splitWords({ by: 'camera', from: 'A', to: 'B' })).toBe('another camera (B)');
    expect(splitWords({ by: 'orientation', from: 'landscape', to: 'portrait' })).toBe('portrait instead of landscape');
    expect(splitWords({ by: 'focal-length', fromMm: 20, toMm: 20.666666666666668 })).toBe('focal length 20 mm to 20.7 mm');
  });
});
