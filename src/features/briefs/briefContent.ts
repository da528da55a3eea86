/**
 * What a brief says, built from the signed-off run alone (its result, specification and
 * provenance) plus the analyst's title, summary, plot choice and own cautions. Every count
 * passes through the suppression plan (briefCounts.ts), so the page, the PDF, the CSV-like
 * texts and the e-mail, which all render this content, print no count of 1 to
 * threshold − 1. The key table follows Knol and VanderWeele (Int J Epidemiol
 * 2012;41:514-520) through the results page's own builder (buildResultTables).
 */
import { doseSlopeRows, doseTrendMethods, trendSentence } from './briefDoseTrend';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { RESULT_CAUTIONS } from '@/lib/cautions';
import { dateTimeInWords } from '@/lib/dates';
import { MODEL_LABEL } from '../analyses/specRules';
import { percentText } from '../analyses/specWords';
import { personTimeUnit, varianceName } from '../runs/clusterRateWeightView';
import { formatNumber, intervalCell } from '../runs/resultFormat';
import { buildResultTables } from '../runs/resultTables';
import { absoluteMethodsSentences, briefAbsolute, briefEValues, type BriefAbsolute, type BriefEValues } from './briefAbsolute';
import { briefCounts, cellId, countText, isPublished, isSmallStratum, type BriefCounts } from './briefCounts';
import { smallCountText } from './suppression';

export type PlotChoice = 'forest' | 'modifier' | 'none';

export interface BriefInput {
  title: string;
  summary: string;
  plot: PlotChoice;
  ownCautions: readonly string[];
}

export interface BriefFacts {
  analysisTitle: string;
  question: string;
  initiative: { name: string; organisation: string; description: string };
  runId: string;
  extract: { name: string; version: number; sha256: string };
  engineVersion: string;
  seed: number | null;
  specHash: string;
  prespecifiedAt: string | null;
  exploratory: boolean;
  analysesInInitiative: number;
  signOff: { by: string; at: string; meaning: string } | null;
  threshold: number;
}

export interface PlotPoint { label: string; estimate: number; lower: number; upper: number; hover: string; small: boolean }
export interface BriefPlot { kind: 'forest' | 'modifier'; title: string; axisLabel: string; nullValue: number; logScale: boolean; points: PlotPoint[]; caption: string }

export interface KeyRow {
  level: string;
  isReference: boolean;
  small: boolean;
  cells: { exposure: string; n: string; events: string | null; outcome: string; effect: string }[];
  within: { effect: string; p: string; n: string; events: string | null };
  reri: string;
  ratioOfRatios: string;
}

export interface BriefContent {
  title: string;
  summary: string;
  analysisTitle: string;
  question: string;
  threshold: number;
  measureName: string;
  ciLabel: string;
  exposure: { column: string; reference: string; level: string };
  modifier: { column: string; type: 'categorical' | 'continuous' };
  outcomeLabel: string;
  keyTable: { referenceLabel: string; rows: KeyRow[] } | null;
  /** Continuous modifiers: the effect at the marked points (named values or percentiles). */
  slopes: { label: string; at: string; effect: string; p: string }[] | null;
  /** Continuous modifiers: where the effect is distinguishable from none and where the data are thin, in one sentence. */
  effectRange: string | null;
  /** Standardized absolute effects (binary outcomes, when the run asked for them). */
  absolute: BriefAbsolute | null;
  eValues: BriefEValues | null;
  interactionTest: string;
  adjustment: string[];
  plot: BriefPlot | null;
  methods: string;
  limitations: string[];
  /** "How credible is the subgroup claim": the overall rating and its reasons in words (credibility/credibilityWords.ts); absent in versions published before it existed. */
  credibility?: string | null;
  signOff: { by: string; at: string; meaning: string } | null;
  cautions: string[];
  ownCautions: string[];
  smallCellNote: string;
  provenance: { runId: string; extract: string; extractSha256: string; engineVersion: string; seed: number | null; specHash: string };
}

/** Dates in the brief's sentences: "2 December 2026 at 09:14 UTC". */
const utc = (iso: string) => dateTimeInWords(iso);

/** The brief's content; throws when the result has nothing to publish. */
export function buildBriefContent(result: Result, spec: Spec, facts: BriefFacts, input: BriefInput): BriefContent {
  const tables = buildResultTables(result, spec);
  const counts = briefCounts(result, facts.threshold);
  const binary = result.outcome.type === 'binary';
  const small = smallCountText(facts.threshold);

  let keyTable: BriefContent['keyTable'] = null;
  if (tables.joint) {
    keyTable = {
      referenceLabel: tables.joint.referenceLabel,
      rows: tables.joint.rows.map((row) => {
        const interaction = tables.interaction.find((entry) => entry.level === row.level);
        return {
          level: row.level,
          isReference: row.isReference,
          small: isSmallStratum(counts, row.level),
          cells: row.cells.map((cell) => {
            const nId = cellId.arm('n', row.level, cell.exposure);
            const eId = cellId.arm('e', row.level, cell.exposure);
            // A percentage is published only when its numerator and denominator both are.
            const outcomeShown = binary ? isPublished(counts, nId) && isPublished(counts, eId) : true;
            return {
              exposure: cell.exposure,
              n: countText(counts, nId),
              events: binary ? countText(counts, eId) : null,
              outcome: outcomeShown ? cell.outcome.text : 'withheld',
              effect: cell.effect?.text ?? '1 (reference)',
            };
          }),
          within: {
            effect: row.within.effect.text,
            p: row.within.p.text,
            n: countText(counts, cellId.stratum('n', row.level)),
            events: binary ? countText(counts, cellId.stratum('e', row.level)) : null,
          },
          reri: row.isReference ? '—' : (interaction?.reri?.text ?? '—'),
          ratioOfRatios: row.isReference ? '—' : (interaction?.multiplicative?.text ?? '—'),
        };
      }),
    };
  }
  const slopes = tables.continuous
    ? tables.continuous.slopes.map((slope) => ({ label: slope.label, at: slope.at.text, effect: slope.effect.text, p: slope.p.text }))
    : doseSlopeRows(result)?.map((row) => ({ at: '', ...row })) ?? null;
  const omnibus = `${tables.omnibus.label}: ${tables.omnibus.statistic.text} on ${tables.omnibus.df}, p ${tables.omnibus.p.text.startsWith('<') ? tables.omnibus.p.text : `= ${tables.omnibus.p.text}`}.` +
    trendSentence(result) + (result.additiveNote ? ` ${result.additiveNote}` : '');

  return {
    title: input.title.trim(),
    summary: input.summary.trim(),
    analysisTitle: facts.analysisTitle,
    question: facts.question,
    threshold: facts.threshold,
    measureName: tables.measure.name,
    ciLabel: tables.ciLabel,
    exposure: tables.exposure,
    modifier: { column: tables.modifier.column, type: tables.modifier.type },
    outcomeLabel: binary ? 'risk' : 'mean',
    keyTable,
    slopes,
    effectRange: tables.continuous ? [tables.continuous.johnsonNeyman, ...tables.continuous.boundaries].filter((text): text is string => Boolean(text)).join(' ') : null,
    absolute: briefAbsolute(result, counts, tables.ciLabel),
    eValues: briefEValues(result),
    interactionTest: omnibus,
    adjustment: tables.covariates.map((covariate) => covariate.text),
    plot: buildPlot(result, tables, counts, input.plot),
    methods: methodsParagraph(result, spec, facts, counts),
    limitations: limitations(result, facts, counts),
    signOff: facts.signOff ? { ...facts.signOff, at: utc(facts.signOff.at) } : null,
    cautions: [...RESULT_CAUTIONS],
    ownCautions: input.ownCautions.map((text) => text.trim()).filter((text) => text.length > 0),
    smallCellNote:
      `Counts from 1 to ${facts.threshold - 1} are shown as "${small}"; a count shown as "withheld" is hidden so that no small count can be worked out from totals, ` +
      'other cells or percentages. Estimates from small strata are shown with a caution beside them.',
    provenance: {
      runId: facts.runId, extract: `${facts.extract.name}, version ${facts.extract.version}`, extractSha256: facts.extract.sha256,
      engineVersion: facts.engineVersion, seed: facts.seed, specHash: facts.specHash,
    },
  };
}

function buildPlot(result: Result, tables: ReturnType<typeof buildResultTables>, counts: BriefCounts, choice: PlotChoice): BriefPlot | null {
  if (choice === 'none') return null;
  const measure = tables.measure;
  if (choice === 'forest' && result.modifier.type === 'categorical') {
    const points: PlotPoint[] = [];
    // A dose has no joint table: its effect per unit within each level comes from the strata.
    const within = tables.joint
      ? tables.joint.rows.map((row) => ({ level: row.level, effect: row.within.effect }))
      : result.strata.map((stratum) => ({ level: stratum.level, effect: intervalCell(stratum.effect, measure.kind) }));
    for (const row of within) {
      const { estimate, lower, upper } = row.effect;
      if (estimate === null || lower === null || upper === null) continue;
      const level = row.level;
      const smallStratum = isSmallStratum(counts, level);
      points.push({
        label: level, estimate, lower, upper, small: smallStratum,
        hover: `${result.modifier.column} = ${level}: ${measure.name} ${row.effect.text}; ${countText(counts, cellId.stratum('n', level))} people` +
          (smallStratum ? '; small stratum, read with caution' : ''),
      });
    }
    return {
      kind: 'forest', title: `The intervention's effect within each stratum of ${result.modifier.column}`,
      axisLabel: `${measure.name} ${result.exposure.type === 'continuous' ? `per unit of ${result.exposure.column}` : `of ${result.exposure.column} = ${result.exposure.level} vs ${result.exposure.reference}`} (${tables.ciLabel})`,
      nullValue: measure.nullValue, logScale: measure.ratio, points,
      caption: `Each row is a stratum of ${result.modifier.column}: the point is the ${measure.name} within it and the line its ${tables.ciLabel}. ` +
        points.map((point) => point.hover).join('. ') + '.',
    };
  }
  if (choice === 'modifier' && tables.continuous) {
    const points: PlotPoint[] = tables.continuous.slopes.flatMap((slope) => {
      const { estimate, lower, upper } = slope.effect;
      if (estimate === null || lower === null || upper === null) return [];
      return [{ label: `${slope.label} (${slope.at.text})`, estimate, lower, upper, small: false, hover: `${result.modifier.column} = ${slope.at.text}: ${measure.name} ${slope.effect.text}` }];
    });
    return {
      kind: 'modifier', title: `The intervention's effect across ${result.modifier.column}`,
      axisLabel: `${measure.name} ${result.exposure.type === 'continuous' ? `per unit of ${result.exposure.column}` : `of ${result.exposure.column} = ${result.exposure.level} vs ${result.exposure.reference}`} (${tables.ciLabel})`,
      nullValue: measure.nullValue, logScale: measure.ratio, points,
      caption: `The intervention's effect at the marked points of ${result.modifier.column}, from one model with a product term. ` +
        points.map((point) => point.hover).join('. ') + '.' + (tables.continuous.johnsonNeyman ? ` ${tables.continuous.johnsonNeyman}` : ''),
    };
  }
  return null;
}

/** The methods paragraph, from the specification and the run's provenance. */
export function methodsParagraph(result: Result, spec: Spec, facts: BriefFacts, counts: BriefCounts): string {
  const model = MODEL_LABEL[result.model.family];
  const covariates = result.covariates.length === 0 ? 'no covariates' : `adjustment for ${result.covariates.map((c) => c.column).join(', ')}`;
  const method = spec.ci.method === 'bootstrap' ? 'percentile bootstrap' : spec.ci.method === 'mover' ? 'MOVER' : 'delta-method';
  const declared = facts.prespecifiedAt
    ? `The analysis was declared prespecified on ${utc(facts.prespecifiedAt)}${facts.exploratory ? ', but the extract version was uploaded after that declaration, so this run counts as exploratory' : ''}.`
    : facts.exploratory
      ? 'The analysis was not declared in advance, and its modifier was not on the initiative\'s register of prespecified modifiers before the data; it is exploratory.'
      : 'The modifier was on the initiative\'s register of prespecified modifiers before the data were uploaded, so this run counts as planned.';
  const strata = result.modifier.type === 'categorical'
    ? `${result.strata.length} strata of ${result.modifier.column} were examined`
    : `${result.modifier.column} was treated as continuous (one product term)`;
  const examined = `${strata}; this initiative has defined ${facts.analysesInInitiative} ${facts.analysesInInitiative === 1 ? 'analysis' : 'analyses'} so far.`;
  return [
    `A ${model.toLowerCase()} of ${result.outcome.column} on ${result.exposure.column}, ${result.modifier.column} and their product, with ${covariates}, ` +
      `was fitted to ${countText(counts, 'n')} rows. Intervals are ${percentText(result.ciLevel)} % ${method} intervals; the effect measure is the ${measureWords(result)}.`,
    ...clusterRateWeightMethods(result),
    declared,
    examined,
    ...absoluteMethodsSentences(result),
    ...doseTrendMethods(result),
    `Data: ${facts.extract.name}, version ${facts.extract.version} (SHA-256 ${facts.extract.sha256}). Engine ${facts.engineVersion}` +
      `${facts.seed !== null ? `, seed ${facts.seed}` : ''}; specification hash ${facts.specHash.slice(0, 16)}.`,
  ].join(' ');
}

/**
 * The variance (cluster-robust CR1 of Liang and Zeger, Biometrika 1986;73:13-22, or robust
 * HC0), the rate model's offset and the frequency weights, for the methods paragraph. A
 * number of clusters of 10 or fewer is not printed (briefs print no count from 1 to 10).
 */
function clusterRateWeightMethods(result: Result): string[] {
  const out: string[] = [];
  const clustering = result.clustering ?? null;
  if (clustering) {
    const count = clustering.clusters > 10 ? String(clustering.clusters) : 'fewer than 11';
    out.push(`Standard errors are ${varianceName(result)}, with ${count} clusters of ${clustering.column}, and every interval uses them${clustering.clusters < 30 ? '; with fewer than 30 clusters they tend to be too small' : ''}.`);
  } else if (result.model.standardErrors === 'HC0' && result.model.family === 'poisson') out.push('Standard errors are robust (HC0 sandwich).');
  const rates = result.rates ?? null;
  if (rates) {
    const offset = rates.personTimeColumn ? ` with the logarithm of ${rates.personTimeColumn} (${personTimeUnit(rates)}) as offset, so effects are rate ratios and rates are given per 1,000 ${personTimeUnit(rates)}` : '';
    const ratio = rates.overdispersion.ratio;
    out.push(`Counts were modelled by Poisson regression${offset}; overdispersion was checked by Pearson χ²/df (${ratio === null ? 'not estimable' : ratio.toFixed(2)}${ratio !== null && ratio > 1.5 ? ', above 1.5' : ''}).`);
  }
  if (result.weights) out.push(`Each row of the extract was weighted by ${result.weights.column} (frequency weights), so every count and interval is that of the units the rows stand for.`);
  return out;
}

function measureWords(result: Result): string {
  if (result.outcome.type === 'count' && result.effectMeasure === 'RR') return 'rate ratio';
  return { OR: 'odds ratio', RR: 'risk ratio', RD: 'risk difference', MD: 'mean difference' }[result.effectMeasure];
}

/** The limitations (SQUIRE 2.0): context, data completeness, a common outcome under odds ratios. */
export function limitations(result: Result, facts: BriefFacts, counts: BriefCounts): string[] {
  const out: string[] = [];
  const context = facts.initiative.description.trim();
  out.push(`Context: ${facts.initiative.name} (${facts.initiative.organisation}).${context ? ` ${context}` : ''} The findings describe this setting and period and may not carry over to others.`);
  out.push(result.dropped === 0
    ? 'Data completeness: every row of the extract version had the analysis columns filled in; none was left out.'
    : `Data completeness: ${countText(counts, 'dropped')} rows were left out because a value in an analysis column was missing; if those rows differ from the rest, the estimates may be biased.`);
  if (result.effectMeasure === 'OR' && result.outcome.type === 'binary') {
    const risk = result.n > 0 && result.outcome.events !== null ? result.outcome.events / result.n : null;
    const common = (risk !== null && risk > 0.1) || result.warnings.some((warning) => warning.code === 'COMMON_OUTCOME_OR_RERI');
    const riskText = risk !== null && isPublished(counts, 'e') ? ` (overall ${formatNumber(risk, 'percent')})` : '';
    out.push(common
      ? `The outcome is common${riskText}, so odds ratios overstate the corresponding risk ratios, and a RERI computed from odds ratios only approximates the one on the risk scale.`
      : `The outcome is uncommon${riskText}, so odds ratios approximate risk ratios.`);
  }
  if (result.modifier.type === 'categorical' && result.strata.some((stratum) => isSmallStratum(counts, stratum.level))) {
    out.push('Some strata are small: their estimates are imprecise and are marked in the table.');
  }
  out.push(`Observational data: the modifier may stand in for something else, and unmeasured confounding cannot be ruled out.`);
  return out;
}

/** The plain-text summary for the e-mail and the document subject. */
export function briefSynopsis(content: BriefContent): string {
  return `${content.summary}\n\n${content.interactionTest}`;
}
