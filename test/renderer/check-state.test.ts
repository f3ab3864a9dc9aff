// The page's check life cycle as a pure reducer, without a DOM: each transition on plain events.
// The report is three single-frame stations judged by core's `judge` with the default budget, so the
// re-judging on a budget change is core's own.
import { describe, expect, it } from 'vitest';
import type { Analysis, PairMeasure, Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import type { CheckEvent, CheckState } from '../../src/renderer/check-state.js';
import { doneEvent, initialCheckState, reduce } from '../../src/renderer/check-state.js';

const W = 4000, H = 6000;
const pair = (a: string, b: string, overlap: number): PairMeasure => ({
  a, b, kind: 'neighbour', matches: 320, inliers: 210, matchesInOverlap: 250, overlap, homography: [1, 0, -W * (1 - overlap), 0, 1, 0, 0, 0, 1], evDiff: 0.1, rmsError: 0.6, shiftPx: null,
});
const files = ['F1.jpg', 'F2.jpg', 'F3.jpg'];
const analysis: Analysis = {
  folder: '/card/shoot',
  frames: files.map((file) => ({ file, width: W, height: H, captureTime: null, settings: { exposureTime: 0.01, fNumber: 8, iso: 100, evBias: 0, focalLength: 24, focalLength35: 24, whiteBalance: 'auto', make: null, model: null }, sharpness: 2, keypoints: 1500 })),
  stations: files.map((f, i) => ({ index: i, frames: [f], reference: f, evOffsets: [0], groupedBy: 'single' as const })),
  // 0.35 is above the default weak overlap (0.3): ok by default, weak under a budget asking 0.4.
  pairs: [pair('F1.jpg', 'F2.jpg', 0.35), pair('F2.jpg', 'F3.jpg', 0.45)],
  skipped: [],
  sweepDeg: null,
  geometry: null,
};
const report: Report = judge(analysis, defaultBudget);
const partialReport: Report = judge({ ...analysis, pairs: analysis.pairs.slice(0, 1) }, defaultBudget);

const run = (events: readonly CheckEvent[], from: CheckState = initialCheckState): CheckState => events.reduce(reduce, from);
const progress = (checkId: number, phase: 'demo' | 'frames' | 'pairs', done: number, total: number, secondsLeft: number | null = null): CheckEvent => ({ type: 'progress', event: { checkId, phase, done, total, secondsLeft } });
/** A check of /card/shoot started and given id 7 by the host. */
const startedAs7 = (): CheckState => run([{ type: 'started', label: 'shoot' }, { type: 'accepted', serial: 1, checkId: 7 }]);

describe('starting', () => {
  it('goes to the progress screen with empty counts, clearing an old message', () => {
    const before = reduce(initialCheckState, { type: 'notice', message: { kind: 'error', text: 'old' } });
    const s = reduce(before, { type: 'started', label: 'shoot' });
    expect(s.screen).toBe('progress');
    expect(s.message).toBeNull();
    expect(s.running).toMatchObject({ serial: 1, id: null, cancelAsked: false, writing: null });
    expect(s.running?.progress).toEqual({ target: 'shoot', frames: null, pairs: null, latest: null, cancelling: false });
  });

  it('refuses a second start while one runs', () => {
    const s = startedAs7();
    expect(reduce(s, { type: 'started', label: 'other' })).toBe(s);
  });

  it('keeps events that come before the id and takes those of its check, in order, once it is known', () => {
    let s = reduce(initialCheckState, { type: 'started', label: 'shoot' });
    s = run([progress(7, 'frames', 1, 3), progress(8, 'frames', 2, 9), { type: 'partial', event: { checkId: 7, report: partialReport } }, progress(7, 'pairs', 1, 2)], s);
    expect(s.early).toHaveLength(4);
    expect(s.screen).toBe('progress');
    s = reduce(s, { type: 'accepted', serial: 1, checkId: 7 });
    expect(s.early).toEqual([]);
    expect(s.running?.id).toBe(7);
    // The other check's event (id 8) is dropped; the frames count is check 7's.
    expect(s.running?.progress.frames).toEqual({ done: 1, total: 3 });
    expect(s.running?.progress.pairs).toEqual({ done: 1, total: 2 });
    expect(s.screen).toBe('results');
    expect(s.raw).toBe(partialReport);
  });

  it('ignores the answer to a start that is no longer the running one', () => {
    const s = run([{ type: 'started', label: 'shoot' }, { type: 'start-failed', serial: 1, error: 'busy' }, { type: 'started', label: 'again' }]);
    expect(s.running?.serial).toBe(2);
    expect(reduce(s, { type: 'accepted', serial: 1, checkId: 7 })).toBe(s);
    expect(reduce(s, { type: 'start-failed', serial: 1, error: 'late' })).toBe(s);
  });

  it('goes back to the start screen with the reason when the start fails', () => {
    const s = run([{ type: 'started', label: 'shoot' }, { type: 'start-failed', serial: 1, error: 'no such folder' }]);
    expect(s.running).toBeNull();
    expect(s.screen).toBe('start');
    expect(s.message).toEqual({ kind: 'error', text: 'The check could not start: no such folder' });
  });
});

describe('while checking', () => {
  it('counts frames and pairs from progress events of its own check only', () => {
    const s = run([progress(7, 'frames', 2, 3), progress(9, 'frames', 5, 9), progress(7, 'pairs', 1, 2)], startedAs7());
    expect(s.running?.progress.frames).toEqual({ done: 2, total: 3 });
    expect(s.running?.progress.pairs).toEqual({ done: 1, total: 2 });
    expect(s.running?.progress.latest?.phase).toBe('pairs');
  });

  it('shows the demo shoot being written, keeping the first estimate, until the frames are read', () => {
    let s = run([progress(7, 'demo', 0, 24, 30.4), progress(7, 'demo', 6, 24, 20)], startedAs7());
    expect(s.running?.writing).toEqual({ done: 6, total: 24, seconds: 30, secondsLeft: 20 });
    expect(s.running?.progress.latest).toBeNull();
    s = reduce(s, progress(7, 'frames', 1, 24));
    expect(s.running?.writing).toBeNull();
    expect(s.running?.progress.frames).toEqual({ done: 1, total: 24 });
  });

  it('shows results so far without an ok verdict, and keeps the check running', () => {
    const s = reduce(startedAs7(), { type: 'partial', event: { checkId: 7, report: partialReport } });
    expect(s.screen).toBe('results');
    expect(s.running?.id).toBe(7);
    expect(s.checkId).toBe(7);
    expect(s.report).toBe(partialReport);
    // The summary reads "checking" while running: the state says it runs, whatever the partial verdict.
    expect(s.running).not.toBeNull();
  });

  it('ignores results of another check', () => {
    const s = startedAs7();
    expect(reduce(s, { type: 'partial', event: { checkId: 8, report } })).toBe(s);
    expect(reduce(s, doneEvent({ checkId: 8, report, error: null, cancelled: false }))).toBe(s);
  });
});

describe('the end of a check', () => {
  it('shows the final report and stops running', () => {
    const s = reduce(startedAs7(), doneEvent({ checkId: 7, report, error: null, cancelled: false }));
    expect(s.running).toBeNull();
    expect(s.screen).toBe('results');
    expect(s.report).toBe(report);
    expect(s.report?.verdict).toBe('ok');
  });

  it('ignores a late progress or partial event after done', () => {
    const done = reduce(startedAs7(), doneEvent({ checkId: 7, report, error: null, cancelled: false }));
    expect(reduce(done, progress(7, 'pairs', 2, 2))).toBe(done);
    expect(reduce(done, { type: 'partial', event: { checkId: 7, report: partialReport } })).toBe(done);
  });

  it('says the check stopped, with the host error, on the start screen', () => {
    const s = reduce(startedAs7(), doneEvent({ checkId: 7, report: null, error: 'disk gone', cancelled: false }));
    expect(s.running).toBeNull();
    expect(s.screen).toBe('start');
    expect(s.message).toEqual({ kind: 'error', text: 'The check stopped: disk gone' });
    expect(reduce(startedAs7(), doneEvent({ checkId: 7, report: null, error: null, cancelled: false })).message?.text).toBe('The check stopped: unknown error');
  });
});

describe('cancelling', () => {
  it('marks the progress as cancelling and ends with a cancelled message', () => {
    let s = reduce(startedAs7(), { type: 'cancel-asked' });
    expect(s.running?.progress.cancelling).toBe(true);
    // The id is known: the page cancels at once, nothing is kept for later.
    expect(s.running?.cancelAsked).toBe(false);
    s = reduce(s, doneEvent({ checkId: 7, report: null, error: null, cancelled: true }));
    expect(s.running).toBeNull();
    expect(s.screen).toBe('start');
    expect(s.message).toEqual({ kind: 'info', text: 'Check cancelled.' });
  });

  it('remembers a cancel asked before the id is known', () => {
    const s = run([{ type: 'started', label: 'shoot' }, { type: 'cancel-asked' }]);
    expect(s.running?.cancelAsked).toBe(true);
    expect(s.running?.progress.cancelling).toBe(true);
  });

  it('does nothing when no check runs', () => {
    expect(reduce(initialCheckState, { type: 'cancel-asked' })).toBe(initialCheckState);
  });
});

describe('the budget', () => {
  const strict = { ...defaultBudget, weakOverlap: 0.4 };

  it('judges the shown report again without changing what the host sent', () => {
    const done = reduce(startedAs7(), doneEvent({ checkId: 7, report, error: null, cancelled: false }));
    const s = reduce(done, { type: 'budget-changed', budget: strict });
    expect(s.raw).toBe(report);
    expect(s.report?.budget).toEqual(strict);
    expect(s.report?.verdict).toBe('weak');
    // Back to the budget the report was judged with: the host's report itself.
    expect(reduce(s, { type: 'budget-changed', budget: { ...defaultBudget } }).report).toBe(report);
  });

  it('judges reports that arrive later with the changed budget', () => {
    const s = run([{ type: 'budget-changed', budget: strict }, doneEvent({ checkId: 7, report, error: null, cancelled: false })], startedAs7());
    expect(s.raw).toBe(report);
    expect(s.report?.verdict).toBe('weak');
  });
});

describe('screens and reloads', () => {
  it('goes back to the start screen from results, not from progress', () => {
    const running = startedAs7();
    expect(reduce(running, { type: 'back-to-start' })).toBe(running);
    const done = reduce(running, doneEvent({ checkId: 7, report, error: null, cancelled: false }));
    const start = reduce(done, { type: 'back-to-start' });
    expect(start.screen).toBe('start');
    expect(start.report).toBe(report);
    expect(reduce(start, { type: 'back-to-results' }).screen).toBe('results');
    expect(reduce(initialCheckState, { type: 'back-to-results' })).toBe(initialCheckState);
  });

  it('takes up the host latest check on reload: running with results so far, or finished', () => {
    const live = reduce(initialCheckState, { type: 'resumed', latest: { checkId: 4, folder: '/card/shoot/', demo: false, running: true, report: partialReport } });
    expect(live.running).toMatchObject({ id: 4, cancelAsked: false });
    expect(live.running?.progress.target).toBe('shoot');
    expect(live.screen).toBe('results');
    expect(live.report).toBe(partialReport);
    // A later progress event of that check counts.
    expect(reduce(live, progress(4, 'pairs', 1, 2)).running?.progress.pairs).toEqual({ done: 1, total: 2 });

    const early = reduce(initialCheckState, { type: 'resumed', latest: { checkId: 5, folder: '', demo: true, running: true, report: null } });
    expect(early.screen).toBe('progress');
    expect(early.running?.progress.target).toBe('the demo shoot');

    const finished = reduce(initialCheckState, { type: 'resumed', latest: { checkId: 6, folder: '/card/shoot', demo: false, running: false, report } });
    expect(finished.running).toBeNull();
    expect(finished.screen).toBe('results');
    expect(finished.checkId).toBe(6);
  });
});
