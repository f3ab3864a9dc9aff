import type { FileProblemKind } from '../core/image/file-problem.js';
import { FileProblem } from '../core/image/file-problem.js';

/**
 * An error as it crosses from a worker thread: a thread's messages carry an Error's message and
 * stack but not its class or its own fields (the system's `code`, a file problem's `kind`), and
 * the check reads those to say why a file was left out (skip-reasons.ts).
 */
export interface CrossingError {
  readonly crossing: 'error';
  readonly name: string;
  readonly message: string;
  readonly stack: string | undefined;
  readonly code: string | undefined;
  readonly errno: number | undefined;
  readonly syscall: string | undefined;
  readonly kind: FileProblemKind | undefined;
  readonly ending: string | undefined;
}

/** What of an error thrown in a worker thread crosses to the thread that sent the task. */
export function errorToCross(err: unknown): CrossingError {
  const e = (err ?? {}) as Partial<FileProblem> & NodeJS.ErrnoException;
  const text = (v: unknown): string | undefined => (typeof v === 'string' ? v : undefined);
  return {
    crossing: 'error',
    name: err instanceof Error ? err.name : 'Error',
    message: err instanceof Error ? err.message : String(err),
    stack: err instanceof Error ? err.stack : undefined,
    code: text(e.code),
    errno: typeof e.errno === 'number' ? e.errno : undefined,
    syscall: text(e.syscall),
    kind: err instanceof FileProblem ? err.kind : undefined,
    ending: err instanceof FileProblem ? err.ending : undefined,
  };
}

const isCrossing = (v: unknown): v is CrossingError => typeof v === 'object' && v !== null && (v as { crossing?: unknown }).crossing === 'error';

/**
 * The error a worker thread threw, rebuilt in the thread that sent the task: a FileProblem of the
 * same kind, or an Error with the same name and system code. Anything else (a cancel, a worker that
 * died) is returned as it came.
 */
export function errorFromCrossing(v: unknown): unknown {
  if (!isCrossing(v)) return v;
  const err = v.kind !== undefined ? new FileProblem(v.kind, v.message, { ending: v.ending }) : Object.assign(new Error(v.message), { name: v.name });
  if (v.kind === undefined) {
    if (v.code !== undefined) Object.assign(err, { code: v.code });
    if (v.errno !== undefined) Object.assign(err, { errno: v.errno });
    if (v.syscall !== undefined) Object.assign(err, { syscall: v.syscall });
  }
  if (v.stack !== undefined) err.stack = v.stack;
  return err;
}
