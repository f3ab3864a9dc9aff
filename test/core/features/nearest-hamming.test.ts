// The two nearest-neighbour kernels (WebAssembly SIMD and TypeScript) must agree exactly, and the
// committed WebAssembly bytes must be what their text source compiles to (WABT, the WebAssembly
// working group's toolkit, as the compiler).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { descriptorWords } from '../../../src/core/features/binary-descriptor.js';
import { nearestNeighbours } from '../../../src/core/features/nearest-hamming.js';
import { createRandom } from '../../../src/core/numeric/random.js';
import { kernels, moduleText } from '../../../scripts/build-wasm.js';
import { projectRoot } from '../../helpers/cli.js';

function descriptors(n: number, seed: number): Uint32Array {
  const rnd = createRandom(seed);
  return Uint32Array.from({ length: n * descriptorWords }, () => (rnd.next() * 2 ** 32) >>> 0);
}

/** Hamming distance bit by bit, the plain way. */
function distance(a: Uint32Array, i: number, b: Uint32Array, j: number): number {
  let s = 0;
  for (let w = 0; w < descriptorWords; w++) for (let v = a[i * descriptorWords + w] ^ b[j * descriptorWords + w]; v; v >>>= 1) s += v & 1;
  return s;
}

describe('nearest neighbours under Hamming distance', () => {
  it('the WebAssembly kernel finds what the TypeScript kernel finds, and both what counting bits finds', () => {
    const a = descriptors(300, 1);
    const b = descriptors(257, 2);
    // Copies and near copies, ties, and a descriptor at distance 256 from its partner.
    b.set(a.subarray(0, 8), 8 * 10);
    b.set(a.subarray(0, 8), 8 * 11);
    for (let w = 0; w < 8; w++) b[8 * 12 + w] = ~a[8 + w] >>> 0;
    const loop = nearestNeighbours(a, b, 'loop');
    const wasm = nearestNeighbours(a, b, 'wasm');
    expect(wasm).toEqual(loop);
    for (let i = 0; i < 300; i += 37) {
      const ds = Array.from({ length: 257 }, (_, j) => distance(a, i, b, j));
      const sorted = [...ds].sort((x, y) => x - y);
      expect(loop.bestD[i]).toBe(sorted[0]);
      expect(loop.secondD[i]).toBe(sorted[1]);
      expect(loop.best[i]).toBe(ds.indexOf(sorted[0]));
    }
    expect(loop.best[0]).toBe(10); // the earlier of two exact copies
    expect(distance(a, 1, b, 12)).toBe(256);
    for (let j = 0; j < 257; j += 29) {
      const ds = Array.from({ length: 300 }, (_, i) => distance(a, i, b, j));
      expect(loop.bestDOfB[j]).toBe(Math.min(...ds));
      expect(loop.bestOfB[j]).toBe(ds.indexOf(Math.min(...ds)));
    }
  });

  it('handles empty sets and grows its memory for large ones', () => {
    const none = new Uint32Array(0);
    const some = descriptors(5, 3);
    expect(nearestNeighbours(some, none, 'wasm')).toEqual(nearestNeighbours(some, none, 'loop'));
    expect(Array.from(nearestNeighbours(some, none, 'wasm').best)).toEqual([-1, -1, -1, -1, -1]);
    expect(nearestNeighbours(none, some, 'wasm')).toEqual(nearestNeighbours(none, some, 'loop'));
    const big = descriptors(5000, 4), other = descriptors(4000, 5);
    expect(nearestNeighbours(big, other, 'wasm')).toEqual(nearestNeighbours(big, other, 'loop'));
  });

  it('runs from the bytes its source compiles to', async () => {
    for (const k of kernels) expect(readFileSync(`${projectRoot}/${k.module}`, 'utf8'), `${k.module}: run npm run build:wasm`).toBe(await moduleText(k));
  });
});
