import type { DesignMatrix } from '../design/designMatrix.js';
import { indicatorContrast, linearContrastInterval } from '../measures/linearContrast.js';
import { benjaminiHochbergAdjustment } from '../multiplicity/benjaminiHochbergAdjustment.js';
import { holmAdjustment } from '../multiplicity/holmAdjustment.js';
import type { AnalysisResult, JointCell, ModifierEffect, MultiplicativeEntry, StratumEffect } from '../types.js';
import type { FittedAnalysis } from './fittedAnalysis.js';
import type { ModifierSummary } from './modifierSummary.js';

/** Fewer events or non-events than this in a cell earns a sparse-data warning (common practice). */
const SPARSE_CELL_COUNT = 5;

/** The effects within and across modifier levels, and the joint contrasts the additive measures start from. */
export interface ModifierEffects {
  strata: StratumEffect[];
  modifierEffects: ModifierEffect[];
  joint: AnalysisResult['joint'];
  multiplicative: MultiplicativeEntry[];
  /** Per non-reference level (or +1 SD), the contrast rows (c10, c01, c11) of its joint effects. */
  jointByLevel: { level: string; contrasts: Float64Array }[];
  /** Joint cells (2 × modifier levels, at least 2) for the bootstrap's separation check. */
  jointCells: number;
}

/** Contrast rows (c10, c01, c11) of one modifier level's joint effects. */
function jointContrasts(design: DesignMatrix, level: number, summary: ModifierSummary, continuous: boolean): Float64Array {
  const p = design.columns;
  const rows = new Float64Array(3 * p);
  const a = design.exposureIndex;
  const m = design.modifierIndices[level];
  const product = design.productIndices[level];
  if (!continuous) {
    rows[a] = 1;
    rows[p + m] = 1;
    rows[2 * p + a] = 1;
    rows[2 * p + m] = 1;
    rows[2 * p + product] = 1;
    return rows;
  }
  // Continuous modifier: reference value x0 = mean, contrast +1 SD.
  const x0 = (summary.mean as number) - summary.centre;
  const delta = summary.sd as number;
  rows[a] = 1;
  rows[product] = x0;
  rows[p + m] = delta;
  rows[2 * p + a] = 1;
  rows[2 * p + m] = delta;
  rows[2 * p + product] = x0 + delta;
  return rows;
}

/**
 * Effects of the intervention within each modifier level (Holm and BH adjusted), modifier
 * effects within each arm, joint cells with their counts (and separation or sparse-stratum
 * warnings), and the ratio of ratios per level; for a continuous modifier, the ratio per unit.
 */
export function modifierEffectsStage(analysis: FittedAnalysis): ModifierEffects {
  const { frame, design, fit, summary, reference, scale, ratio, p, warnings } = analysis;
  const { coefficients, covariance } = fit;
  const dose = frame.exposureValues !== null;
  // Counts by cell (exposure × modifier level) for strata, joint cells and warnings.
  const levelCount = frame.modifier.kind === 'categorical' ? frame.modifier.levels.length : 0;
  const jointCells = 2 * Math.max(levelCount, 1);
  const cellN = new Float64Array(jointCells);
  const cellSum = new Float64Array(jointCells);
  for (let i = 0; i < frame.n; i++) {
    const level = frame.modifier.kind === 'categorical' ? frame.modifier.codes[i] : 0;
    const cell = level * 2 + frame.exposure[i];
    cellN[cell]++;
    cellSum[cell] += frame.outcome[i];
  }

  let strata: StratumEffect[] = [];
  const modifierEffects: ModifierEffect[] = [];
  let joint: AnalysisResult['joint'] = null;
  const multiplicative: MultiplicativeEntry[] = [];
  const jointByLevel: { level: string; contrasts: Float64Array }[] = [];

  if (frame.modifier.kind === 'categorical') {
    const { levels, column } = frame.modifier;
    const raw = levels.map((level, k) => {
      const contrast = indicatorContrast(p, design.exposureIndex, ...(k > 0 ? [design.productIndices[k - 1]] : []));
      const effect = linearContrastInterval(coefficients, covariance, contrast, reference, scale);
      const n = cellN[2 * k] + cellN[2 * k + 1];
      const events = frame.outcomeBinary ? cellSum[2 * k] + cellSum[2 * k + 1] : null;
      return { level, n, events, effect };
    });
    const holm = holmAdjustment(raw.map((entry) => entry.effect.p));
    const bh = benjaminiHochbergAdjustment(raw.map((entry) => entry.effect.p));
    strata = raw.map((entry, k) => ({ ...entry, pAdjusted: { holm: holm[k], bh: bh[k] } }));

    // A continuous intervention has no arms and no joint cells: the strata are its slopes
    // per unit within each level and the ratios per level compare those slopes.
    for (let arm = 0; arm < (dose ? 0 : 2); arm++) {
      for (let k = 1; k < levels.length; k++) {
        const indices = [design.modifierIndices[k - 1], ...(arm === 1 ? [design.productIndices[k - 1]] : [])];
        modifierEffects.push({
          exposure: frame.exposureLevels[arm],
          level: levels[k],
          effect: linearContrastInterval(coefficients, covariance, indicatorContrast(p, ...indices), reference, scale),
        });
      }
    }

    const cells: JointCell[] = [];
    for (let k = 0; k < (dose ? 0 : levels.length); k++) {
      for (let arm = 0; arm < 2; arm++) {
        const n = cellN[2 * k + arm];
        const sum = cellSum[2 * k + arm];
        const indices = [
          ...(arm === 1 ? [design.exposureIndex] : []),
          ...(k > 0 ? [design.modifierIndices[k - 1]] : []),
          ...(arm === 1 && k > 0 ? [design.productIndices[k - 1]] : []),
        ];
        cells.push({
          exposure: frame.exposureLevels[arm],
          modifier: levels[k],
          n,
          events: frame.outcomeBinary ? sum : null,
          risk: frame.outcomeBinary ? sum / n : null,
          mean: frame.outcomeBinary ? null : sum / n,
          effect: indices.length === 0 ? null : linearContrastInterval(coefficients, covariance, indicatorContrast(p, ...indices), reference, scale),
        });
        if (frame.outcomeBinary) {
          const stratumName = `${column}=${levels[k]}, ${frame.exposureColumn}=${frame.exposureLevels[arm]}`;
          if (sum === 0 || sum === n) {
            warnings.push({
              code: 'SEPARATION',
              message: `The stratum ${stratumName} has ${sum === 0 ? 'no events' : 'only events'} (${n} rows), so its effect is not estimable: the estimate runs off to ${sum === 0 ? 'zero' : 'infinity'} (quasi-complete separation).`,
              column,
              level: levels[k],
            });
          } else if (sum < SPARSE_CELL_COUNT || n - sum < SPARSE_CELL_COUNT) {
            const few = sum < SPARSE_CELL_COUNT ? `${sum} events` : `${n - sum} non-events`;
            warnings.push({
              code: 'SPARSE_STRATUM',
              message: `The stratum ${stratumName} has only ${few} (fewer than ${SPARSE_CELL_COUNT}); its estimates are imprecise and may be biased.`,
              column,
              level: levels[k],
            });
          }
        }
      }
    }
    joint = dose ? null : { reference: { exposure: frame.exposureLevels[0], modifier: levels[0] }, cells };

    for (let k = 1; k < levels.length; k++) {
      const product = design.productIndices[k - 1];
      if (ratio) {
        const interaction = linearContrastInterval(coefficients, covariance, indicatorContrast(p, product), reference, 'ratio');
        multiplicative.push({ level: levels[k], estimate: interaction.estimate, lower: interaction.lower, upper: interaction.upper, p: interaction.p, se: interaction.se });
      }
      if (!dose) jointByLevel.push({ level: levels[k], contrasts: jointContrasts(design, k - 1, summary, false) });
    }
  } else {
    const product = design.productIndices[0];
    if (ratio) {
      const interaction = linearContrastInterval(coefficients, covariance, indicatorContrast(p, product), reference, 'ratio');
      multiplicative.push({
        level: `per 1 unit of ${frame.modifier.column}`,
        estimate: interaction.estimate, lower: interaction.lower, upper: interaction.upper, p: interaction.p, se: interaction.se,
      });
    }
    if (!dose) jointByLevel.push({ level: `+1 SD of ${frame.modifier.column}`, contrasts: jointContrasts(design, 0, summary, true) });
  }
  return { strata, modifierEffects, joint, multiplicative, jointByLevel, jointCells };
}
