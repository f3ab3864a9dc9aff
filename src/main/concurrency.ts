/** Work in flight for a check: lanes over a list, slots for single tasks, and the gate on frames held. */

/** Runs `task` over items with at most `limit` in flight, keeping results in input order. */
export async function inOrder<T, R>(items: readonly T[], limit: number, task: (item: T, i: number) => Promise<R>, signal?: AbortSignal): Promise<R[]> {
  const out = new Array<R>(items.length);
  let next = 0;
  const lane = async (): Promise<void> => {
    while (next < items.length) {
      signal?.throwIfAborted();
      const i = next++;
      out[i] = await task(items[i], i);
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(limit, items.length)) }, lane));
  return out;
}

/** A counting semaphore for work in flight: the returned function runs a task once one of `n` slots is free. */
export function slots(n: number): <T>(task: () => Promise<T>) => Promise<T> {
  let free = n;
  const waiting: (() => void)[] = [];
  return async (task) => {
    while (free <= 0) await new Promise<void>((r) => waiting.push(r));
    free--;
    try {
      return await task();
    } finally {
      free++;
      waiting.shift()?.();
    }
  };
}

/**
 * The memory gate: counts decoded frames held and lets a new one in only below `limit`. Taking and
 * letting go are apart from waiting, because a frame decoded again for a late pair is taken without
 * waiting (its pair holds the other frame already), and a frame left out is let go without waking a
 * waiter (the decode that left it out wakes one when it ends).
 */
export class FrameGate {
  private heldNow = 0;
  private peakHeld = 0;
  private readonly waiting: (() => void)[] = [];

  constructor(readonly limit: number) {}

  get held(): number {
    return this.heldNow;
  }

  /** Most frames held at once so far. */
  get peak(): number {
    return this.peakHeld;
  }

  /** Resolves once fewer than `limit` frames are held (at once, or after a `wake`). */
  async room(): Promise<void> {
    while (this.heldNow >= this.limit) await new Promise<void>((r) => this.waiting.push(r));
  }

  take(): void {
    this.heldNow++;
    this.peakHeld = Math.max(this.peakHeld, this.heldNow);
  }

  drop(): void {
    this.heldNow--;
  }

  /** Wakes the longest waiter, which looks at the count again. */
  wake(): void {
    this.waiting.shift()?.();
  }

  /** Lets a frame go and wakes one waiter. */
  release(): void {
    this.drop();
    this.wake();
  }
}
