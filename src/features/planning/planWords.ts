/** The plan in words, for the Plan tab, the results page and the brief (pure). */
import { DIRECTION_LABEL, PLAN_MEASURE_LABEL, type PlanInputs, type PlanStandingView, type RegisterEntryView } from './planning.schema';

export const percent = (value: number) => `${(value * 100).toFixed(1)} %`;
export const rows = (count: number) => `${count.toLocaleString('en-GB')} ${count === 1 ? 'row' : 'rows'}`;
const trim = (value: number) => String(Number(value.toPrecision(4)));

/** One sentence stating a plan's figures. */
export function describeInputs(inputs: PlanInputs): string {
  const design = `${percent(inputs.allocation)} in the intervention arm, ${percent(inputs.modifierPrevalence)} with the modifier, alpha ${trim(inputs.alpha)}`;
  if (inputs.outcome.type === 'continuous') {
    return `A measured outcome (SD ${trim(inputs.outcome.sd)}), main effect ${trim(inputs.mainEffect.value)}, looking for a difference in mean differences of ${trim(inputs.interaction.value)}; ${design}.`;
  }
  const main = inputs.mainEffect.measure === 'risk-ratio' ? `risk ratio ${trim(inputs.mainEffect.value)}` : `risk difference ${trim(inputs.mainEffect.value)}`;
  return `Baseline risk ${percent(inputs.outcome.baselineRisk)}, main effect ${main}, looking for a ${PLAN_MEASURE_LABEL[inputs.interaction.measure].toLowerCase().replace('reri (relative excess risk due to interaction)', 'RERI')} of ${trim(inputs.interaction.value)}; ${design}.`;
}

/** A register entry's prediction in words. */
export function predictionText(entry: RegisterEntryView): string {
  const outcome = entry.outcomeColumn ? ` on “${entry.outcomeColumn}”` : '';
  if (entry.direction === 'none') return `“${entry.modifierColumn}”${outcome}: no direction predicted.`;
  return `“${entry.modifierColumn}”${outcome}: ${DIRECTION_LABEL[entry.direction].toLowerCase()} ${entry.where ? `in ${entry.where}` : ''}`.trim() + '.';
}

/** The standing of a run against the register and the plan, in one or two sentences. */
export function standingText(standing: PlanStandingView): string[] {
  const lines: string[] = [];
  if (standing.status === 'planned' && standing.entry) {
    lines.push(`Planned: registered ${standing.entry.registeredAt.slice(0, 10)} by ${standing.entry.registeredBy.name}, before the data. Predicted: ${predictionText(standing.entry)}`);
  } else {
    lines.push(`Exploratory: ${standing.reason}`);
  }
  const plan = standing.plan;
  if (plan && plan.actualRows !== null && plan.powerAtActual !== null) {
    const verdict = plan.powered ? 'enough for 80 % power' : 'short of 80 % power';
    lines.push(`The plan asked for ${rows(plan.plannedRows)} (80 % power needs ${rows(plan.rowsFor80)}) to detect a ${PLAN_MEASURE_LABEL[plan.measure].toLowerCase().replace('reri (relative excess risk due to interaction)', 'RERI')} of ${trim(plan.size)}; this run used ${rows(plan.actualRows)}: power ${percent(plan.powerAtActual)}, ${verdict} for the interaction it looks for.`);
  }
  return lines;
}
