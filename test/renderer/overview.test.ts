// @vitest-environment happy-dom
// The first screen of a sequence: the plan's items each with a way to see what they came from, the
// count of what to do beside the plan, the overview row of every station and link, and the "no
// match" label of a link card. The report is judged by core's own `judge` on hand-made measures
// (five stations of a -2/0/+2 EV bracket): station 1 to 2 not matched at all, station 2's +2 EV
// frame moved 25 px, station 3's reference exposed +1.3 EV against both neighbours, station 4
// missing its +2 EV frame, station 5's -2 EV frame blurred, and a closure pair back to station 1.
import { beforeEach, describe, expect, it } from 'vitest';
import type { Analysis, FrameMeasure, FrameSettings, PairMeasure } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { planTargets } from '../../src/renderer/advice-view.js';
import { renderStrip, renderOverview, revealInStrip } from '../../src/renderer/strip-view.js';
import { renderSummary } from '../../src/renderer/summary-view.js';
import { pairKey } from '../../src/renderer/pairs.js';

const W = 3000, H = 2000;
const settings = (evBias: number): FrameSettings => ({ exposureTime: (1 / 250) * 2 ** evBias, fNumber: 8, iso: 100, evBias, focalLength: 24, focalLength35: 24, whiteBalance: 'auto', make: null, model: null });
const frame = (file: string, evBias: number): FrameMeasure => ({ file, width: W, height: H, captureTime: null, settings: settings(evBias), sharpness: 2, keypoints: 1800 });
const shifted = (a: string, b: string, kind: PairMeasure['kind'], overlap: number, extra: Partial<PairMeasure> = {}): PairMeasure => ({
  a, b, kind, matches: 300, inliers: 200, matchesInOverlap: 260, overlap, homography: [1, 0, -W * (1 - overlap), 0, 1, 0, 0, 0, 1], evDiff: 0.05, rmsError: 0.8, shiftPx: null, ...extra,
});
const bracket = (a: string, b: string, shiftPx = 1.2): PairMeasure => shifted(a, b, 'bracket', 0.99, { inliers: 420, matches: 450, shiftPx, homography: [1, 0, shiftPx, 0, 1, 0, 0, 0, 1] });
const station = (index: number, frames: string[], reference: string, evOffsets: number[]) => ({ index, frames, reference, evOffsets, groupedBy: 'exif' as const });

const analysis: Analysis = {
  folder: '/media/card/DCIM/100CAMERA',
  frames: [
    frame('A01.jpg', 0), frame('A02.jpg', -2), frame('A03.jpg', 2),
    frame('A04.jpg', 0), frame('A05.jpg', -2), frame('A06.jpg', 2),
    frame('A07.jpg', 0), frame('A08.jpg', -2), frame('A09.jpg', 2),
    frame('A10.jpg', 0), frame('A11.jpg', -2),
    frame('A12.jpg', 0), frame('A13.jpg', -2), frame('A14.jpg', 2),
  ],
  stations: [
    station(0, ['A01.jpg', 'A02.jpg', 'A03.jpg'], 'A01.jpg', [0, -2, 2]),
    station(1, ['A04.jpg', 'A05.jpg', 'A06.jpg'], 'A04.jpg', [0, -2, 2]),
    station(2, ['A07.jpg', 'A08.jpg', 'A09.jpg'], 'A07.jpg', [0, -2, 2]),
    station(3, ['A10.jpg', 'A11.jpg'], 'A10.jpg', [0, -2]),
    station(4, ['A12.jpg', 'A13.jpg', 'A14.jpg'], 'A12.jpg', [0, -2, 2]),
  ],
  pairs: [
    bracket('A01.jpg', 'A02.jpg'), bracket('A01.jpg', 'A03.jpg'),
    bracket('A04.jpg', 'A05.jpg'), bracket('A04.jpg', 'A06.jpg', 25),
    bracket('A07.jpg', 'A08.jpg'), bracket('A07.jpg', 'A09.jpg'),
    bracket('A10.jpg', 'A11.jpg'),
    // A13 a quarter as sharp as its reference on the view both frames show.
    { ...bracket('A12.jpg', 'A13.jpg'), sharpnessRatio: 0.25, sharpnessByDirection: { horizontal: 0.25, vertical: 0.25, fallingDiagonal: 0.25, risingDiagonal: 0.25 }, sharpnessBlocks: 150 },
    bracket('A12.jpg', 'A14.jpg'),
    shifted('A01.jpg', 'A04.jpg', 'neighbour', 0, { homography: null, overlap: null, inliers: 0, matches: 40, matchesInOverlap: 0, evDiff: null, rmsError: null }),
    shifted('A04.jpg', 'A07.jpg', 'neighbour', 0.42, { evDiff: 1.3 }),
    shifted('A07.jpg', 'A10.jpg', 'neighbour', 0.42, { evDiff: -1.3 }),
    shifted('A10.jpg', 'A12.jpg', 'neighbour', 0.4),
    shifted('A12.jpg', 'A01.jpg', 'closure', 0.38),
  ],
  skipped: [],
  sweepDeg: 360,
  geometry: null,
};
const report = judge(analysis, defaultBudget);
const plan = report.plan!;
const text = (n: Element | null | undefined): string => (n?.textContent ?? '').replace(/\s+/g, ' ').trim();
const itemFor = (station: number) => plan.find((i) => i.stationNumbers.length === 1 && i.stationNumbers[0] === station && i.action === 'reshoot-station')!;

describe('the fixture', () => {
  it('is judged and planned as the tests below expect', () => {
    // Guards the fixture: a change in core's rules shows here first.
    const v = Object.fromEntries(report.pairs.map((p) => [pairKey(p), [p.verdict, ...p.reasons]]));
    expect(v['A01.jpg|A04.jpg']).toEqual(['reshoot', 'no-match']);
    expect(v['A04.jpg|A07.jpg']).toEqual(['reshoot', 'exposure-jump']);
    expect(v['A07.jpg|A10.jpg']).toEqual(['reshoot', 'exposure-jump']);
    expect(v['A04.jpg|A06.jpg'][1]).toBe('bracket-drift');
    expect(report.frames.find((f) => f.file === 'A13.jpg')?.flags).toEqual(['blurred']);
    expect(report.stations[3].flags).toEqual(['incomplete-bracket']);
    // Station 3 is judged on its links, not on itself: the plan is what says to reshoot it.
    expect(report.stations[2].verdict).toBe('ok');
    expect(plan.filter((i) => !i.optional).map((i) => [i.action, ...i.stationNumbers])).toEqual([
      ['add-stations', 1, 2], ['reshoot-station', 2], ['reshoot-station', 3], ['reshoot-station', 4], ['reshoot-station', 5],
    ]);
  });
});

describe('the plan with a way to see each item', () => {
  const calls: string[] = [];
  const show = { onOpenPair: (k: string) => calls.push(`pair ${k}`), onShowFrame: (f: string) => calls.push(`frame ${f}`), onShowStation: (i: number) => calls.push(`station ${i}`) };
  let s: HTMLElement;
  beforeEach(() => {
    calls.length = 0;
    s = renderSummary(report, { show });
    document.body.replaceChildren(s);
  });
  const item = (n: number): Element => s.querySelectorAll('[data-plan] ol > [data-plan-item]')[n];

  it('finds each item\'s own findings: the pair across a gap, the links around a jumped station, the drifted frame\'s bracket pair, a blurred frame, a station short of a frame', () => {
    const keys = (i: (typeof plan)[number]): string[] => planTargets(report, i).pairs.map(pairKey);
    expect(keys(plan.find((i) => i.action === 'add-stations')!)).toEqual(['A01.jpg|A04.jpg']);
    expect(keys(itemFor(2))).toEqual(['A04.jpg|A06.jpg']);
    expect(keys(itemFor(3))).toEqual(['A04.jpg|A07.jpg', 'A07.jpg|A10.jpg']);
    expect(planTargets(report, itemFor(4))).toEqual({ pairs: [], frames: [], stations: [3] });
    expect(planTargets(report, itemFor(5))).toEqual({ pairs: [], frames: ['A13.jpg'], stations: [] });
  });

  it('gives every must-do item a button that leads there, named by the stations when an item has two pairs', () => {
    expect([...s.querySelectorAll('[data-plan] ol > [data-plan-item]')].map((li) => [...li.querySelectorAll('button')].map(text))).toEqual([
      ['Show pair'], ['Show pair'], ['Show pair 2–3', 'Show pair 3–4'], ['Show station'], ['Show frame'],
    ]);
    // The item's own words stay as the report has them, apart from the buttons.
    expect(text(item(2).querySelector('.plan-text'))).toBe(itemFor(3).text);
    for (const b of s.querySelectorAll<HTMLButtonElement>('[data-plan] button')) b.click();
    expect(calls).toEqual(['pair A01.jpg|A04.jpg', 'pair A04.jpg|A06.jpg', 'pair A04.jpg|A07.jpg', 'pair A07.jpg|A10.jpg', 'station 3', 'frame A13.jpg']);
  });

  it('counts what to do as the plan\'s items and says in words which flagged findings they come from', () => {
    const must = plan.filter((i) => !i.optional).length;
    expect(text(s.querySelector('[data-stat="to-reshoot"] dd'))).toBe(String(must));
    expect(text(s.querySelector('[data-stat="to-reshoot"] dt'))).toBe('to reshoot');
    // The findings are more than the items (two pairs around one station, a frame and its bracket pair).
    const flagged = report.counts.reshoot;
    expect(flagged).toBeGreaterThan(must);
    expect(s.textContent).not.toMatch(new RegExp(`\\b${flagged}\\s*reshoot\\b`));
    const pairs = report.pairs.filter((p) => p.verdict === 'reshoot').length, frames = report.frames.filter((f) => f.verdict === 'reshoot').length;
    expect(pairs + frames).toBe(flagged);
    expect(text(s.querySelector('[data-plan-counted]'))).toMatch(new RegExp(`^${must} items to reshoot(, \\d+ worth a look)?, from ${pairs} pairs and ${frames} frames flagged reshoot`));
  });

  it('while the check runs, counts what is to reshoot so far and says nothing yet about the folder as a whole', () => {
    // The first results of a check: no frame judged yet, which the finished check would call a folder problem.
    const early = judge({ ...analysis, frames: [], stations: [], pairs: [] }, defaultBudget);
    expect(early.folderProblems.map((p) => p.code)).toEqual(['no-frames']);
    const running = renderSummary(early, { checking: true, show });
    expect(running.querySelector('[data-folder-problems]')).toBeNull();
    expect(text(running.querySelector('[data-stat="to-reshoot"] dt'))).toBe('to reshoot so far');
    expect(renderSummary(early).querySelector('[data-folder-problem="no-frames"]')).not.toBeNull();
  });

  it('leaves the buttons and the overview out where no strip is shown (a card\'s list)', () => {
    const plain = renderSummary(report);
    expect(plain.querySelectorAll('[data-plan] button').length).toBe(0);
    expect(plain.querySelector('[data-overview]')).toBeNull();
  });
});

describe('the overview row', () => {
  const calls: string[] = [];
  let row: HTMLElement;
  beforeEach(() => {
    calls.length = 0;
    row = renderOverview(report, { onOpen: (k) => calls.push(`pair ${k}`), onShowStation: (i) => calls.push(`station ${i}`) })!;
    document.body.replaceChildren(row);
  });
  const cells = (): Element[] => [...row.querySelectorAll('[data-overview-station], [data-overview-pair]')];

  it('has one cell per station and per link, in strip order, the closure last', () => {
    expect(cells().map((c) => c.getAttribute('data-overview-station') ?? c.getAttribute('data-overview-pair'))).toEqual([
      '0', 'A01.jpg|A04.jpg', '1', 'A04.jpg|A07.jpg', '2', 'A07.jpg|A10.jpg', '3', 'A10.jpg|A12.jpg', '4', 'A12.jpg|A01.jpg',
    ]);
    expect(cells().every((c) => c.tagName === 'BUTTON')).toBe(true);
    expect(text(row.querySelector('[data-overview-pair="A12.jpg|A01.jpg"]'))).toBe('38 % to 1');
  });

  it('marks every flagged station and link with the icon and the word, not colour alone, and leaves ok ones plain', () => {
    const marks = cells().map((c) => [c.getAttribute('data-overview-verdict'), c.querySelector('[data-icon]')?.getAttribute('data-icon') ?? null, text(c.querySelector('.ov-word')) || null]);
    expect(marks).toEqual([
      ['ok', null, null], ['reshoot', 'reshoot', 'reshoot'],
      // Station 2 (its frame drifted), station 3 (the plan reshoots it, though it is judged on its links), station 4 and 5 (their frames).
      ['reshoot', 'reshoot', 'reshoot'], ['reshoot', 'reshoot', 'reshoot'],
      ['reshoot', 'reshoot', 'reshoot'], ['reshoot', 'reshoot', 'reshoot'],
      ['reshoot', 'reshoot', 'reshoot'], ['ok', null, null],
      ['reshoot', 'reshoot', 'reshoot'], ['ok', null, null],
    ]);
    expect(text(row.querySelector('[data-overview-pair="A01.jpg|A04.jpg"]'))).toBe('no match reshoot');
    expect(row.querySelector('[data-overview-station="3"]')?.getAttribute('aria-label')).toBe('Station 4: reshoot (incomplete bracket). Shows it in the strip.');
  });

  it('opens a link\'s pair and shows a station in the strip', () => {
    (row.querySelector('[data-overview-pair="A04.jpg|A07.jpg"]') as HTMLElement).click();
    (row.querySelector('[data-overview-station="4"]') as HTMLElement).click();
    expect(calls).toEqual(['pair A04.jpg|A07.jpg', 'station 4']);
  });

  it('comes with the summary of a sequence shown with its strip, after the plan and the numbers', () => {
    const s = renderSummary(report, { show: { onOpenPair: () => undefined, onShowFrame: () => undefined, onShowStation: () => undefined } });
    const order = [...s.children].map((c) => (c.hasAttribute('data-plan') ? 'plan' : c.classList.contains('stats') ? 'stats' : c.hasAttribute('data-overview') ? 'overview' : c.classList[0]));
    expect(order.slice(0, 4)).toEqual(['overall', 'plan', 'stats', 'overview']);
  });
});

describe('the strip', () => {
  const thumbnail = (file: string): HTMLImageElement => Object.assign(document.createElement('img'), { alt: file });

  it('labels a link without a match "no match" with a class of its own, so its card can keep it inside', () => {
    const strip = renderStrip(report, { thumbnail, selected: null, onOpen: () => undefined });
    const none = strip.querySelector('[data-pair="A01.jpg|A04.jpg"] .link-overlap')!;
    expect(text(none)).toBe('no match');
    expect(none.classList.contains('link-no-match')).toBe(true);
    expect(strip.querySelector('[data-pair="A04.jpg|A07.jpg"] .link-overlap')?.classList.contains('link-no-match')).toBe(false);
  });

  it('brings a station or a frame into focus for the plan\'s and the overview\'s buttons', () => {
    const strip = renderStrip(report, { thumbnail, selected: null, onOpen: () => undefined });
    document.body.replaceChildren(strip);
    expect(revealInStrip(strip, { station: 3 })).toBe(true);
    expect(document.activeElement?.getAttribute('data-station')).toBe('3');
    expect(revealInStrip(strip, { frame: 'A13.jpg' })).toBe(true);
    expect(document.activeElement?.getAttribute('data-frame')).toBe('A13.jpg');
    expect(revealInStrip(strip, { frame: 'nothing.jpg' })).toBe(false);
  });
});
