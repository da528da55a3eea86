import { Matrix, inverse } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { choleskyFactor, choleskyInverse, choleskySolve, NotPositiveDefiniteError } from './symmetricPositiveDefinite.js';

describe('Cholesky algebra', () => {
  // A random-looking SPD matrix A = BᵀB + I; the independent reference is ml-matrix's LU inverse.
  const b = [
    [2, -1, 0.5, 3],
    [0.1, 4, -2, 1],
    [1, 1, 1, 1],
    [-3, 0.2, 2, 0.7],
  ];
  const bMatrix = new Matrix(b);
  const a = bMatrix.transpose().mmul(bMatrix).add(Matrix.eye(4));
  const flat = Float64Array.from(a.to1DArray());

  it('inverts like ml-matrix', () => {
    const ours = choleskyInverse(choleskyFactor(flat, 4));
    const theirs = inverse(a).to1DArray();
    theirs.forEach((value, k) => expect(ours[k]).toBeCloseTo(value, 12));
  });
  it('solves A x = b', () => {
    const x = choleskySolve(choleskyFactor(flat, 4), [1, 2, 3, 4]);
    const back = a.mmul(Matrix.columnVector([...x])).to1DArray();
    back.forEach((value, k) => expect(value).toBeCloseTo(k + 1, 12));
  });
  it('names the aliased term of a singular matrix', () => {
    // Column 2 = column 0 + column 1 in X, so XᵀX is singular at index 2.
    const x = new Matrix([
      [1, 0, 1],
      [1, 1, 2],
      [1, 2, 3],
      [1, 5, 6],
    ]);
    const xtx = Float64Array.from(x.transpose().mmul(x).to1DArray());
    expect(() => choleskyFactor(xtx, 3)).toThrow(NotPositiveDefiniteError);
    try {
      choleskyFactor(xtx, 3);
    } catch (error) {
      expect((error as NotPositiveDefiniteError).index).toBe(2);
    }
  });
});
