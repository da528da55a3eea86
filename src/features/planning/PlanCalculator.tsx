/**
 * The initiative's planning calculator (Plan tab): the baseline, the expected main effect,
 * the interaction worth detecting, the allocation, the modifier's prevalence and alpha
 * give the rows needed for 80 % and 90 % power and the power at a given number of rows
 * (closed form), and on request the engine's seeded simulation at those rows. Analysts
 * save the figures as the initiative's plan; every member may calculate.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type SubmitEvent } from 'react';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { apiFetch } from '@/lib/client/api';
import { errorText } from '@/lib/client/errorText';
import { PLAN_MEASURE_LABEL, type PlanFiguresView, type PlanInputs, type SavedPlanView } from './planning.schema';
import { describeInputs, percent, rows as rowsText } from './planWords';

interface Props {
  initiativeId: string;
  canSave: boolean;
}

interface Draft {
  outcome: 'binary' | 'continuous';
  baselineRisk: string;
  modifierRiskRatio: string;
  mean: string;
  sd: string;
  mainMeasure: 'risk-ratio' | 'risk-difference';
  mainValue: string;
  interactionMeasure: 'ratio-of-ratios' | 'reri' | 'risk-difference-difference';
  interactionValue: string;
  continuousMain: string;
  continuousInteraction: string;
  allocation: string;
  prevalence: string;
  alpha: string;
  rows: string;
  note: string;
}

const START: Draft = {
  outcome: 'binary', baselineRisk: '0.2', modifierRiskRatio: '1', mean: '0', sd: '1', mainMeasure: 'risk-ratio', mainValue: '0.75',
  interactionMeasure: 'ratio-of-ratios', interactionValue: '0.7', continuousMain: '0.3', continuousInteraction: '0.3',
  allocation: '0.5', prevalence: '0.3', alpha: '0.05', rows: '', note: '',
};

const number = (text: string) => (text.trim() === '' ? Number.NaN : Number(text));

function inputsOf(draft: Draft): PlanInputs {
  const common = { allocation: number(draft.allocation), modifierPrevalence: number(draft.prevalence), alpha: number(draft.alpha) };
  if (draft.outcome === 'continuous') {
    return {
      ...common,
      outcome: { type: 'continuous', mean: number(draft.mean), sd: number(draft.sd) },
      mainEffect: { measure: 'mean-difference', value: number(draft.continuousMain) },
      interaction: { measure: 'mean-difference-difference', value: number(draft.continuousInteraction) },
    };
  }
  return {
    ...common,
    outcome: { type: 'binary', baselineRisk: number(draft.baselineRisk), modifierRiskRatio: number(draft.modifierRiskRatio) },
    mainEffect: { measure: draft.mainMeasure, value: number(draft.mainValue) },
    interaction: { measure: draft.interactionMeasure, value: number(draft.interactionValue) },
  };
}

function Field({ id, label, value, onChange, hint }: { id: string; label: string; value: string; onChange: (value: string) => void; hint?: string }) {
  return (
    <div className="grid gap-1">
      <label className="field-label" htmlFor={id}>{label}</label>
      <input id={id} inputMode="decimal" className="field-input" value={value} onChange={(e) => onChange(e.target.value)} aria-describedby={hint ? `${id}-hint` : undefined} />
      {hint && <p id={`${id}-hint`} className="text-xs text-ink-500">{hint}</p>}
    </div>
  );
}

function Figures({ figures, rows }: { figures: PlanFiguresView; rows: number | null }) {
  const closed = figures.closedForm;
  return (
    <div className="grid gap-3" data-testid="plan-figures" aria-live="polite">
      <div className="rounded border border-linen-300 bg-white p-4">
        <p className="eyebrow">Closed form (normal approximation)</p>
        <p className="text-lg mt-1"><strong data-testid="plan-rows-80">{rowsText(closed.rowsFor80)}</strong> for 80 % power · <strong data-testid="plan-rows-90">{rowsText(closed.rowsFor90)}</strong> for 90 %</p>
        {closed.powerAtRows !== null && rows !== null && (
          <p className="text-sm mt-1" data-testid="plan-power-at">With {rowsText(rows)}: power {percent(closed.powerAtRows)}.</p>
        )}
        <p className="text-sm text-ink-700 mt-2">
          This interaction needs about <strong>{closed.relativeToMainEffect.toFixed(1)} times</strong> the rows that a main effect of the same size would.
          An interaction is estimated from four groups where a main effect is estimated from two; with equal arms and an even modifier, an interaction as large as the main effect needs about four times the sample (Brookes et al., J Clin Epidemiol 2004).
        </p>
      </div>
      {figures.simulation && (
        <div className="rounded border border-linen-300 bg-linen-50 p-4" data-testid="plan-simulation">
          <p className="eyebrow">Simulation (the engine's, seeded)</p>
          <p className="text-sm mt-1">
            Of {figures.simulation.replicates.toLocaleString('en-GB')} data sets of {rowsText(figures.simulation.rows)} drawn from these figures (seed {figures.simulation.seed}),
            the interaction test rejected in <strong>{percent(figures.simulation.power)}</strong> (Monte Carlo error ± {percent(figures.simulation.monteCarloError)}).
            {figures.simulation.untestable > 0 && ` ${figures.simulation.untestable} could not be tested (an empty group) and count as not rejecting.`}
          </p>
        </div>
      )}
    </div>
  );
}

function Calculator({ initiativeId, canSave }: Props) {
  const base = `/api/initiatives/${initiativeId}/plan`;
  const client = useQueryClient();
  const [draft, setDraft] = useState<Draft>(START);
  const set = (change: Partial<Draft>) => setDraft((current) => ({ ...current, ...change }));
  const rows = draft.rows.trim() === '' ? null : Number(draft.rows);
  const plans = useQuery({ queryKey: ['plan', initiativeId], queryFn: () => apiFetch<{ current: SavedPlanView | null; history: SavedPlanView[] }>(base) });
  const check = useMutation({
    mutationFn: (simulate: boolean) => apiFetch<PlanFiguresView>(`${base}/check`, { method: 'POST', body: { inputs: inputsOf(draft), ...(rows !== null ? { rows } : {}), simulate } }),
  });
  const save = useMutation({
    mutationFn: () => apiFetch<{ current: SavedPlanView | null; history: SavedPlanView[] }>(base, { method: 'PUT', body: { inputs: inputsOf(draft), plannedRows: rows ?? check.data?.closedForm.rowsFor80 ?? 0, note: draft.note } }),
    onSuccess: (data) => client.setQueryData(['plan', initiativeId], data),
  });
  const onSubmit = (event: SubmitEvent<HTMLFormElement>) => { event.preventDefault(); check.mutate(false); };
  const current = plans.data?.current ?? null;
  return (
    <div className="grid gap-6 lg:grid-cols-2">
      <form onSubmit={onSubmit} className="grid gap-3 content-start" aria-labelledby="calculator-heading">
        <h2 id="calculator-heading" className="text-lg">Sample for the interaction</h2>
        <HydratedFieldset>
          <fieldset className="grid gap-1">
            <legend className="field-label">Outcome</legend>
            <div className="flex gap-4 text-sm">
              <label className="flex items-center gap-1.5"><input type="radio" name="plan-outcome" checked={draft.outcome === 'binary'} onChange={() => set({ outcome: 'binary' })} /> Yes/no (a risk)</label>
              <label className="flex items-center gap-1.5"><input type="radio" name="plan-outcome" checked={draft.outcome === 'continuous'} onChange={() => set({ outcome: 'continuous' })} /> A measurement (a mean)</label>
            </div>
          </fieldset>
          {draft.outcome === 'binary' ? (
            <>
              <Field id="plan-baseline" label="Baseline risk (comparison arm, without the modifier)" value={draft.baselineRisk} onChange={(v) => set({ baselineRisk: v })} hint="Between 0 and 1, e.g. 0.2 for 20 %." />
              <Field id="plan-modifier-rr" label="Risk with the modifier, relative to without (comparison arm)" value={draft.modifierRiskRatio} onChange={(v) => set({ modifierRiskRatio: v })} hint="1 when the modifier does not change the baseline risk." />
              <div className="grid gap-1">
                <label className="field-label" htmlFor="plan-main-measure">Expected main effect (without the modifier), as</label>
                <select id="plan-main-measure" className="field-input" value={draft.mainMeasure} onChange={(e) => set({ mainMeasure: e.target.value === 'risk-difference' ? 'risk-difference' : 'risk-ratio' })}>
                  <option value="risk-ratio">a risk ratio</option><option value="risk-difference">a risk difference</option>
                </select>
              </div>
              <Field id="plan-main" label="Expected main effect" value={draft.mainValue} onChange={(v) => set({ mainValue: v })} />
              <div className="grid gap-1">
                <label className="field-label" htmlFor="plan-interaction-measure">Interaction worth detecting, as</label>
                <select id="plan-interaction-measure" className="field-input" value={draft.interactionMeasure}
                  onChange={(e) => set({ interactionMeasure: e.target.value === 'reri' ? 'reri' : e.target.value === 'risk-difference-difference' ? 'risk-difference-difference' : 'ratio-of-ratios' })}>
                  {(['ratio-of-ratios', 'reri', 'risk-difference-difference'] as const).map((m) => <option key={m} value={m}>{PLAN_MEASURE_LABEL[m]}</option>)}
                </select>
              </div>
              <Field id="plan-interaction" label="Interaction worth detecting" value={draft.interactionValue} onChange={(v) => set({ interactionValue: v })} />
            </>
          ) : (
            <>
              <Field id="plan-mean" label="Mean in the comparison arm" value={draft.mean} onChange={(v) => set({ mean: v })} />
              <Field id="plan-sd" label="Standard deviation" value={draft.sd} onChange={(v) => set({ sd: v })} />
              <Field id="plan-main-md" label="Expected main effect (difference in means, without the modifier)" value={draft.continuousMain} onChange={(v) => set({ continuousMain: v })} />
              <Field id="plan-interaction-md" label="Interaction worth detecting (difference in mean differences)" value={draft.continuousInteraction} onChange={(v) => set({ continuousInteraction: v })} />
            </>
          )}
          <Field id="plan-allocation" label="Share in the intervention arm" value={draft.allocation} onChange={(v) => set({ allocation: v })} hint="0.5 for equal arms." />
          <Field id="plan-prevalence" label="Share with the modifier" value={draft.prevalence} onChange={(v) => set({ prevalence: v })} />
          <Field id="plan-alpha" label="Alpha (two-sided)" value={draft.alpha} onChange={(v) => set({ alpha: v })} />
          <Field id="plan-rows" label="Rows you expect to have (optional)" value={draft.rows} onChange={(v) => set({ rows: v })} hint="Gives the power at that number of rows, and is the planned rows when you save." />
          <div className="flex flex-wrap gap-2">
            <button type="submit" className="btn btn-primary" disabled={check.isPending}>Calculate</button>
            <button type="button" className="btn btn-secondary" disabled={check.isPending} onClick={() => check.mutate(true)}>Calculate and simulate</button>
          </div>
        </HydratedFieldset>
        {check.isPending && <p className="text-sm text-ink-500" role="status">Calculating…</p>}
        {check.error && <p role="alert" className="field-error">{errorText(check.error)}</p>}
      </form>
      <div className="grid gap-4 content-start">
        {check.data ? <Figures figures={check.data} rows={rows} /> : <p className="text-sm text-ink-500">Enter the figures and choose Calculate.</p>}
        {canSave && check.data && (
          <div className="grid gap-2">
            <label className="field-label" htmlFor="plan-note">Note with the plan (optional)</label>
            <textarea id="plan-note" rows={2} className="field-input" value={draft.note} onChange={(e) => set({ note: e.target.value })} />
            <div><button type="button" className="btn btn-secondary" disabled={save.isPending} onClick={() => save.mutate()}>Save as the initiative's plan</button></div>
            {save.isSuccess && <p className="text-sm text-estuary-700" role="status">Saved. Runs now show planned against actual rows.</p>}
            {save.error && <p role="alert" className="field-error">{errorText(save.error)}</p>}
          </div>
        )}
        <section aria-labelledby="plan-current-heading" className="rounded border border-linen-300 p-4" data-testid="plan-current">
          <h3 id="plan-current-heading" className="font-semibold">The plan in force</h3>
          {plans.isPending ? <p className="text-sm text-ink-500">Loading…</p> : current ? (
            <div className="text-sm grid gap-1 mt-1">
              <p>{describeInputs(current.inputs)}</p>
              <p>Planned rows: <strong>{rowsText(current.plannedRows)}</strong>; 80 % power needs {rowsText(current.figures.closedForm.rowsFor80)}.</p>
              <p className="text-ink-500">Saved by {current.savedBy.name}, {current.savedAt.slice(0, 16).replace('T', ' ')} UTC.{current.note && ` “${current.note}”`}</p>
              {(plans.data?.history.length ?? 0) > 0 && <p className="text-ink-500">{plans.data?.history.length} earlier plan(s) kept.</p>}
            </div>
          ) : <p className="text-sm text-ink-500 mt-1">No plan saved yet.{canSave ? ' Calculate, then save.' : ''}</p>}
        </section>
      </div>
    </div>
  );
}

export default function PlanCalculator(props: Props) {
  return <QueryRoot><Calculator {...props} /></QueryRoot>;
}
