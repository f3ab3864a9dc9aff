import { describe, expect, it } from 'vitest';
import { determinant, identity, invert, multiply, normalise, project, transpose } from '../../../src/core/numeric/matrix3.js';

// Checked against textbook identities of 3x3 matrices: M M^-1 = I, det(M^T) = det(M),
// det(P Q) = det(P) det(Q), (P Q)^T = Q^T P^T; the values of M below are worked by hand.
const M = Float64Array.of(2, 1, 0, 0, 3, 1, 1, 0, 4);
const P = Float64Array.of(1, 2, 3, 0, 1, 4, 5, 6, 0);

describe('matrix3', () => {
  it('multiplies row-major, with the identity neutral', () => {
    expect(Array.from(multiply(M, identity()))).toEqual(Array.from(M));
    // First row of M P: (2*1 + 1*0 + 0*5, 2*2 + 1*1 + 0*6, 2*3 + 1*4 + 0*0).
    expect(Array.from(multiply(M, P).subarray(0, 3))).toEqual([2, 5, 10]);
  });

  it('inverts, and refuses a singular matrix', () => {
    const inv = invert(M)!;
    multiply(M, inv).forEach((v, k) => expect(v).toBeCloseTo(k % 4 === 0 ? 1 : 0, 12));
    expect(invert(Float64Array.of(1, 2, 3, 2, 4, 6, 0, 0, 1))).toBeNull();
  });

  it('has det(M) = 25 (by hand), det(M^T) = det(M) and det(M P) = det(M) det(P)', () => {
    expect(determinant(M)).toBe(25);
    expect(determinant(transpose(M))).toBe(25);
    expect(determinant(multiply(M, P))).toBeCloseTo(25 * determinant(P), 9);
    expect(Array.from(transpose(multiply(M, P)))).toEqual(Array.from(multiply(transpose(P), transpose(M))));
  });

  it('projects with the homogeneous division and normalises to |h[8]| = 1 keeping the sign', () => {
    // (1, 1) -> (2 + 1, 3 + 1, 1 + 4) = (3, 4, 5) -> (0.6, 0.8), w = 5.
    expect(project(M, 1, 1)).toEqual([0.6, 0.8, 5]);
    const n = normalise(Float64Array.of(2, 0, 0, 0, 2, 0, 0, 0, -4));
    expect(Array.from(n)).toEqual([0.5, 0, 0, 0, 0.5, 0, 0, 0, -1]);
  });
});
