import { describe, expect, it } from 'vitest';
import { FrameGate, inOrder, slots } from '../../src/main/concurrency.js';

/** A task that finishes when the test says so, so that the order of completion is the test's choice. */
function deferred<T>(): { promise: Promise<T>; resolve: (v: T) => void } {
  let resolve!: (v: T) => void;
  const promise = new Promise<T>((r) => (resolve = r));
  return { promise, resolve };
}

const tick = (): Promise<void> => new Promise((r) => setImmediate(r));

describe('inOrder', () => {
  it('keeps results in input order when tasks finish in reverse order', async () => {
    const gates = [0, 1, 2, 3].map(() => deferred<void>());
    const run = inOrder(['a', 'b', 'c', 'd'], 4, async (x, i) => {
      await gates[i].promise;
      return `${x}${i}`;
    });
    for (const g of [...gates].reverse()) {
      g.resolve();
      await tick();
    }
    expect(await run).toEqual(['a0', 'b1', 'c2', 'd3']);
  });

  it('never has more than the limit in flight, and uses the limit', async () => {
    let inFlight = 0, most = 0;
    await inOrder(Array.from({ length: 12 }, (_, i) => i), 3, async () => {
      inFlight++;
      most = Math.max(most, inFlight);
      await tick();
      inFlight--;
    });
    expect(most).toBe(3);
  });

  it('starts no task once the signal is aborted, and rejects with its reason', async () => {
    const controller = new AbortController();
    const started: number[] = [];
    const run = inOrder([0, 1, 2, 3, 4], 1, async (x) => {
      started.push(x);
      if (x === 1) controller.abort(new Error('stopped'));
      await tick();
    }, controller.signal);
    await expect(run).rejects.toThrow('stopped');
    expect(started).toEqual([0, 1]);
  });

  it('runs one lane for an empty list and returns an empty list', async () => {
    expect(await inOrder([], 4, async () => 1)).toEqual([]);
  });
});

describe('slots', () => {
  it('runs at most n tasks at once and frees a slot when a task fails', async () => {
    const slot = slots(2);
    let inFlight = 0, most = 0;
    const task = (fail: boolean) => slot(async () => {
      inFlight++;
      most = Math.max(most, inFlight);
      await tick();
      inFlight--;
      if (fail) throw new Error('failed');
      return 1;
    });
    const results = await Promise.allSettled([task(true), task(false), task(true), task(false), task(false)]);
    expect(most).toBe(2);
    expect(results.map((r) => r.status)).toEqual(['rejected', 'fulfilled', 'rejected', 'fulfilled', 'fulfilled']);
  });
});

describe('FrameGate', () => {
  it('holds a new frame back at the limit until one is released, and records the peak', async () => {
    const gate = new FrameGate(2);
    await gate.room();
    gate.take();
    await gate.room();
    gate.take();
    let entered = false;
    const third = gate.room().then(() => {
      entered = true;
      gate.take();
    });
    await tick();
    expect(entered).toBe(false);
    gate.release();
    await third;
    expect(entered).toBe(true);
    expect(gate.held).toBe(2);
    expect(gate.peak).toBe(2);
  });

  it('counts frames taken without waiting in the peak, and a wake while still full lets no one in', async () => {
    const gate = new FrameGate(1);
    gate.take();
    gate.take();
    expect(gate.peak).toBe(2);
    let entered = false;
    const waiter = gate.room().then(() => (entered = true));
    gate.drop();
    gate.wake();
    await tick();
    // One frame is still held: the woken waiter looks again and keeps waiting.
    expect(entered).toBe(false);
    gate.release();
    await waiter;
    expect(entered).toBe(true);
    expect(gate.held).toBe(0);
  });
});
