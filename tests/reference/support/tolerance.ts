import { expect } from 'vitest';

/**
 * Asserts |actual − expected| ≤ relative·|expected| + absolute, with a label that names the
 * quantity in the failure message. The default relative tolerance, 1e-8, is a hundred
 * times tighter than the 1e-6 the engine promises against base R.
 */
export function expectClose(actual: number | null | undefined, expected: number, label: string, relative = 1e-8, absolute = 1e-13): void {
  expect(actual, `${label}: missing`).not.toBeNull();
  expect(actual, `${label}: missing`).not.toBeUndefined();
  const difference = Math.abs((actual as number) - expected);
  const allowed = relative * Math.abs(expected) + absolute;
  expect(difference <= allowed, `${label}: engine ${actual} vs reference ${expected} (difference ${difference}, allowed ${allowed})`).toBe(true);
}
