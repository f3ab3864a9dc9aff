/**
 * A bound on work that holds much memory at once (a frame decoded at full size is tens of
 * megabytes): at most `running` jobs run together and at most `waiting` more wait for a turn;
 * past that the caller is told to come back later instead of queueing without end.
 */
export interface FrameGate {
  /** The job's result once it has run, or null at once when the gate and its queue are full. */
  run<T>(job: () => Promise<T>): Promise<T> | null;
  readonly active: number;
  readonly queued: number;
}

export function createFrameGate(running: number, waiting: number): FrameGate {
  if (!Number.isInteger(running) || running < 1) throw new RangeError(`Expected a whole number of at least 1 for running but received ${running}`);
  if (!Number.isInteger(waiting) || waiting < 0) throw new RangeError(`Expected a whole number of at least 0 for waiting but received ${waiting}`);
  let active = 0;
  const queue: (() => void)[] = [];
  const next = (): void => {
    active--;
    queue.shift()?.();
  };
  return {
    run<T>(job: () => Promise<T>): Promise<T> | null {
      if (active >= running && queue.length >= waiting) return null;
      const start = (): Promise<T> => {
        active++;
        let result: Promise<T>;
        try {
          result = job();
        } catch (err) {
          result = Promise.reject(err);
        }
        return result.finally(next);
      };
      if (active < running) return start();
      return new Promise<T>((resolve, reject) => queue.push(() => start().then(resolve, reject)));
    },
    get active() {
      return active;
    },
    get queued() {
      return queue.length;
    },
  };
}
