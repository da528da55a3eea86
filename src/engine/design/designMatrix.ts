import type { AnalysisFrame, FrameVariable } from './analysisFrame.js';

/** Role of a model term, used to find b1, b2, b3 and to name terms in messages. */
export type TermRole = 'intercept' | 'exposure' | 'modifier' | 'product' | 'covariate';

export interface DesignTerm {
  readonly name: string;
  readonly role: TermRole;
  readonly column: string | null;
  /** Level of a categorical variable this indicator stands for. */
  readonly level: string | null;
}

/**
 * A design matrix in row-major order: row i occupies x[i·p .. i·p + p − 1]. Row-major
 * keeps one row's terms together, so a fit touches each row once per pass.
 */
export interface DesignMatrix {
  readonly rows: number;
  readonly columns: number;
  readonly x: Float64Array;
  readonly terms: readonly DesignTerm[];
  readonly exposureIndex: number;
  /** Modifier main-effect terms: one per non-reference level, or one for a continuous modifier. */
  readonly modifierIndices: readonly number[];
  /** Exposure × modifier products, parallel to modifierIndices (empty without interaction). */
  readonly productIndices: readonly number[];
  readonly covariateIndices: readonly number[];
  /** Value subtracted from a continuous modifier (0 when not centred or categorical). */
  readonly centre: number;
}

export interface DesignOptions {
  /** Include the exposure × modifier product terms (false gives the no-interaction model). */
  readonly includeProducts: boolean;
  /** Subtracted from a continuous modifier before it enters the model. */
  readonly centre: number;
  /** Allocate the matrix on a SharedArrayBuffer so worker threads can read it. */
  readonly shared?: boolean;
}

function variableTerms(variable: FrameVariable, role: TermRole): DesignTerm[] {
  if (variable.kind === 'continuous') return [{ name: variable.column, role, column: variable.column, level: null }];
  return variable.levels.slice(1).map((level) => ({ name: `${variable.column}=${level}`, role, column: variable.column, level }));
}

/**
 * Builds the design of g(μ) = b0 + b1·A + Σ b2ₖ·Bₖ + Σ b3ₖ·A·Bₖ + covariates, with
 * reference (treatment) coding: a categorical variable with L levels gives L − 1
 * indicators, the reference level having none; a continuous modifier enters as
 * (value − centre). Term order: intercept, exposure, modifier terms, products, covariates.
 * The frame is not modified.
 *
 * @example for a 0/1 exposure "call" and a modifier "age" with levels 18-44 (reference),
 *   45-64, 65+: terms are (Intercept), call=1, age=45-64, age=65+, call=1 × age=45-64,
 *   call=1 × age=65+.
 */
export function buildDesignMatrix(frame: AnalysisFrame, options: DesignOptions): DesignMatrix {
  const exposureName = `${frame.exposureColumn}=${frame.exposureLevels[1]}`;
  const terms: DesignTerm[] = [
    { name: '(Intercept)', role: 'intercept', column: null, level: null },
    { name: exposureName, role: 'exposure', column: frame.exposureColumn, level: frame.exposureLevels[1] },
  ];
  const modifierTerms = variableTerms(frame.modifier, 'modifier');
  const modifierIndices = modifierTerms.map((_, k) => 2 + k);
  terms.push(...modifierTerms);
  const productIndices: number[] = [];
  if (options.includeProducts) {
    for (const term of modifierTerms) {
      productIndices.push(terms.length);
      terms.push({ name: `${exposureName} × ${term.name}`, role: 'product', column: term.column, level: term.level });
    }
  }
  const covariateIndices: number[] = [];
  const covariateStarts: number[] = [];
  for (const covariate of frame.covariates) {
    covariateStarts.push(terms.length);
    for (const term of variableTerms(covariate, 'covariate')) {
      covariateIndices.push(terms.length);
      terms.push(term);
    }
  }

  const rows = frame.n;
  const p = terms.length;
  const bytes = rows * p * Float64Array.BYTES_PER_ELEMENT;
  const x = options.shared ? new Float64Array(new SharedArrayBuffer(bytes)) : new Float64Array(rows * p);
  const { exposure, modifier } = frame;
  const centre = modifier.kind === 'continuous' ? options.centre : 0;
  const modifierStart = 2;
  const productStart = options.includeProducts ? 2 + modifierTerms.length : -1;

  for (let i = 0; i < rows; i++) {
    const offset = i * p;
    const a = exposure[i];
    x[offset] = 1;
    x[offset + 1] = a;
    if (modifier.kind === 'continuous') {
      const value = modifier.values[i] - centre;
      x[offset + modifierStart] = value;
      if (productStart >= 0) x[offset + productStart] = a * value;
    } else {
      const code = modifier.codes[i];
      if (code > 0) {
        x[offset + modifierStart + code - 1] = 1;
        if (productStart >= 0 && a === 1) x[offset + productStart + code - 1] = 1;
      }
    }
    frame.covariates.forEach((covariate, index) => {
      const start = covariateStarts[index];
      if (covariate.kind === 'continuous') x[offset + start] = covariate.values[i];
      else {
        const code = covariate.codes[i];
        if (code > 0) x[offset + start + code - 1] = 1;
      }
    });
  }

  return {
    rows,
    columns: p,
    x,
    terms,
    exposureIndex: 1,
    modifierIndices,
    productIndices,
    covariateIndices,
    centre,
  };
}
