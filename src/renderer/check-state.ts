// The check's life cycle on the page as a pure state machine: events in (the user's and the host's),
// state out. No DOM and no API calls here, so every transition is testable on plain data; the page
// (app.ts) dispatches events, makes the calls and draws from the state.
import type { CheckDoneEvent, CheckPartialEvent, CheckProgressEvent, LatestCheck } from '../common/api.js';
import type { MatchBudget, Report } from '../core/sequence/report.js';
import { defaultBudget } from '../core/sequence/report.js';
import { rejudge } from '../core/sequence/verdicts.js';
import type { ProgressModel } from './progress-view.js';
import { emptyProgress, withEvent } from './progress-view.js';
import type { DemoWriting, StartModel } from './start-view.js';

export type Screen = 'start' | 'progress' | 'results';

export type Message = StartModel['message'];

export interface RunningCheck {
  /** Which start this is: a late answer to an earlier start is told apart by it. */
  readonly serial: number;
  /** The host's id, null until the start call has answered. */
  readonly id: number | null;
  readonly progress: ProgressModel;
  /** Cancel was asked before the id was known: the page cancels as soon as it is. */
  readonly cancelAsked: boolean;
  /** The demo shoot being written before its check (first use): shown on the start screen. */
  readonly writing: DemoWriting | null;
}

/** Events of the host that may come before the start call has answered with the check's id. */
export type HostEvent =
  | { readonly type: 'progress'; readonly event: CheckProgressEvent }
  | { readonly type: 'partial'; readonly event: CheckPartialEvent }
  | { readonly type: 'done'; readonly checkId: number; readonly report: Report }
  | { readonly type: 'failed'; readonly checkId: number; readonly error: string }
  | { readonly type: 'cancelled'; readonly checkId: number };

export type CheckEvent =
  | HostEvent
  | { readonly type: 'started'; readonly label: string }
  /** The start call answered: the running check's id. */
  | { readonly type: 'accepted'; readonly serial: number; readonly checkId: number }
  | { readonly type: 'start-failed'; readonly serial: number; readonly error: string }
  | { readonly type: 'cancel-asked' }
  /** A page loaded again: the host's latest check, still running or with its report. */
  | { readonly type: 'resumed'; readonly latest: LatestCheck }
  | { readonly type: 'budget-changed'; readonly budget: MatchBudget }
  | { readonly type: 'back-to-start'; readonly message?: Message }
  | { readonly type: 'back-to-results' }
  | { readonly type: 'notice'; readonly message: Message };

export interface CheckState {
  readonly screen: Screen;
  readonly running: RunningCheck | null;
  /** Host events that came before the start call answered, kept until the id says whose they are. */
  readonly early: readonly HostEvent[];
  readonly serial: number;
  /** The check whose report is shown. */
  readonly checkId: number | null;
  /** The report as the host sent it, and as judged with the page's budget. */
  readonly raw: Report | null;
  readonly report: Report | null;
  readonly budget: MatchBudget;
  readonly message: Message;
}

export const initialCheckState: CheckState = {
  screen: 'start',
  running: null,
  early: [],
  serial: 0,
  checkId: null,
  raw: null,
  report: null,
  budget: defaultBudget,
  message: null,
};

const sameBudget = (x: MatchBudget, y: MatchBudget): boolean => (Object.keys(x) as (keyof MatchBudget)[]).every((k) => x[k] === y[k]);

/** The host's end-of-check event as one of the three ways a check ends. */
export function doneEvent(e: CheckDoneEvent): HostEvent {
  if (e.report) return { type: 'done', checkId: e.checkId, report: e.report };
  if (e.cancelled) return { type: 'cancelled', checkId: e.checkId };
  return { type: 'failed', checkId: e.checkId, error: e.error ?? 'unknown error' };
}

const folderName = (folder: string): string => folder.split(/[\\/]/).filter(Boolean).pop() ?? folder;

/** A report arrived (results so far or final): shown with the page's budget. */
function receive(s: CheckState, id: number, r: Report): CheckState {
  return { ...s, checkId: id, raw: r, report: sameBudget(r.budget, s.budget) ? r : rejudge(r, s.budget), screen: 'results' };
}

export const checkIdOf = (e: HostEvent): number => (e.type === 'progress' || e.type === 'partial' ? e.event.checkId : e.checkId);

function hostEvent(s: CheckState, e: HostEvent): CheckState {
  const r = s.running;
  // Nothing runs: a late event of a check that ended, or of another page's check.
  if (!r) return s;
  if (r.id === null) return { ...s, early: [...s.early, e] };
  if (checkIdOf(e) !== r.id) return s;
  switch (e.type) {
    case 'progress': {
      const p = e.event;
      if (p.phase === 'demo') {
        // The first event carries the estimate; it is said as it was, the time left follows the frames.
        const seconds = r.writing?.seconds ?? (p.secondsLeft === null ? null : Math.round(p.secondsLeft));
        return { ...s, running: { ...r, writing: { done: p.done, total: p.total, seconds, secondsLeft: p.secondsLeft } } };
      }
      return { ...s, running: { ...r, writing: null, progress: withEvent(r.progress, p) } };
    }
    case 'partial':
      return receive(s, e.event.checkId, e.event.report);
    case 'done':
      return receive({ ...s, running: null }, e.checkId, e.report);
    case 'failed':
      return { ...s, running: null, screen: 'start', message: { kind: 'error', text: `The check stopped: ${e.error}` } };
    case 'cancelled':
      return { ...s, running: null, screen: 'start', message: { kind: 'info', text: 'Check cancelled.' } };
  }
}

export function reduce(s: CheckState, e: CheckEvent): CheckState {
  switch (e.type) {
    case 'progress':
    case 'partial':
    case 'done':
    case 'failed':
    case 'cancelled':
      return hostEvent(s, e);
    case 'started': {
      if (s.running) return s;
      const serial = s.serial + 1;
      return { ...s, serial, running: { serial, id: null, progress: emptyProgress(e.label), cancelAsked: false, writing: null }, early: [], message: null, screen: 'progress' };
    }
    case 'accepted': {
      const r = s.running;
      if (!r || r.serial !== e.serial || r.id !== null) return s;
      // The events that came early are taken in order now that it is known whose they are.
      const pending = s.early.filter((x) => checkIdOf(x) === e.checkId);
      return pending.reduce<CheckState>(reduce, { ...s, running: { ...r, id: e.checkId }, early: [] });
    }
    case 'start-failed': {
      if (!s.running || s.running.serial !== e.serial) return s;
      return { ...s, running: null, screen: 'start', message: { kind: 'error', text: `The check could not start: ${e.error}` } };
    }
    case 'cancel-asked': {
      const r = s.running;
      if (!r) return s;
      return { ...s, running: { ...r, progress: { ...r.progress, cancelling: true }, cancelAsked: r.id === null ? true : r.cancelAsked } };
    }
    case 'resumed': {
      const l = e.latest;
      let next = s;
      if (l.running) {
        const serial = s.serial + 1;
        const label = l.demo ? 'the demo shoot' : folderName(l.folder);
        next = { ...s, serial, running: { serial, id: l.checkId, progress: emptyProgress(label), cancelAsked: false, writing: null }, screen: 'progress' };
      }
      return l.report ? receive(next, l.checkId, l.report) : next;
    }
    case 'budget-changed': {
      const b = e.budget;
      if (!s.raw) return { ...s, budget: b };
      return { ...s, budget: b, report: sameBudget(s.raw.budget, b) ? s.raw : rejudge(s.raw, b) };
    }
    case 'back-to-start':
      // The progress screen has its own way out: Cancel.
      if (s.screen === 'progress') return s;
      return { ...s, screen: 'start', message: e.message === undefined ? s.message : e.message };
    case 'back-to-results':
      return s.report ? { ...s, screen: 'results' } : s;
    case 'notice':
      return { ...s, message: e.message };
  }
}
