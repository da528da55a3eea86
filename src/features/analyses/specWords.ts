/**
 * The specification in plain English (shown on the analysis and run pages and in the
 * result tables) and the list of what a run will compute, shown before running.
 */
import type { AnySpec, ScreenSpec, Spec } from '@/engine/boundary/schemas';
import { isScreenSpec } from './screenSpecs';
import { defaultReference, levelsFromReference, type FormColumn } from './formColumns';
import { ordinal } from '@/engine/analysis/pointLabels';
import { scoresText } from '../extracts/orderedScores';
import { CI_METHOD_LABEL, DEFAULT_REPLICATES, DEFAULT_SEED, MODEL_LABEL, MULTIPLICITY_LABEL, isRatioModel, measureFor, measureLabel } from './specRules';

/** How a column is named in prose: its short description where it has one, else its name. */
export function columnLabel(name: string, columns?: readonly FormColumn[]): string {
  const description = columns?.find((column) => column.name === name)?.description.trim() ?? '';
  return description !== '' && description.length <= 48 && !/[.\n]/.test(description) ? description : name;
}

function listInWords(items: readonly string[]): string {
  if (items.length <= 1) return items.join('');
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

/** A percentage without binary noise: 0.95 → "95", 0.050000000000000044 → "5". */
export function percentText(proportion: number): string {
  return String(Number((proportion * 100).toPrecision(10)));
}

export interface WordsContext {
  /** Dictionary columns, for short descriptions and the modifier's number of levels. */
  columns?: readonly FormColumn[];
  /** The modifier's levels as the run saw them (from the result), when known. */
  modifierLevels?: readonly string[] | null;
}

function slopesInWords(slopes: NonNullable<Spec['modifier']['slopesAt']>): string {
  if (slopes.kind === 'sd') return 'the mean and one standard deviation either side';
  if (slopes.kind === 'percentiles') return `the ${listInWords(slopes.percentiles.map(ordinal))} percentiles`;
  return listInWords(slopes.values.map((value, index) => (slopes.names?.[index] ? `${value} (${slopes.names[index]})` : String(value))));
}

/**
 * The specification in plain English, e.g. "Logistic regression of readmitted_30d on
 * call_back (reference 0), its product with age_band (reference 18-44), adjusted for sex,
 * comorbidity_score and site; effects as odds ratios; 95 % delta-method intervals; tests
 * at the 5 % level; Holm adjustment across 4 strata."
 */
export function specInWords(anySpec: AnySpec, context: WordsContext = {}): string {
  const given = anySpec.modifier;
  if (given === undefined) return isScreenSpec(anySpec) ? screenInWords(anySpec, context) : 'No modifier chosen yet.';
  const spec: Spec = { ...anySpec, modifier: given };
  const label = (name: string) => columnLabel(name, context.columns);
  const outcome = spec.outcome.event ? `${label(spec.outcome.column)} (event: ${spec.outcome.event})` : label(spec.outcome.column);
  const parts: string[] = [];
  const model = MODEL_LABEL[spec.model];
  const centre = spec.modifier.centre ?? 'none';
  const modifierPart =
    spec.modifier.type === 'categorical'
      ? `its product with ${label(spec.modifier.column)} (reference ${spec.modifier.reference ?? 'the first level'})`
      : `its product with ${label(spec.modifier.column)} as a continuous modifier${centre === 'none' ? '' : ` centred on ${typeof centre === 'number' ? centre : `its ${centre}`}`}`;
  const covariates = spec.covariates.map((covariate) => label(covariate.column));
  parts.push(
    `${model} of ${outcome} on ${label(spec.exposure.column)} ${spec.exposure.type === 'continuous' ? '(a continuous dose: slopes per unit)' : `(reference ${spec.exposure.reference})`}, ${modifierPart}, ${covariates.length > 0 ? `adjusted for ${listInWords(covariates)}` : 'with no adjustment for other covariates'}`,
  );
  const measure = spec.effectMeasure ?? measureFor(spec.model, spec.outcome.type);
  parts.push(`effects as ${measureLabel(measure, spec.outcome.type)}s`);
  parts.push(...extrasInWords(spec, label));
  const method = spec.ci.method === 'bootstrap'
    ? `percentile-bootstrap intervals from ${(spec.ci.replicates ?? DEFAULT_REPLICATES).toLocaleString('en-GB')} replicates (seed ${spec.ci.seed ?? DEFAULT_SEED})`
    : spec.ci.method === 'mover'
      ? 'MOVER intervals for RERI and delta-method intervals otherwise'
      : 'delta-method intervals';
  parts.push(`${percentText(spec.ci.level)} % ${method}`);
  parts.push(`tests at the ${percentText(spec.alpha ?? 1 - spec.ci.level)} % level`);
  if (spec.modifier.type === 'categorical') {
    const levels = context.modifierLevels ?? context.columns?.find((column) => column.name === spec.modifier.column)?.levels ?? null;
    const strata = levels ? `${levels.length} strata` : 'the strata';
    const multiplicity = spec.multiplicity ?? 'holm';
    parts.push(multiplicity === 'none' ? `no adjustment for multiple comparisons across ${strata}` : `${MULTIPLICITY_LABEL[multiplicity]} adjustment across ${strata}`);
  } else {
    parts.push(`the effect across ${label(spec.modifier.column)}, marked at ${slopesInWords(spec.modifier.slopesAt ?? { kind: 'sd' })}, with Johnson-Neyman boundaries`);
  }
  if (spec.modifier.ordered) parts.push(`a test for trend across the ordered levels of ${label(spec.modifier.column)} (scores ${scoresText(spec.modifier.ordered.scores)})`);
  if (spec.exposure.type === 'continuous') parts.push('additive measures not applicable to a continuous intervention');
  if (spec.preventive) parts.push('additive measures recoded for a preventive intervention');
  if (spec.standardize) parts.push('standardized risks, risk differences and numbers needed to treat within each level');
  return `${parts.join('; ')}.`;
}

/** The person-time, cluster and weights choices in words (empty when there are none). */
function extrasInWords(spec: Spec, label: (name: string) => string): string[] {
  const parts: string[] = [];
  if (spec.outcome.personTime) parts.push(`rates per ${label(spec.outcome.personTime)} (log person-time as offset)`);
  if (spec.cluster) parts.push(`cluster-robust (CR1) standard errors by ${label(spec.cluster.column)}`);
  else if (spec.standardErrors === 'robust') parts.push('robust (HC0) standard errors');
  if (spec.weights) parts.push(`each row weighted by ${label(spec.weights.column)} (frequency weights)`);
  return parts;
}

/** What the person-time, cluster and weights choices add to a run. */
function extrasComputation(spec: Spec): ComputationItem[] {
  const items: ComputationItem[] = [];
  if (spec.model === 'poisson') {
    items.push({
      title: 'Rates and overdispersion',
      detail: `${spec.outcome.personTime ? `Crude rates per 1,000 units of ${spec.outcome.personTime} in each arm and stratum; ` : ''}the Pearson χ² / df check of overdispersion, with a warning above 1.5 suggesting robust or cluster-robust standard errors.`,
    });
  }
  if (spec.cluster) {
    items.push({
      title: 'Cluster-robust standard errors',
      detail: `Every interval (strata, ratios of ratios, RERI, AP, S, slopes, Johnson-Neyman) uses the CR1 variance of Liang and Zeger with clusters from ${spec.cluster.column}; the number of clusters is shown, with a warning under 30.`,
    });
  }
  if (spec.weights) {
    items.push({ title: 'Frequency weights', detail: `Each row counts as ${spec.weights.column} identical rows: counts, tables, intervals and any bootstrap are those of the expanded rows. Weights must be positive whole numbers.` });
  }
  return items;
}

/**
 * A subgroup screen in plain English, e.g. "Subgroup screen over 3 modifiers, each in a
 * logistic regression model of its own: readmitted on treated (reference 0), its product
 * with frailty (reference low), with age (continuous) and with creatinine (continuous) in
 * turn, ...; Holm and Benjamini-Hochberg adjustment of the interaction tests across the 3
 * modifiers."
 */
function screenInWords(spec: ScreenSpec, context: WordsContext): string {
  const label = (name: string) => columnLabel(name, context.columns);
  const count = spec.modifiers.length;
  const each = spec.modifiers.map((modifier) =>
    modifier.type === 'categorical' ? `${label(modifier.column)} (reference ${modifier.reference ?? 'the first level'})` : `${label(modifier.column)} (continuous)`,
  );
  const covariates = spec.covariates.map((covariate) => label(covariate.column));
  const measure = spec.effectMeasure ?? measureFor(spec.model, spec.outcome.type);
  return (
    `Subgroup screen over ${count} modifiers, each in a ${MODEL_LABEL[spec.model].toLowerCase()} model of its own: ` +
    `${label(spec.outcome.column)} on ${label(spec.exposure.column)} (reference ${spec.exposure.reference}) and its product with ${listInWords(each)} in turn, ` +
    `${covariates.length > 0 ? `adjusted for ${listInWords(covariates)}` : 'with no adjustment for other covariates'}; effects as ${measureLabel(measure, spec.outcome.type)}s within each level or at chosen points; ` +
    `${percentText(spec.ci.level)} % intervals; the interaction test of each modifier (likelihood ratio, or F for a linear model), with Holm and Benjamini-Hochberg adjustment across the ${count} modifiers.`
  );
}

/** One line of the "what will be computed" panel. */
export interface ComputationItem {
  title: string;
  detail: string;
}

/** What a run of this specification will compute, shown before running. */
export function computationSummary(spec: Spec, columns: readonly FormColumn[]): ComputationItem[] {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const measure = spec.effectMeasure ?? measureFor(spec.model, spec.outcome.type);
  const measureName = measureLabel(measure, spec.outcome.type);
  const ratio = isRatioModel(spec.model);
  const items: ComputationItem[] = [];
  const covariateCount = spec.covariates.length;
  items.push({
    title: 'Model',
    detail: `${MODEL_LABEL[spec.model]} with ${covariateCount === 0 ? 'no covariates' : `${covariateCount} covariate${covariateCount === 1 ? '' : 's'}`}${spec.model === 'log-binomial' ? '; if it does not converge the engine falls back to modified Poisson and says so' : ''}.`,
  });
  const level = `${percentText(spec.ci.level)} %`;
  if (spec.modifier.type === 'categorical') {
    const levels = byName.get(spec.modifier.column)?.levels ?? [];
    const reference = spec.modifier.reference ?? defaultReference(levels);
    const ordered = levels.length > 0 ? levelsFromReference(levels, reference) : [];
    const others = ordered.slice(1);
    const k = ordered.length;
    const dose = spec.exposure.type === 'continuous';
    items.push({
      title: dose ? 'Slope within each stratum' : 'Effect within each stratum',
      detail: `The ${dose ? `slope per unit (${measureName} per unit)` : measureName} of ${spec.exposure.column} within each of ${k > 0 ? `the ${k} levels` : 'the levels'} of ${spec.modifier.column}${ordered.length > 0 ? ` (${ordered.join(', ')})` : ''}, with ${level} intervals and ${MULTIPLICITY_LABEL[spec.multiplicity ?? 'holm']}-adjusted p-values.`,
    });
    if (!dose) items.push({
      title: 'Joint effects',
      detail: `${k > 0 ? `All ${2 * k}` : 'All'} combinations of ${spec.exposure.column} and ${spec.modifier.column} against one reference (${spec.exposure.column} = ${spec.exposure.reference}, ${spec.modifier.column} = ${reference}), with counts.`,
    });
    items.push({
      title: 'Interaction on the multiplicative scale',
      detail: ratio
        ? `The ratio of ${measureName}s for each of ${others.length > 0 ? others.join(', ') : 'the other levels'} against ${reference}, and an omnibus ${spec.model === 'modified-poisson' || spec.cluster || spec.standardErrors === 'robust' ? 'robust Wald' : 'likelihood-ratio'} test of all product terms together.`
        : `The difference in ${dose ? 'slopes' : 'differences'} for each level against ${reference}, and an omnibus F test of all product terms together.`,
    });
    if (spec.modifier.ordered) {
      items.push({
        title: 'Test for trend',
        detail: `One product term of ${spec.exposure.column} with the scores of ${spec.modifier.column} (${scoresText(spec.modifier.ordered.scores)}): its Wald test${ratio && spec.model !== 'modified-poisson' ? ' and likelihood-ratio test' : ''}, beside the omnibus test.`,
      });
    }
    if (dose) items.push({ title: 'Additive measures', detail: 'Not computed: RERI, AP, S and the joint table need two intervention levels and do not apply to a dose.' });
    if (ratio && !dose) {
      items.push({
        title: 'Interaction on the additive scale',
        detail: `RERI, AP, AP* and S for each level against ${reference}, with ${CI_METHOD_LABEL[spec.ci.method]} intervals${spec.preventive ? ', each recoded so that the lowest-risk combination is the reference' : ''}.`,
      });
    }
    if (spec.outcome.type === 'binary' && spec.standardize) {
      items.push({
        title: 'Absolute effects (standardized)',
        detail: `Within each level of ${spec.modifier.column}, the mean predicted risk with and without ${spec.exposure.column} over that level's patients, the risk difference with its delta-method interval, the number needed to treat (or to harm), and each level's difference from ${reference}'s.`,
      });
    }
    if (spec.outcome.type === 'binary' && !dose) {
      items.push({ title: 'Crude cross-check', detail: 'The 2 × 2 table of each level without covariates, the crude test that the effect is the same in every level (for odds and risk ratios) set beside the adjusted model\'s test, and the Mantel-Haenszel estimate pooled over the levels.' });
    }
  } else {
    const slopes = spec.modifier.slopesAt ?? { kind: 'sd' };
    items.push({
      title: 'Effect curve',
      detail: `The ${measureName} of ${spec.exposure.column} across the observed range of ${spec.modifier.column} with its ${level} band, marked at ${slopesInWords(slopes)}, and where the data are thin.`,
    });
    items.push({
      title: 'Where the effect is distinguishable from none',
      detail: `The stretch of ${spec.modifier.column} over which the effect of ${spec.exposure.column} is distinguishable from no effect at the ${percentText(spec.alpha ?? 1 - spec.ci.level)} % level (Johnson-Neyman boundaries), with a word on each boundary.`,
    });
    items.push({
      title: 'Interaction',
      detail: spec.exposure.type === 'continuous'
        ? `The change in the slope of ${spec.exposure.column} per unit of ${spec.modifier.column}; an omnibus test of the product term. Additive measures do not apply to a dose.`
        : ratio
        ? `The ratio of ${measureName}s per unit of ${spec.modifier.column}; RERI, AP and S for one standard deviation above the mean; an omnibus test of the product term.`
        : `The change in the mean difference per unit of ${spec.modifier.column} and for one standard deviation above the mean; an F test of the product term.`,
    });
  }
  items.push(...extrasComputation(spec));
  if (spec.ci.method === 'bootstrap') {
    items.push({
      title: 'Bootstrap',
      detail: `${(spec.ci.replicates ?? DEFAULT_REPLICATES).toLocaleString('en-GB')} resamples with seed ${spec.ci.seed ?? DEFAULT_SEED}; each refits the model, so this step takes the longest. The same seed reproduces the same intervals.`,
    });
  }
  items.push({
    title: 'Predicted outcome',
    detail: 'For the profile plot, with continuous covariates held at their means and categorical ones at their most common level; the plot and the download say so.',
  });
  items.push({ title: 'Power', detail: `The smallest interaction these data could detect with ${percentText(spec.planning?.power ?? 0.8)} % power, and the power for an interaction ${spec.planning?.interaction === undefined ? 'as large as the main effect' : 'of the size set here'}.` });
  return items;
}
