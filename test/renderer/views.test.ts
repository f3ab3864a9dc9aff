// @vitest-environment happy-dom
// Component tests of the page's views on a fixed report: three stations of three bracket frames
// (-2, 0, +2 EV), one neighbour pair with low overlap, one with an exposure jump, one blurred frame,
// one bracket frame that moved, and a closure pair. The report is judged by core's own `judge`
// with the default budget, so the views are tested on exactly what the app would show.
import { beforeEach, describe, expect, it } from 'vitest';
import type { Analysis, FrameMeasure, FrameSettings, PairMeasure } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { adviceItems, renderAdvice } from '../../src/renderer/advice-view.js';
import { renderDetail } from '../../src/renderer/detail-view.js';
import type { TiePointState } from '../../src/renderer/detail-view.js';
import { svgNS } from '../../src/renderer/dom.js';
import { evStep, percent, timeLeft } from '../../src/renderer/format.js';
import { chainPairs, pairKey } from '../../src/renderer/pairs.js';
import { renderCoverage } from '../../src/renderer/coverage-view.js';
import { renderStrip } from '../../src/renderer/strip-view.js';
import { renderSummary } from '../../src/renderer/summary-view.js';

const W = 3000, H = 2000;
const settings = (evBias: number): FrameSettings => ({ exposureTime: (1 / 250) * 2 ** evBias, fNumber: 8, iso: 100, evBias, focalLength: 24, focalLength35: 24, whiteBalance: 'auto', make: null, model: null });
const frame = (file: string, evBias: number, sharpness = 2): FrameMeasure => ({ file, width: W, height: H, captureTime: null, settings: settings(evBias), sharpness, keypoints: 1800 });
/** A pair related by a pure shift: b sees a moved left by W (1 - overlap) px. */
const shifted = (a: string, b: string, kind: PairMeasure['kind'], overlap: number, extra: Partial<PairMeasure> = {}): PairMeasure => ({
  a, b, kind, matches: 300, inliers: 200, matchesInOverlap: 260, overlap, homography: [1, 0, -W * (1 - overlap), 0, 1, 0, 0, 0, 1], evDiff: 0.05, rmsError: 0.8, shiftPx: null, ...extra,
});
const bracket = (a: string, b: string, shiftPx = 1.2): PairMeasure => shifted(a, b, 'bracket', 0.99, { inliers: 420, matches: 450, shiftPx, homography: [1, 0, shiftPx, 0, 1, 0, 0, 0, 1] });

const analysis: Analysis = {
  folder: '/media/card/DCIM/100TEST',
  frames: [
    frame('A01.jpg', 0), frame('A02.jpg', -2, 2.1), frame('A03.jpg', 2, 1.9),
    frame('A04.jpg', -2), frame('A05.jpg', 0, 2.2), frame('A06.jpg', 2),
    frame('A07.jpg', 0, 1.9), frame('A08.jpg', -2, 0.5), frame('A09.jpg', 2, 2.1),
  ],
  stations: [
    { index: 0, frames: ['A01.jpg', 'A02.jpg', 'A03.jpg'], reference: 'A01.jpg', evOffsets: [0, -2, 2], groupedBy: 'exif' },
    // The reference is shot second here: the strip must still put it on top.
    { index: 1, frames: ['A04.jpg', 'A05.jpg', 'A06.jpg'], reference: 'A05.jpg', evOffsets: [-2, 0, 2], groupedBy: 'exif' },
    { index: 2, frames: ['A07.jpg', 'A08.jpg', 'A09.jpg'], reference: 'A07.jpg', evOffsets: [0, -2, 2], groupedBy: 'exif' },
  ],
  pairs: [
    bracket('A01.jpg', 'A02.jpg'), bracket('A01.jpg', 'A03.jpg'),
    bracket('A05.jpg', 'A04.jpg'), bracket('A05.jpg', 'A06.jpg', 6),
    // A08 is a quarter as sharp as its reference on the view both frames show.
    { ...bracket('A07.jpg', 'A08.jpg'), sharpnessRatio: 0.25, sharpnessByDirection: { horizontal: 0.25, vertical: 0.25, fallingDiagonal: 0.25, risingDiagonal: 0.25 }, sharpnessBlocks: 150 }, bracket('A07.jpg', 'A09.jpg'),
    shifted('A01.jpg', 'A05.jpg', 'neighbour', 0.12, { inliers: 60, matches: 140, matchesInOverlap: 90 }),
    shifted('A05.jpg', 'A07.jpg', 'neighbour', 0.42, { inliers: 180, evDiff: 1.3 }),
    shifted('A07.jpg', 'A01.jpg', 'closure', 0.38, { inliers: 150, evDiff: 0.1 }),
  ],
  skipped: [{ file: 'notes.txt', code: 'not-an-image', reason: 'not an image' }],
  sweepDeg: 352,
  geometry: null,
};
const report = judge(analysis, defaultBudget);

const urls = new Map<string, string>();
const thumbnail = (file: string): HTMLImageElement => {
  const img = document.createElement('img');
  img.src = `seamscout-frame://frames/1/${file}?max=320`;
  urls.set(file, img.src);
  return img;
};
const image = (file: string): SVGImageElement => {
  const img = document.createElementNS(svgNS, 'image');
  img.setAttribute('href', `seamscout-frame://frames/1/${file}?max=1200`);
  return img;
};

const text = (n: Element | null): string => (n?.textContent ?? '').replace(/\s+/g, ' ').trim();

describe('the fixture', () => {
  it('is judged as the tests below expect', () => {
    // Guards the fixture itself, so a change in core's rules shows here first.
    const v = Object.fromEntries(report.pairs.map((p) => [pairKey(p), p.verdict]));
    expect(v['A01.jpg|A05.jpg']).toBe('reshoot');
    expect(v['A05.jpg|A07.jpg']).toBe('reshoot');
    expect(v['A07.jpg|A01.jpg']).toBe('ok');
    expect(v['A05.jpg|A06.jpg']).toBe('weak');
    expect(report.frames.find((f) => f.file === 'A08.jpg')?.flags).toEqual(['blurred']);
  });
});

describe('the strip', () => {
  let strip: HTMLElement;
  const opened: string[] = [];
  beforeEach(() => {
    opened.length = 0;
    strip = renderStrip(report, { thumbnail, selected: null, onOpen: (k) => opened.push(k) });
    document.body.replaceChildren(strip);
  });

  it('shows stations as columns with their bracket frames stacked, the reference on top', () => {
    const stations = [...strip.querySelectorAll('[data-station]')];
    expect(stations.map((s) => s.getAttribute('data-station'))).toEqual(['0', '1', '2']);
    const columns = stations.map((s) => [...s.querySelectorAll('[data-frame]')].map((f) => f.getAttribute('data-frame')));
    expect(columns).toEqual([
      ['A01.jpg', 'A02.jpg', 'A03.jpg'],
      ['A05.jpg', 'A04.jpg', 'A06.jpg'],
      ['A07.jpg', 'A08.jpg', 'A09.jpg'],
    ]);
    expect(stations[1].querySelector('[data-frame]')?.classList.contains('is-reference')).toBe(true);
    expect(text(stations[1].querySelector('[data-frame="A04.jpg"] .frame-ev'))).toBe('-2 EV');
    expect(text(stations[1].querySelector('[data-frame="A05.jpg"] .frame-ev'))).toBe('reference · 0 EV');
  });

  it('shows thumbnails in shooting order within each station from the given image source', () => {
    const img = strip.querySelector<HTMLImageElement>('[data-frame="A08.jpg"] img');
    expect(img?.getAttribute('src')).toBe(urls.get('A08.jpg'));
    expect(img?.alt).toBe('A08.jpg');
    expect(img?.style.aspectRatio).toBe('3000 / 2000');
  });

  it('puts a link between neighbouring stations with overlap, inliers, EV difference and the verdict in words and icon', () => {
    const children = [...strip.children];
    const kinds = children.map((c) => (c.hasAttribute('data-station') ? 'station' : c.getAttribute('data-kind')));
    expect(kinds).toEqual(['station', 'neighbour', 'station', 'neighbour', 'station', 'closure']);

    const low = strip.querySelector('[data-pair="A01.jpg|A05.jpg"]')!;
    expect(low.getAttribute('data-kind')).toBe('neighbour');
    expect(low.getAttribute('data-verdict')).toBe('reshoot');
    expect(text(low)).toContain('12 %');
    expect(text(low)).toContain('60 inliers');
    expect(text(low)).toContain('+0.1 EV');
    expect(text(low.querySelector('.badge'))).toBe('reshoot');
    expect(low.querySelector('svg[data-icon="reshoot"]')).not.toBeNull();
    expect([...low.querySelectorAll('[data-flag]')].map((f) => text(f))).toEqual(['low overlap']);

    const jump = strip.querySelector('[data-pair="A05.jpg|A07.jpg"]')!;
    expect(jump.getAttribute('data-verdict')).toBe('reshoot');
    expect(text(jump)).toContain('42 %');
    expect(text(jump)).toContain('180 inliers');
    expect(text(jump)).toContain('+1.3 EV');
    expect([...jump.querySelectorAll('[data-flag]')].map((f) => f.getAttribute('data-flag'))).toEqual(['exposure-jump']);
  });

  it('shows the closure link at the end, ok with its own icon and word', () => {
    const closure = strip.lastElementChild!;
    expect(closure.getAttribute('data-pair')).toBe('A07.jpg|A01.jpg');
    expect(closure.getAttribute('data-kind')).toBe('closure');
    expect(closure.getAttribute('data-verdict')).toBe('ok');
    expect(text(closure)).toContain('38 %');
    expect(text(closure)).toContain('back to station 1');
    expect(text(closure.querySelector('.badge'))).toBe('ok');
    expect(closure.querySelector('svg[data-icon="ok"]')).not.toBeNull();
  });

  it('makes flagged frames carry the verdict word, an icon and their flags in words, and leaves ok frames plain', () => {
    const blurred = strip.querySelector('[data-frame="A08.jpg"]')!;
    expect(blurred.getAttribute('data-verdict')).toBe('reshoot');
    expect(blurred.classList.contains('frame-reshoot')).toBe(true);
    expect(text(blurred.querySelector('.badge'))).toBe('reshoot');
    expect(blurred.querySelector('svg[data-icon="reshoot"]')).not.toBeNull();
    expect(text(blurred.querySelector('.flags'))).toBe('blurred');

    const moved = strip.querySelector('[data-frame="A06.jpg"]')!;
    expect(moved.getAttribute('data-verdict')).toBe('weak');
    expect(text(moved.querySelector('.badge'))).toBe('weak');
    expect(moved.querySelector('svg[data-icon="weak"]')).not.toBeNull();
    expect(text(moved.querySelector('.flags'))).toBe('bracket drift');

    const fine = strip.querySelector('[data-frame="A01.jpg"]')!;
    expect(fine.getAttribute('data-verdict')).toBe('ok');
    expect(fine.querySelector('.badge')).toBeNull();
    expect(fine.querySelector('.flags')).toBeNull();
  });

  it('offers each bracket frame\'s pair against its reference, with shift, overlap and inliers', () => {
    const chip = strip.querySelector('[data-frame="A06.jpg"] [data-pair]')!;
    expect(chip.getAttribute('data-pair')).toBe('A05.jpg|A06.jpg');
    expect(chip.getAttribute('data-kind')).toBe('bracket');
    expect(chip.getAttribute('data-verdict')).toBe('weak');
    expect(text(chip)).toContain('shift 6 px');
    expect(text(chip)).toContain('99 %');
    expect(text(chip)).toContain('420 inliers');
    (chip as HTMLElement).click();
    expect(opened).toEqual(['A05.jpg|A06.jpg']);
  });

  it('opens a link on click and marks the selected one', () => {
    (strip.querySelector('[data-pair="A05.jpg|A07.jpg"]') as HTMLElement).click();
    expect(opened).toEqual(['A05.jpg|A07.jpg']);
    const selected = renderStrip(report, { thumbnail, selected: 'A05.jpg|A07.jpg', onOpen: () => undefined });
    expect([...selected.querySelectorAll('.is-selected')].map((n) => n.getAttribute('data-pair'))).toEqual(['A05.jpg|A07.jpg']);
  });

  it('renders a partial report, with a placeholder where a neighbour pair is not measured yet', () => {
    const partial = { ...report, pairs: report.pairs.filter((p) => p.kind === 'bracket') };
    const s = renderStrip(partial, { thumbnail, selected: null, onOpen: () => undefined });
    expect(s.querySelectorAll('[data-station]').length).toBe(3);
    expect(s.querySelectorAll('[data-kind="neighbour"]').length).toBe(0);
    expect([...s.querySelectorAll('.link-missing')].map((n) => text(n))).toEqual(['not measured yet', 'not measured yet']);
  });

  it('walks the neighbour links and then the closure with the arrow keys', () => {
    expect(chainPairs(report).map(pairKey)).toEqual(['A01.jpg|A05.jpg', 'A05.jpg|A07.jpg', 'A07.jpg|A01.jpg']);
  });
});

describe('the summary header', () => {
  it('shows frames, stations, sweep, the plan\'s count of what to reshoot and the overall verdict as icon and word', () => {
    const s = renderSummary(report);
    expect(s.hasAttribute('data-summary')).toBe(true);
    const overall = s.querySelector('[data-verdict]')!;
    expect(overall.getAttribute('data-verdict')).toBe('reshoot');
    expect(text(overall.querySelector('.badge'))).toBe('reshoot');
    expect(overall.querySelector('svg[data-icon="reshoot"]')).not.toBeNull();
    const stat = (name: string): string => text(s.querySelector(`[data-stat="${name}"] dd`));
    expect(stat('frames')).toBe('9');
    expect(stat('stations')).toBe('3');
    expect(stat('sweep')).toBe('352°');
    // What is counted is what to do, the plan's items; the findings they come from are said in words.
    expect(stat('to-reshoot')).toBe(String(report.plan!.filter((i) => !i.optional).length));
    expect(stat('worth-a-look')).toBe(String(report.plan!.filter((i) => i.optional).length));
    expect(s.querySelector('[data-stat="reshoot"], [data-stat="weak"]')).toBeNull();
    // Two neighbour pairs, the blurred frame; the moved bracket frame and its pair are weak.
    expect(report.counts.reshoot).toBe(3);
    expect(report.counts.weak).toBe(2);
    expect(text(s.querySelector('[data-plan-counted]'))).toMatch(/, from 2 pairs and 1 frame flagged reshoot; 1 pair and 1 frame flagged weak$/);
    expect(text(s.querySelector('[data-skipped]'))).toContain('notes.txt: not an image');
  });

  it('shows the lens as measured, with its distortion in words on hover', () => {
    // A 6000 x 4000 frame (the corner 3606 px from the centre) at 4000 px focal length: k1 = -0.1
    // moves the corner by k1 r^2 = -0.1 x 0.8125, 8.1 % toward the centre (Brown's model, lens.ts).
    const frames = report.frames.map((f) => ({ ...f, width: 6000, height: 4000 }));
    const geometry = { ...report.geometry!, focalPx: 4000, focal35mm: 24, exifFocal35mm: 24, distortion: { k1: -0.1, k2: 0, terms: 1 as const } };
    const s = renderSummary({ ...report, frames, geometry });
    const lens = s.querySelector('[data-stat="lens"]')!;
    expect(text(lens.querySelector('dd'))).toBe('24 mm');
    expect(lens.getAttribute('title')).toBe('Lens as measured: focal length 24 mm (35 mm equivalent; EXIF says 24 mm), barrel distortion of 8.1 % at the corners (taken out before the pairs were judged)');
  });

  it('leaves the sweep out when it is not known', () => {
    const s = renderSummary({ ...report, sweepDeg: null });
    expect(s.querySelector('[data-stat="sweep"]')).toBeNull();
  });
});

describe('the pair detail', () => {
  // Tie points (xa, ya, xb, yb) of the low-overlap pair: b = a shifted left by 2640 px.
  const tie = [2799.5, 999.5, 159.5, 999.5, 2700, 300, 60, 300, 2950, 1800, 310, 1800, 2650, 50, 10, 50, 2990, 1990, 350, 1990];
  const ready: TiePointState = { state: 'ready', points: tie };
  const show = (key: string, t: TiePointState = ready, lines = true): HTMLElement => {
    const d = renderDetail(report, key, { image, tiePoints: t, lines, onBack: () => undefined, onToggleLines: () => undefined });
    document.body.replaceChildren(d);
    return d;
  };
  const measure = (d: Element, name: string): string => text(d.querySelector(`[data-measure="${name}"] dd .numeral`));

  it('shows every measure, the verdict with its reasons, and the advice in plain words', () => {
    const d = show('A01.jpg|A05.jpg');
    expect(d.hasAttribute('data-detail')).toBe(true);
    expect(d.getAttribute('data-pair')).toBe('A01.jpg|A05.jpg');
    expect(measure(d, 'overlap')).toBe('12 %');
    expect(measure(d, 'inliers')).toBe('60');
    expect(measure(d, 'matches')).toBe('140');
    expect(measure(d, 'inlierShare')).toBe('43 %');
    expect(measure(d, 'matchesInOverlap')).toBe('90');
    expect(measure(d, 'evDiff')).toBe('+0.1 EV');
    expect(measure(d, 'rmsError')).toBe('0.80 px');
    expect(text(d.querySelector('[data-measure="overlap"] .limit'))).toBe('weak below 30 %, reshoot below 20 %');
    expect(text(d.querySelector('[data-measure="verdict"] .badge'))).toBe('reshoot');
    expect(d.querySelector('[data-measure="verdict"] svg[data-icon="reshoot"]')).not.toBeNull();
    expect(text(d.querySelector('[data-measure="reasons"]'))).toContain('low overlap');
    expect(text(d.querySelector('.detail-advice'))).toContain('overlap is only 12 % between A01.jpg and A05.jpg: add a frame between them');
  });

  it('draws the two frames, one mark per tie point, and the overlap on each frame', () => {
    const d = show('A01.jpg|A05.jpg');
    const images = [...d.querySelectorAll('.pair-canvas image')];
    expect(images.map((i) => i.getAttribute('href'))).toEqual(['seamscout-frame://frames/1/A01.jpg?max=1200', 'seamscout-frame://frames/1/A05.jpg?max=1200']);
    // Both frames scaled to 1000 units high: a is 1500 wide, b starts after a 48-unit gap.
    expect(images.map((i) => [i.getAttribute('x'), i.getAttribute('width'), i.getAttribute('height')])).toEqual([['0', '1500', '1000'], ['1548', '1500', '1000']]);
    const marks = [...d.querySelectorAll('[data-tie]')];
    expect(marks.length).toBe(tie.length / 4);
    expect(marks.every((m) => m.querySelectorAll('circle').length === 2 && m.querySelectorAll('line').length === 1)).toBe(true);
    // Pixel centres at integers: (2799.5 + 0.5) * 0.5 = 1400 in a, 1548 + (159.5 + 0.5) * 0.5 = 1628 in b.
    const first = marks[0].querySelectorAll('circle');
    expect([first[0].getAttribute('cx'), first[0].getAttribute('cy')]).toEqual(['1400.0', '500.0']);
    expect([first[1].getAttribute('cx'), first[1].getAttribute('cy')]).toEqual(['1628.0', '500.0']);

    const xsOf = (side: string): number[] => (d.querySelector(`[data-overlap="${side}"]`)?.getAttribute('points') ?? '').split(' ').map((p) => Number(p.split(',')[0]));
    // A shift of 2640 px: the overlap is a's right 360 px and b's left 360 px (180 units each).
    expect(Math.min(...xsOf('a'))).toBeCloseTo(1320, 0);
    expect(Math.max(...xsOf('a'))).toBeCloseTo(1500, 0);
    expect(Math.min(...xsOf('b'))).toBeCloseTo(1548, 0);
    expect(Math.max(...xsOf('b'))).toBeCloseTo(1728, 0);
    // Five tie points for a pair of 60 inliers: the note says what they are, not that they are the inliers.
    expect(d.querySelector('[data-tie-note]')?.getAttribute('data-tie-count')).toBe('5');
    expect(text(d.querySelector('[data-tie-note]'))).toBe('5 tie points drawn: the points the homography is finally fitted to (the first frame\'s corners in the overlap, each found in the second by its appearance). They are not the 60 inliers, which count the descriptor matches that agree. The outline is the overlap.');
    const sixty = Array.from({ length: 60 }, (_, k) => [2700 + k, 100 + 20 * k, 60 + k, 100 + 20 * k]).flat();
    expect(text(show('A01.jpg|A05.jpg', { state: 'ready', points: sixty }).querySelector('[data-tie-note]'))).toBe('60 tie points drawn, as many as the inliers: the points the homography is fitted to. The outline is the overlap.');
  });

  it('puts the measures a verdict rests on before the pictures, and places b on a with the overlap outlined', () => {
    const d = show('A01.jpg|A05.jpg');
    const order = [...d.querySelectorAll('[data-measure], .placed-figure, .pair-canvas')].map((n) => n.getAttribute('data-measure') ?? n.getAttribute('class'));
    const first = order.indexOf('placed-figure');
    expect(order.slice(0, first)).toEqual(['overlap', 'inliers', 'evDiff', 'verdict', 'reasons']);
    expect(order.slice(first + 1)).toEqual(['matches', 'inlierShare', 'matchesInOverlap', 'rmsError', 'pair-canvas']);
    // The fixture's frames have a 24 mm (35 mm equivalent) focal length in EXIF and no geometry: the view is the sphere.
    const placed = d.querySelector('svg.placed-canvas')!;
    expect(placed.getAttribute('data-surface')).toBe('sphere');
    expect(placed.querySelector('[data-side="b"]')?.getAttribute('data-pieces')).toBe('128');
    expect(placed.querySelectorAll('[data-side="b"] use').length).toBe(128);
    expect(placed.querySelector('#placed-b-picture')?.getAttribute('href')).toBe('seamscout-frame://frames/1/A05.jpg?max=1200');
    expect(placed.getAttribute('aria-label')).toContain('the overlap, 12 % of A01.jpg');
    const ov = (placed.querySelector('[data-placed-overlap]')?.getAttribute('points') ?? '').split(' ').map((p) => Number(p.split(',')[0]));
    const box = (placed.getAttribute('viewBox') ?? '').split(' ').map(Number);
    // 12 % of a's width, on a view about two frames wide.
    expect((Math.max(...ov) - Math.min(...ov)) / box[2]).toBeGreaterThan(0.03);
    expect((Math.max(...ov) - Math.min(...ov)) / box[2]).toBeLessThan(0.1);
    const none = judge({ ...analysis, pairs: analysis.pairs.map((p) => (p.a === 'A01.jpg' && p.b === 'A05.jpg' ? { ...p, homography: null, overlap: null, inliers: 0 } : p)) }, defaultBudget);
    const unplaced = renderDetail(none, 'A01.jpg|A05.jpg', { image, tiePoints: ready, lines: true, onBack: () => undefined, onToggleLines: () => undefined });
    expect(unplaced.querySelector('svg.placed-canvas')).toBeNull();
    expect(text(unplaced.querySelector('.placed-figure'))).toBe('No homography: the frames could not be placed in one view.');
  });

  it('draws dots without lines when lines are off, and says when tie points are loading or failed', () => {
    const dots = show('A01.jpg|A05.jpg', ready, false);
    expect(dots.querySelectorAll('[data-tie]').length).toBe(5);
    expect(dots.querySelectorAll('.tie-line').length).toBe(0);
    const loading = show('A01.jpg|A05.jpg', { state: 'loading' });
    expect(loading.querySelectorAll('[data-tie]').length).toBe(0);
    expect(loading.querySelectorAll('[data-overlap]').length).toBe(2);
    expect(text(loading.querySelector('[data-tie-note]'))).toBe('Loading tie points…');
    const failed = show('A01.jpg|A05.jpg', { state: 'failed', message: 'check closed' });
    expect(text(failed.querySelector('[data-tie-note]'))).toBe('Tie points could not be loaded: check closed');
  });

  it('shows the exposure jump with its limit and advice, and a bracket pair with its shift', () => {
    const jump = show('A05.jpg|A07.jpg');
    expect(measure(jump, 'evDiff')).toBe('+1.3 EV');
    expect(text(jump.querySelector('[data-measure="evDiff"] .limit'))).toBe('within ±0.5 EV');
    expect(text(jump.querySelector('.detail-advice'))).toContain('exposure changed by +1.3 EV between A05.jpg and A07.jpg: lock exposure and reshoot');
    const br = show('A05.jpg|A06.jpg');
    expect(br.getAttribute('data-kind')).toBe('bracket');
    expect(measure(br, 'shiftPx')).toBe('6.0 px');
    expect(text(br.querySelector('[data-measure="shiftPx"] .limit'))).toBe('at most 4 px');
    expect(text(br.querySelector('.detail-advice'))).toContain('A06.jpg moved 6 px against its reference A05.jpg');
  });

  it('says so when a pair has no match, and draws no overlap', () => {
    const none = judge({ ...analysis, pairs: analysis.pairs.map((p) => (p.a === 'A01.jpg' && p.b === 'A05.jpg' ? { ...p, homography: null, overlap: null, inliers: 0, evDiff: null, rmsError: null } : p)) }, defaultBudget);
    const d = renderDetail(none, 'A01.jpg|A05.jpg', { image, tiePoints: { state: 'ready', points: [] }, lines: true, onBack: () => undefined, onToggleLines: () => undefined });
    expect(measure(d, 'overlap')).toBe('none found');
    expect(d.querySelectorAll('[data-overlap]').length).toBe(0);
    expect(text(d.querySelector('[data-tie-note]'))).toBe('No tie points: the frames did not line up.');
    expect(text(d.querySelector('[data-measure="reasons"]'))).toContain('no match');
  });
});

describe('what to do', () => {
  it('lists each piece of advice once, reshoot first, pointing at its pair', () => {
    const items = adviceItems(report);
    expect(items.map((i) => i.verdict)).toEqual(['reshoot', 'reshoot', 'reshoot', 'weak']);
    expect(items.find((i) => i.text.includes('moved 6 px'))?.pair).toBe('A05.jpg|A06.jpg');
    expect(items.find((i) => i.text.includes('blurred'))?.pair).toBeNull();
    const opened: string[] = [];
    const list = renderAdvice(report, (k) => opened.push(k));
    expect(list.querySelectorAll('li').length).toBe(4);
    expect(list.querySelectorAll('li svg[data-icon]').length).toBe(4);
    (list.querySelector('[data-open-pair="A01.jpg|A05.jpg"]') as HTMLElement).click();
    expect(opened).toEqual(['A01.jpg|A05.jpg']);
  });
});

describe('words and numbers', () => {
  it('formats percent, EV steps and time left as the page shows them', () => {
    expect([percent(0.449), percent(null), percent(1)]).toEqual(['45 %', '—', '100 %']);
    expect([evStep(1.26), evStep(-0.7), evStep(0.04), evStep(null)]).toEqual(['+1.3 EV', '-0.7 EV', '0.0 EV', '—']);
    expect([timeLeft(null), timeLeft(39.2), timeLeft(185), timeLeft(1500)]).toEqual([null, 'about 40 s left', 'about 3 min 5 s left', 'about 25 min left']);
  });
});

describe('folder-level problems', () => {
  it('are said in words above the strip', () => {
    const empty = judge({ folder: '/card/empty', frames: [], stations: [], pairs: [], skipped: [], sweepDeg: null, geometry: null }, defaultBudget);
    document.body.replaceChildren(renderSummary(empty));
    const items = [...document.querySelectorAll('[data-folder-problem]')];
    expect(items.map((i) => i.getAttribute('data-folder-problem'))).toEqual(['no-frames']);
    expect(items[0].textContent).toMatch(/no frame could be checked/);
  });
});

describe('the coverage map', () => {
  const placed = judge({
    ...analysis,
    geometry: {
      focalPx: 2000, focalFrom: 'exif', unplaced: [], horizontalDeg: 150, verticalDeg: 53, gaps: [{ fromYawDeg: 120, toYawDeg: 330 }], closure: null, rmsPx: 0.3, rows: [],
      // Three stations 50 degrees apart: the first two overlap, the third leaves a gap before it.
      poses: [{ station: 0, yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, { station: 1, yawDeg: 50, pitchDeg: 0, rollDeg: 0 }, { station: 2, yawDeg: 130, pitchDeg: 0, rollDeg: 0 }],
    },
  }, defaultBudget);

  it('draws every placed frame and hatches what none sees, saying so in words too', () => {
    const s = renderCoverage(placed)!;
    const svg = s.querySelector('svg')!;
    expect(svg.namespaceURI).toBe(svgNS);
    expect(svg.querySelectorAll('polygon.footprint')).toHaveLength(3 * 3);
    expect(svg.querySelectorAll('rect.hole').length).toBeGreaterThan(0);
    expect(svg.getAttribute('aria-label')).toMatch(/not covered/);
    expect(s.textContent).toMatch(/% of the shot band is not covered/);
    // The low-overlap link is marked on the map and said in words; the exposure jump is no coverage problem.
    expect(svg.querySelectorAll('line.link-mark[data-link="A01.jpg|A05.jpg"][data-code="low-overlap"]').length).toBeGreaterThan(0);
    expect(svg.querySelectorAll('line.link-mark:not([data-link="A01.jpg|A05.jpg"])')).toHaveLength(0);
    expect([...s.querySelectorAll('[data-mark]')].map((li) => [li.getAttribute('data-link'), text(li)])).toEqual([['A01.jpg|A05.jpg', 'Reshoot: stations 1 and 2 share only 12 % (dashed line between them).']]);
  });

  it('is left out when the frames could not be placed', () => {
    expect(renderCoverage(report)).toBeNull();
  });

  it('says in words that the poles are open when a set in rows does not reach toward them', () => {
    // The three stations in two rows at -15 and +15 degrees, 3000 x 2000 frames at a 2000 px focal length.
    const rows = judge({
      ...analysis,
      geometry: {
        focalPx: 2000, focalFrom: 'exif', unplaced: [], horizontalDeg: 150, verticalDeg: 80, gaps: [], closure: null, rmsPx: 0.3,
        poses: [{ station: 0, yawDeg: 0, pitchDeg: -15, rollDeg: 0 }, { station: 1, yawDeg: 50, pitchDeg: -15, rollDeg: 0 }, { station: 2, yawDeg: 25, pitchDeg: 15, rollDeg: 0 }],
        rows: [{ pitchDeg: -15, stations: [0, 1] }, { pitchDeg: 15, stations: [2] }],
      },
    }, defaultBudget);
    const s = renderCoverage(rows)!;
    expect([...s.querySelectorAll('[data-note]')].map((n) => n.getAttribute('data-note'))).toEqual(['zenith', 'nadir']);
    expect(s.textContent).toMatch(/Note: nothing covers the view above about pitch \+\d+° \(the zenith\)/);
  });
});
