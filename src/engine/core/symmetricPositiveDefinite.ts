/**
 * Dense symmetric positive-definite algebra for the small p × p systems of the fits
 * (p is the number of model terms, rarely above 50). Matrices are row-major
 * Float64Arrays of length p²; only the upper triangle of the input is read.
 *
 * The factorisation and the solve are the engine's own, because they carry its rule for
 * aliased terms (Jacobi scaling and a pivot-ratio threshold, like R's QR tolerance) and
 * run in every IRLS step. The inverse of the triangular factor and the small products of
 * the delta method and the sandwich (gᵀVg, CVCᵀ, BMB) are ml-matrix's.
 */
import { Matrix, inverse } from 'ml-matrix';

/** Result of factorising a cross-product matrix. */
export interface CholeskyFactor {
  readonly size: number;
  /** Upper-triangular factor R of the Jacobi-scaled matrix, row-major (R'R = D⁻¹AD⁻¹). */
  readonly factor: Float64Array;
  /** Scale factors √a_jj used for the Jacobi scaling. */
  readonly scale: Float64Array;
  /** Smallest ratio of a pivot to its scaled diagonal (1 = orthogonal, 0 = aliased). */
  readonly smallestPivotRatio: number;
  /** Index of the term with that smallest pivot. */
  readonly smallestPivotIndex: number;
}

/**
 * Pivot ratios below this mean the term is (numerically) a linear combination of the terms
 * before it: its squared multiple correlation with them exceeds 1 − 1e-11. This plays the
 * role of the 1e-7 tolerance on |R_jj| in R's QR-based lm/glm (a ratio of 1e-14 on the
 * squared scale), loosened because the normal equations square the rounding error.
 */
export const SINGULAR_PIVOT_RATIO = 1e-11;

/** Thrown by {@link choleskyFactor} with the index of the aliased term. */
export class NotPositiveDefiniteError extends Error {
  readonly index: number;
  constructor(index: number) {
    super(`matrix is singular at term ${index}`);
    this.name = 'NotPositiveDefiniteError';
    this.index = index;
  }
}

/**
 * Cholesky factorisation A = DR'RD with Jacobi scaling D = diag(√a_jj) (Golub and Van Loan,
 * Matrix Computations, 4th ed., 2013, Algorithm 4.2.1, applied to D⁻¹AD⁻¹).
 *
 * @throws NotPositiveDefiniteError naming the first term whose pivot ratio falls below
 *   {@link SINGULAR_PIVOT_RATIO} (or whose diagonal is not positive).
 * @example choleskyFactor(Float64Array.of(4, 2, 2, 3), 2).factor // [1, 0.5, 0, 0.866...]
 */
export function choleskyFactor(matrix: Float64Array, size: number): CholeskyFactor {
  const scale = new Float64Array(size);
  for (let j = 0; j < size; j++) {
    const diagonal = matrix[j * size + j];
    if (!(diagonal > 0) || !Number.isFinite(diagonal)) throw new NotPositiveDefiniteError(j);
    scale[j] = Math.sqrt(diagonal);
  }
  const factor = new Float64Array(size * size);
  for (let j = 0; j < size; j++) {
    for (let k = j; k < size; k++) {
      factor[j * size + k] = matrix[j * size + k] / (scale[j] * scale[k]);
    }
  }
  let smallestPivotRatio = Infinity;
  let smallestPivotIndex = -1;
  for (let j = 0; j < size; j++) {
    let pivot = factor[j * size + j];
    for (let i = 0; i < j; i++) pivot -= factor[i * size + j] * factor[i * size + j];
    // The scaled diagonal is 1, so the pivot itself is the ratio.
    if (pivot < smallestPivotRatio) {
      smallestPivotRatio = pivot;
      smallestPivotIndex = j;
    }
    if (!(pivot > SINGULAR_PIVOT_RATIO)) throw new NotPositiveDefiniteError(j);
    const root = Math.sqrt(pivot);
    factor[j * size + j] = root;
    for (let k = j + 1; k < size; k++) {
      let value = factor[j * size + k];
      for (let i = 0; i < j; i++) value -= factor[i * size + j] * factor[i * size + k];
      factor[j * size + k] = value / root;
    }
    for (let k = 0; k < j; k++) factor[j * size + k] = 0;
  }
  return { size, factor, scale, smallestPivotRatio, smallestPivotIndex };
}

/** Solves A x = b with a factor from {@link choleskyFactor}; b is not modified. */
export function choleskySolve(cholesky: CholeskyFactor, rightHandSide: ArrayLike<number>): Float64Array {
  const { size, factor, scale } = cholesky;
  const solution = new Float64Array(size);
  for (let j = 0; j < size; j++) solution[j] = rightHandSide[j] / scale[j];
  // R' y = b (forward), then R x = y (backward).
  for (let j = 0; j < size; j++) {
    let value = solution[j];
    for (let i = 0; i < j; i++) value -= factor[i * size + j] * solution[i];
    solution[j] = value / factor[j * size + j];
  }
  for (let j = size - 1; j >= 0; j--) {
    let value = solution[j];
    for (let k = j + 1; k < size; k++) value -= factor[j * size + k] * solution[k];
    solution[j] = value / factor[j * size + j];
  }
  for (let j = 0; j < size; j++) solution[j] /= scale[j];
  return solution;
}

/**
 * The full symmetric inverse A⁻¹ (row-major p × p) from a factor of A:
 * A⁻¹ = D⁻¹ R⁻¹ R⁻ᵀ D⁻¹, with R⁻¹ from ml-matrix's LU inverse (on a triangular matrix,
 * back substitution).
 */
export function choleskyInverse(cholesky: CholeskyFactor): Float64Array {
  const { size, factor, scale } = cholesky;
  const factorInverse = inverse(Matrix.from1DArray(size, size, factor));
  const scaledInverse = factorInverse.mmul(factorInverse.transpose());
  const result = new Float64Array(size * size);
  for (let row = 0; row < size; row++) {
    for (let column = 0; column < size; column++) result[row * size + column] = scaledInverse.get(row, column) / (scale[row] * scale[column]);
  }
  // Symmetrise against rounding.
  for (let row = 0; row < size; row++) {
    for (let column = row + 1; column < size; column++) {
      const mean = 0.5 * (result[row * size + column] + result[column * size + row]);
      result[row * size + column] = mean;
      result[column * size + row] = mean;
    }
  }
  return result;
}

/** Fills the lower triangle of a row-major matrix whose upper triangle is set. */
export function mirrorUpperTriangle(matrix: Float64Array, size: number): void {
  for (let row = 1; row < size; row++) {
    for (let column = 0; column < row; column++) matrix[row * size + column] = matrix[column * size + row];
  }
}

/** Quadratic form gᵀ V g for a row-major p × p matrix V (the delta method's variance). */
export function quadraticForm(gradient: ArrayLike<number>, covariance: ArrayLike<number>, size: number): number {
  const g = Matrix.columnVector(gradient);
  return g.dot(Matrix.from1DArray(size, size, covariance).mmul(g));
}

/** The sandwich B M B of a bread B and a meat M, both row-major p × p. */
export function sandwich(bread: ArrayLike<number>, meat: ArrayLike<number>, p: number): Float64Array {
  const b = Matrix.from1DArray(p, p, bread);
  return Float64Array.from(b.mmul(Matrix.from1DArray(p, p, meat)).mmul(b).to1DArray());
}

/** Covariance of linear combinations: C V Cᵀ for a (m × p) contrast C and p × p V. */
export function contrastCovariance(contrast: ArrayLike<number>, covariance: ArrayLike<number>, m: number, p: number): Float64Array {
  const c = Matrix.from1DArray(m, p, contrast);
  return Float64Array.from(c.mmul(Matrix.from1DArray(p, p, covariance)).mmul(c.transpose()).to1DArray());
}
