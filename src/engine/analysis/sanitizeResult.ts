import type { AnalysisResult } from '../types.js';

/**
 * Makes a result plain JSON: every non-finite number (NaN, ±Infinity) becomes null, and a
 * NON_FINITE_VALUE warning lists where (typed arrays never reach here: results are built
 * from plain arrays). The result is modified in place and returned.
 */
export function sanitizeResult(result: AnalysisResult): AnalysisResult {
  const paths: string[] = [];
  const visit = (value: unknown, path: string): unknown => {
    if (typeof value === 'number') {
      if (Number.isFinite(value)) return value;
      paths.push(path);
      return null;
    }
    if (Array.isArray(value)) {
      for (let index = 0; index < value.length; index++) value[index] = visit(value[index], `${path}[${index}]`);
      return value;
    }
    if (value !== null && typeof value === 'object') {
      const record = value as Record<string, unknown>;
      for (const key of Object.keys(record)) record[key] = visit(record[key], path ? `${path}.${key}` : key);
      return record;
    }
    return value;
  };
  visit(result, '');
  if (paths.length > 0) {
    const shown = paths.slice(0, 5).join(', ');
    result.warnings.push({
      code: 'NON_FINITE_VALUE',
      message: `${paths.length} value(s) could not be computed (for example ${shown}${paths.length > 5 ? ', ...' : ''}) and are given as null.`,
    });
  }
  return result;
}
