// Descriptor matching: nearest neighbour under Hamming distance with Lowe's ratio test (Lowe, IJCV
// 2004, threshold 0.8) and a mutual check.
import { describe, expect, it } from 'vitest';
import { descriptorWords } from '../../../src/core/features/binary-descriptor.js';
import { matchDescriptors } from '../../../src/core/features/match.js';
import { createRandom } from '../../../src/core/numeric/random.js';

function randomDescriptors(n: number, seed: number): Uint32Array {
  const rnd = createRandom(seed);
  return Uint32Array.from({ length: n * descriptorWords }, () => (rnd.next() * 2 ** 32) >>> 0);
}

/** Copies descriptor i of src with `flips` distinct bits flipped. */
function perturbed(src: Uint32Array, i: number, flips: number, seed: number): Uint32Array {
  const rnd = createRandom(seed);
  const d = src.slice(i * descriptorWords, (i + 1) * descriptorWords);
  const bits = Array.from({ length: 256 }, (_, k) => k);
  for (let f = 0; f < flips; f++) {
    const j = f + rnd.int(256 - f);
    [bits[f], bits[j]] = [bits[j], bits[f]];
    d[bits[f] >> 5] ^= 1 << (bits[f] & 31);
  }
  return d;
}

describe('matching binary descriptors', () => {
  it('pairs each descriptor with its noisy copy and reports the Hamming distance', () => {
    const a = randomDescriptors(200, 1);
    const b = new Uint32Array(a.length);
    for (let i = 0; i < 200; i++) b.set(perturbed(a, (i * 7) % 200, 20, i), i * descriptorWords);
    const m = matchDescriptors(a, b);
    expect(m.count).toBe(200);
    for (let k = 0; k < m.count; k++) {
      expect(m.b[k]).toBe((m.a[k] * 143) % 200); // 7 * 143 = 1001 = 1 (mod 200): the inverse map
      expect(m.distance[k]).toBeLessThanOrEqual(20);
    }
  });

  it('counts every differing bit, up to all 256', () => {
    const a = randomDescriptors(1, 5);
    for (const flips of [0, 1, 9, 31, 64, 128, 200, 255, 256]) {
      const m = matchDescriptors(a, perturbed(a, 0, flips, flips), { maxDistance: 256 });
      expect(m.count, `${flips} bits`).toBe(1);
      expect(m.distance[0], `${flips} bits`).toBe(flips);
    }
  });

  it('drops ambiguous matches by the ratio test', () => {
    const a = randomDescriptors(1, 2);
    // Two candidates at 30 and 34 bits: 30 < 0.8 * 34 fails, so no match.
    const b = new Uint32Array(2 * descriptorWords);
    b.set(perturbed(a, 0, 30, 3), 0);
    b.set(perturbed(a, 0, 34, 4), descriptorWords);
    const dist = (k: number): number => {
      let s = 0;
      for (let w = 0; w < descriptorWords; w++) {
        let v = a[w] ^ b[k * descriptorWords + w];
        while (v) {
          s += v & 1;
          v >>>= 1;
        }
      }
      return s;
    };
    expect(dist(0) < 0.8 * dist(1)).toBe(false);
    expect(matchDescriptors(a, b).count).toBe(0);
    expect(matchDescriptors(a, b, { ratio: 1 }).count).toBe(1);
  });

  it('keeps only mutual nearest neighbours', () => {
    const base = randomDescriptors(1, 5);
    // Two descriptors of a near one descriptor of b: only the closer one is mutual.
    const a = new Uint32Array(2 * descriptorWords);
    a.set(perturbed(base, 0, 5, 6), 0);
    a.set(perturbed(base, 0, 15, 7), descriptorWords);
    const b = Uint32Array.from([...base, ...randomDescriptors(1, 8)]);
    const m = matchDescriptors(a, b, { ratio: 0.95 });
    expect(m.count).toBe(1);
    expect(m.a[0]).toBe(0);
    expect(matchDescriptors(a, b, { ratio: 0.95, mutual: false }).count).toBe(2);
  });
});
