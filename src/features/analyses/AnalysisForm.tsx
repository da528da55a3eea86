/**
 * The analysis form island: the question in plain words and the specification through
 * choices drawn from the extract's confirmed dictionary, with the model equation and a
 * summary of what will be computed shown live. It saves through the API (POST
 * /api/analyses, or PATCH /api/analyses/{id} when editing) and then goes to the analysis.
 */
import { useMutation } from '@tanstack/react-query';
import { useId, useMemo, useState, type ReactNode, type SubmitEvent } from 'react';
import type { Spec } from '../../engine/boundary/schemas';
import { ApiError, apiFetch } from '../../lib/client/api';
import { useHydrated } from '../../lib/client/useHydrated';
import { QueryRoot } from '../../components/ui/QueryRoot';
import { ModelEquationView } from './ModelEquationView';
import type { FormColumn } from './formColumns';
import { modelEquation } from './modelEquation';
import { defaultDraft, formChoices, reviseDraft, specToDraft, type AnalysisDraft, type ColumnChoice, type SpecDraft } from './specForm';
import { CI_METHOD_LABEL, MEASURE_LABEL, MODEL_LABEL, MULTIPLICITY_LABEL } from './specRules';
import { draftToSpec, fieldForServerPath, validateAnalysis, type FieldErrors } from './specValidation';
import { computationSummary, specInWords } from './specWords';

export interface ExistingAnalysis {
  id: string;
  title: string;
  question: string;
  prespecified: boolean;
  /** When the analysis was declared prespecified (ISO time), if it was. */
  prespecifiedAt?: string | null;
  spec: Spec;
}

export interface AnalysisFormProps {
  initiativeId: string;
  extractVersionId: string;
  /** The confirmed dictionary with levels: formColumns(dictionary, profile). */
  columns: FormColumn[];
  existing?: ExistingAnalysis;
  /** Where to go after saving; "{id}" is replaced by the analysis id. Default "/analyses/{id}". */
  onSavedHref?: string;
}

const TYPE_LABEL: Record<FormColumn['type'], string> = { binary: 'binary', categorical: 'categorical', continuous: 'continuous', count: 'count' };

function formatWhen(value: string): string {
  return new Date(value).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short', timeZone: 'UTC' }) + ' UTC';
}

/** A labelled field with its hint and its message, wired for screen readers. */
function Field({
  id,
  label,
  hint,
  error,
  children,
  className = '',
}: {
  id: string;
  label: string;
  hint?: ReactNode;
  error?: string;
  children: (describedBy: string | undefined, invalid: boolean) => ReactNode;
  className?: string;
}) {
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className={className}>
      <label className="field-label" htmlFor={id}>
        {label}
      </label>
      {children(describedBy, Boolean(error))}
      {hint && (
        <p id={hintId} className="mt-1 text-xs text-ink-500">
          {hint}
        </p>
      )}
      {error && (
        <p id={errorId} className="field-error" data-field-error={id}>
          {error}
        </p>
      )}
    </div>
  );
}

/** A select of a column's levels (a reference level, the event level), with an optional first "choose" entry. */
function LevelSelect({
  id, value, levels, placeholder, disabled, describedBy, invalid, onChange,
}: {
  id: string;
  value: string;
  levels: readonly string[];
  placeholder?: string;
  disabled?: boolean;
  describedBy: string | undefined;
  invalid: boolean;
  onChange: (value: string) => void;
}) {
  return (
    <select id={id} className="field-input" value={value} disabled={disabled} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => onChange(e.target.value)}>
      {placeholder !== undefined && <option value="">{placeholder}</option>}
      {levels.map((level) => (
        <option key={level} value={level}>
          {level}
        </option>
      ))}
    </select>
  );
}

function ColumnOptions({ choices, placeholder }: { choices: ColumnChoice[]; placeholder: string }) {
  return (
    <>
      <option value="">{placeholder}</option>
      {choices.map((choice) => (
        <option key={choice.name} value={choice.name} disabled={Boolean(choice.disabledReason)} title={choice.description || undefined}>
          {choice.name} · {TYPE_LABEL[choice.type]}
          {choice.disabledReason ? ` (${choice.disabledReason})` : ''}
        </option>
      ))}
    </>
  );
}

function Section({ title, description, children }: { title: string; description?: string; children: ReactNode }) {
  return (
    <fieldset className="card p-5 grid gap-4 min-w-0">
      <legend className="sr-only">{title}</legend>
      <div aria-hidden="true">
        <h2 className="text-lg">{title}</h2>
        {description && <p className="text-sm text-ink-500 mt-0.5">{description}</p>}
      </div>
      {children}
    </fieldset>
  );
}

function Form({ initiativeId, extractVersionId, columns, existing, onSavedHref = '/analyses/{id}' }: AnalysisFormProps) {
  const formId = useId();
  const hydrated = useHydrated();
  const fieldId = (path: string) => `${formId}-${path.replace(/[^\w-]/g, '-')}`;
  const [draft, setDraft] = useState<AnalysisDraft>(() =>
    existing
      ? { title: existing.title, question: existing.question, prespecified: existing.prespecified, spec: specToDraft(existing.spec, columns) }
      : defaultDraft(),
  );
  const [touched, setTouched] = useState<Set<string>>(() => new Set());
  const [submitted, setSubmitted] = useState(false);
  const [serverErrors, setServerErrors] = useState<FieldErrors>({});

  const spec = draft.spec;
  const choices = useMemo(() => formChoices(columns, spec), [columns, spec]);
  const errors = useMemo(() => validateAnalysis(columns, draft), [columns, draft]);
  const converted = useMemo(() => draftToSpec(columns, spec), [columns, spec]);
  const byName = useMemo(() => new Map(columns.map((column) => [column.name, column])), [columns]);

  const shownError = (path: string): string | undefined => serverErrors[path] ?? (submitted || touched.has(path) ? errors[path] : undefined);
  const touch = (path: string) => setTouched((current) => (current.has(path) ? current : new Set(current).add(path)));
  const changeSpec = (change: Partial<SpecDraft>, path: string) => {
    setDraft((current) => ({ ...current, spec: reviseDraft(columns, current.spec, change) }));
    setServerErrors({});
    touch(path);
  };

  const save = useMutation({
    mutationFn: (body: { initiativeId: string; extractVersionId: string; title: string; question: string; prespecified: boolean; spec: Spec }) =>
      existing
        ? apiFetch<{ id?: string }>(`/api/analyses/${encodeURIComponent(existing.id)}`, { method: 'PATCH', body })
        : apiFetch<{ id: string }>('/api/analyses', { method: 'POST', body }),
    onSuccess: (response) => {
      const id = response?.id ?? existing?.id;
      if (id) window.location.assign(onSavedHref.replace('{id}', encodeURIComponent(id)));
    },
    onError: (error, body) => {
      if (!(error instanceof ApiError) || !error.details) return;
      const mapped: FieldErrors = {};
      for (const detail of error.details) mapped[fieldForServerPath(detail.path, body.spec)] = detail.message;
      setServerErrors(mapped);
    },
  });
  const apiError = save.error instanceof ApiError ? save.error : null;
  const unplacedServerErrors = apiError?.details?.filter((detail) => !document.getElementById(fieldId(fieldForServerPath(detail.path)))) ?? [];

  const submit = (event: SubmitEvent<HTMLFormElement>) => {
    event.preventDefault();
    setSubmitted(true);
    if (Object.keys(errors).length > 0 || !converted.ok) {
      const first = Object.keys(errors)[0];
      if (first) document.getElementById(fieldId(first))?.focus();
      return;
    }
    save.mutate({ initiativeId, extractVersionId, title: draft.title.trim(), question: draft.question.trim(), prespecified: draft.prespecified, spec: converted.spec });
  };

  const modifierColumn = byName.get(spec.modifier.column);
  const modifierRange = modifierColumn?.numeric;
  const errorCount = Object.keys(errors).length;
  const equation = converted.ok ? modelEquation(converted.spec, columns) : null;
  const summary = converted.ok ? computationSummary(converted.spec, columns) : [];

  return (
    <form onSubmit={submit} noValidate className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_24rem] items-start" aria-label={existing ? 'Edit analysis' : 'New analysis'} data-testid="analysis-form" data-hydrated={hydrated} aria-busy={!hydrated}>
      {/* Controls stay disabled until the island has hydrated (see useHydrated). */}
      <fieldset disabled={!hydrated} className="contents">
      <div className="grid gap-5 min-w-0">
        <Section title="The question" description="In plain words, as a clinician would ask it.">
          <Field id={fieldId('title')} label="Title" error={shownError('title')}>
            {(describedBy, invalid) => (
              <input
                id={fieldId('title')}
                className="field-input"
                value={draft.title}
                maxLength={200}
                aria-describedby={describedBy}
                aria-invalid={invalid}
                onChange={(e) => {
                  setDraft({ ...draft, title: e.target.value });
                  setServerErrors({});
                }}
                onBlur={() => touch('title')}
              />
            )}
          </Field>
          <Field id={fieldId('question')} label="Question" hint="For example: does the call-back prevent more readmissions in older patients than in younger ones?" error={shownError('question')}>
            {(describedBy, invalid) => (
              <textarea
                id={fieldId('question')}
                className="field-input min-h-24"
                value={draft.question}
                aria-describedby={describedBy}
                aria-invalid={invalid}
                onChange={(e) => {
                  setDraft({ ...draft, question: e.target.value });
                  setServerErrors({});
                }}
                onBlur={() => touch('question')}
              />
            )}
          </Field>
          <div>
            <label className="flex items-start gap-2.5 text-sm" htmlFor={fieldId('prespecified')}>
              <input
                id={fieldId('prespecified')}
                type="checkbox"
                className="mt-1"
                checked={draft.prespecified}
                aria-describedby={`${fieldId('prespecified')}-hint`}
                onChange={(e) => setDraft({ ...draft, prespecified: e.target.checked })}
              />
              <span>
                <span className="font-semibold">Prespecified</span>: this question was set out before the data were examined.
              </span>
            </label>
            <p id={`${fieldId('prespecified')}-hint`} className="mt-1 ml-6 text-xs text-ink-500">
              {existing?.prespecified && existing.prespecifiedAt
                ? `Declared prespecified on ${formatWhen(existing.prespecifiedAt)}. `
                : 'Crossgrain records the time of this declaration when you save. '}
              Runs on extract versions uploaded after that time are labelled exploratory.
            </p>
          </div>
        </Section>

        <Section title="Outcome and intervention">
          <div role="radiogroup" aria-labelledby={`${fieldId('outcome.type')}-label`}>
            <p id={`${fieldId('outcome.type')}-label`} className="field-label">
              Kind of outcome
            </p>
            <div className="flex flex-wrap gap-4 text-sm">
              {(['binary', 'continuous'] as const).map((type) => (
                <label key={type} className="flex items-center gap-2">
                  <input type="radio" name={fieldId('outcome.type')} value={type} checked={spec.outcome.type === type} onChange={() => changeSpec({ outcome: { ...spec.outcome, type } }, 'outcome.type')} />
                  {type === 'binary' ? 'Binary (an event: yes or no)' : 'Continuous or count (a measurement)'}
                </label>
              ))}
            </div>
          </div>
          <div className="grid gap-4 md:grid-cols-2">
            <Field id={fieldId('outcome.column')} label="Outcome" error={shownError('outcome.column')} hint={byName.get(spec.outcome.column)?.description || undefined}>
              {(describedBy, invalid) => (
                <select
                  id={fieldId('outcome.column')}
                  className="field-input"
                  value={spec.outcome.column}
                  aria-describedby={describedBy}
                  aria-invalid={invalid}
                  onChange={(e) => changeSpec({ outcome: { ...spec.outcome, column: e.target.value } }, 'outcome.column')}
                >
                  <ColumnOptions choices={choices.outcomes} placeholder={choices.outcomes.length === 0 ? `No ${spec.outcome.type === 'binary' ? 'binary' : 'continuous or count'} columns` : 'Choose a column'} />
                </select>
              )}
            </Field>
            {choices.eventLevels.length > 0 && (
              <Field id={fieldId('outcome.event')} label="Level that counts as the event" error={shownError('outcome.event')}>
                {(describedBy, invalid) => (
                  <LevelSelect id={fieldId('outcome.event')} value={spec.outcome.event} levels={choices.eventLevels} placeholder="Choose a level" describedBy={describedBy} invalid={invalid} onChange={(value) => changeSpec({ outcome: { ...spec.outcome, event: value } }, 'outcome.event')} />
                )}
              </Field>
            )}
          </div>
          <div className="grid gap-4 md:grid-cols-2">
            <Field id={fieldId('exposure.column')} label="Intervention" error={shownError('exposure.column')} hint="A column with two levels: with and without the intervention.">
              {(describedBy, invalid) => (
                <select id={fieldId('exposure.column')} className="field-input" value={spec.exposure.column} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ exposure: { ...spec.exposure, column: e.target.value } }, 'exposure.column')}>
                  <ColumnOptions choices={choices.interventions} placeholder="Choose a column" />
                </select>
              )}
            </Field>
            <Field id={fieldId('exposure.reference')} label="Reference level of the intervention" error={shownError('exposure.reference')} hint="Usually the level without the intervention.">
              {(describedBy, invalid) => (
                <LevelSelect id={fieldId('exposure.reference')} value={spec.exposure.reference} levels={choices.exposureReferences} placeholder={choices.exposureReferences.length === 0 ? 'Choose the intervention first' : 'Choose a level'} disabled={choices.exposureReferences.length === 0} describedBy={describedBy} invalid={invalid} onChange={(value) => changeSpec({ exposure: { ...spec.exposure, reference: value } }, 'exposure.reference')} />
              )}
            </Field>
          </div>
        </Section>

        <Section title="Modifier" description="The patient characteristic across which the intervention's effect may differ.">
          <div className="grid gap-4 md:grid-cols-2">
            <Field id={fieldId('modifier.column')} label="Modifier" error={shownError('modifier.column')} hint={choices.modifierType ? (choices.modifierType === 'categorical' ? 'Compared level by level against a reference.' : 'Used as a continuous modifier.') : undefined}>
              {(describedBy, invalid) => (
                <select id={fieldId('modifier.column')} className="field-input" value={spec.modifier.column} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, column: e.target.value } }, 'modifier.column')}>
                  <ColumnOptions choices={choices.modifiers} placeholder="Choose a column" />
                </select>
              )}
            </Field>
            {choices.modifierType === 'categorical' && (
              <Field id={fieldId('modifier.reference')} label="Reference level of the modifier" error={shownError('modifier.reference')} hint="Every other level is compared with this one.">
                {(describedBy, invalid) => (
                  <LevelSelect id={fieldId('modifier.reference')} value={spec.modifier.reference} levels={choices.modifierReferences} placeholder="Choose a level" describedBy={describedBy} invalid={invalid} onChange={(value) => changeSpec({ modifier: { ...spec.modifier, reference: value } }, 'modifier.reference')} />
                )}
              </Field>
            )}
          </div>
          {choices.modifierType === 'continuous' && (
            <div className="grid gap-4 md:grid-cols-2">
              <Field
                id={fieldId('modifier.centre')}
                label="Centring"
                error={shownError('modifier.centre')}
                hint={modifierRange ? `Observed from ${modifierRange.min} to ${modifierRange.max}, mean ${modifierRange.mean.toFixed(2)}.` : 'Centring changes what the intervention coefficient means, not the fit.'}
              >
                {(describedBy, invalid) => (
                  <div className="flex gap-2">
                    <select id={fieldId('modifier.centre')} className="field-input" value={spec.modifier.centre} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, centre: e.target.value as SpecDraft['modifier']['centre'] } }, 'modifier.centre')}>
                      <option value="none">None</option>
                      <option value="mean">On the mean</option>
                      <option value="median">On the median</option>
                      <option value="value">On a value</option>
                    </select>
                    {spec.modifier.centre === 'value' && (
                      <input className="field-input w-28" inputMode="decimal" aria-label="Centring value" value={spec.modifier.centreValue} aria-invalid={invalid} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, centreValue: e.target.value } }, 'modifier.centre')} />
                    )}
                  </div>
                )}
              </Field>
              <Field id={fieldId('modifier.slopesAt')} label="Report the effect at" error={shownError('modifier.slopesAt')} hint={spec.modifier.slopes === 'sd' ? undefined : `Separate with commas, e.g. ${spec.modifier.slopes === 'percentiles' ? '10, 50, 90' : modifierRange ? `${modifierRange.min}, ${modifierRange.median}, ${modifierRange.max}` : '2, 5, 8'}.`}>
                {(describedBy, invalid) => (
                  <div className="flex gap-2">
                    <select id={fieldId('modifier.slopesAt')} className="field-input" value={spec.modifier.slopes} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, slopes: e.target.value as SpecDraft['modifier']['slopes'] } }, 'modifier.slopesAt')}>
                      <option value="sd">Mean and ± 1 SD</option>
                      <option value="percentiles">Percentiles</option>
                      <option value="values">Values</option>
                    </select>
                    {spec.modifier.slopes !== 'sd' && (
                      <input className="field-input" aria-label={spec.modifier.slopes === 'percentiles' ? 'Percentiles' : 'Values'} value={spec.modifier.slopeList} aria-invalid={invalid} aria-describedby={describedBy} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, slopeList: e.target.value } }, 'modifier.slopesAt')} />
                    )}
                  </div>
                )}
              </Field>
            </div>
          )}
        </Section>

        <Section title="Adjustment" description="Confounders of the intervention's effect (and of the modifier, for a causal reading).">
          <div role="group" aria-labelledby={`${fieldId('covariates')}-label`} aria-describedby={shownError('covariates') ? `${fieldId('covariates')}-error` : undefined}>
            <p id={`${fieldId('covariates')}-label`} className="field-label">
              Covariates
            </p>
            {choices.covariates.length === 0 ? (
              <p className="text-sm text-ink-500">No other columns in this extract.</p>
            ) : (
              <ul className="flex flex-wrap gap-2 list-none p-0 m-0" id={fieldId('covariates')}>
                {choices.covariates.map((covariate) => {
                  const checked = spec.covariates.includes(covariate.name);
                  return (
                    <li key={covariate.name}>
                      <label
                        className={`inline-flex items-center gap-2 rounded-full border px-3 py-1 text-sm cursor-pointer focus-within:outline-2 focus-within:outline-estuary-500 ${checked ? 'bg-estuary-50 border-estuary-300 text-estuary-900' : 'bg-white border-linen-300 text-ink-700'}`}
                        title={covariate.description || undefined}
                      >
                        <input
                          type="checkbox"
                          className="accent-estuary-700"
                          checked={checked}
                          onChange={(e) =>
                            changeSpec({ covariates: e.target.checked ? [...spec.covariates, covariate.name] : spec.covariates.filter((name) => name !== covariate.name) }, 'covariates')
                          }
                        />
                        {covariate.name}
                        <span className="text-xs text-ink-500">{covariate.kind === 'categorical' ? 'levels' : 'continuous'}</span>
                      </label>
                    </li>
                  );
                })}
              </ul>
            )}
            {shownError('covariates') && (
              <p id={`${fieldId('covariates')}-error`} className="field-error">
                {shownError('covariates')}
              </p>
            )}
          </div>
          {spec.covariates.some((name) => choices.covariates.find((c) => c.name === name)?.kind === 'categorical') && (
            <div className="grid gap-3 md:grid-cols-3">
              {spec.covariates.map((name) => {
                const covariate = choices.covariates.find((c) => c.name === name);
                if (!covariate || covariate.kind !== 'categorical') return null;
                const path = `covariates.${name}.reference`;
                return (
                  <Field key={name} id={fieldId(path)} label={`Reference of ${name}`} error={shownError(path)}>
                    {(describedBy, invalid) => (
                      <LevelSelect id={fieldId(path)} value={spec.covariateReferences[name] ?? ''} levels={covariate.levels ?? []} describedBy={describedBy} invalid={invalid} onChange={(value) => changeSpec({ covariateReferences: { [name]: value } }, path)} />
                    )}
                  </Field>
                );
              })}
            </div>
          )}
        </Section>

        <Section title="Model, intervals and tests">
          <div className="grid gap-4 md:grid-cols-2">
            <Field id={fieldId('effectMeasure')} label="Effect measure" error={shownError('effectMeasure')}>
              {(describedBy, invalid) => (
                <select id={fieldId('effectMeasure')} className="field-input" value={spec.effectMeasure} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ effectMeasure: e.target.value as SpecDraft['effectMeasure'] }, 'effectMeasure')}>
                  {choices.measures.map((measure) => (
                    <option key={measure} value={measure}>
                      {MEASURE_LABEL[measure]} ({measure})
                    </option>
                  ))}
                </select>
              )}
            </Field>
            <Field id={fieldId('model')} label="Model" error={shownError('model')} hint={spec.model === 'log-binomial' ? 'Falls back to modified Poisson if it does not converge; the run says so.' : undefined}>
              {(describedBy, invalid) => (
                <select id={fieldId('model')} className="field-input" value={spec.model} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ model: e.target.value as SpecDraft['model'] }, 'model')}>
                  {choices.models.map((model) => (
                    <option key={model} value={model}>
                      {MODEL_LABEL[model]}
                    </option>
                  ))}
                </select>
              )}
            </Field>
            <Field id={fieldId('ci.method')} label="Interval method" error={shownError('ci.method')} hint={spec.model === 'linear' ? undefined : 'Applies to RERI, AP and S; ratios use Wald intervals.'}>
              {(describedBy, invalid) => (
                <select id={fieldId('ci.method')} className="field-input" value={spec.ciMethod} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ ciMethod: e.target.value as SpecDraft['ciMethod'] }, 'ci.method')}>
                  {choices.ciMethods.map((method) => (
                    <option key={method} value={method}>
                      {CI_METHOD_LABEL[method]}
                    </option>
                  ))}
                </select>
              )}
            </Field>
            <Field id={fieldId('ci.level')} label="Interval level (%)" error={shownError('ci.level')}>
              {(describedBy, invalid) => (
                <input id={fieldId('ci.level')} className="field-input" inputMode="decimal" value={spec.ciLevel} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ ciLevel: e.target.value }, 'ci.level')} />
              )}
            </Field>
            {spec.ciMethod === 'bootstrap' && (
              <>
                <Field id={fieldId('ci.replicates')} label="Bootstrap replicates" error={shownError('ci.replicates')} hint="More replicates give steadier limits and take longer.">
                  {(describedBy, invalid) => (
                    <input id={fieldId('ci.replicates')} className="field-input" inputMode="numeric" value={spec.replicates} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ replicates: e.target.value }, 'ci.replicates')} />
                  )}
                </Field>
                <Field id={fieldId('ci.seed')} label="Random seed" error={shownError('ci.seed')} hint="The same seed reproduces the same intervals.">
                  {(describedBy, invalid) => (
                    <input id={fieldId('ci.seed')} className="field-input" inputMode="numeric" value={spec.seed} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ seed: e.target.value }, 'ci.seed')} />
                  )}
                </Field>
              </>
            )}
            <Field id={fieldId('alpha')} label="Significance level (α)" error={shownError('alpha')} hint="For the tests and the Johnson-Neyman boundaries.">
              {(describedBy, invalid) => (
                <input id={fieldId('alpha')} className="field-input" inputMode="decimal" value={spec.alpha} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ alpha: e.target.value }, 'alpha')} />
              )}
            </Field>
            <Field id={fieldId('multiplicity')} label="Adjustment across strata" error={shownError('multiplicity')} hint="Both adjusted p-values are always reported; this one is primary.">
              {(describedBy, invalid) => (
                <select id={fieldId('multiplicity')} className="field-input" value={spec.multiplicity} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ multiplicity: e.target.value as SpecDraft['multiplicity'] }, 'multiplicity')}>
                  {(['holm', 'bh', 'none'] as const).map((value) => (
                    <option key={value} value={value}>
                      {value === 'none' ? 'None' : MULTIPLICITY_LABEL[value]}
                    </option>
                  ))}
                </select>
              )}
            </Field>
          </div>
          <label className="flex items-start gap-2.5 text-sm" htmlFor={fieldId('preventive')}>
            <input id={fieldId('preventive')} type="checkbox" className="mt-1" checked={spec.preventive} onChange={(e) => changeSpec({ preventive: e.target.checked }, 'preventive')} />
            <span>
              <span className="font-semibold">The intervention prevents the outcome</span>: recode each comparison so that the lowest-risk combination is the reference for RERI, AP and S.
            </span>
          </label>
        </Section>
      </div>

      <aside className="grid gap-4 lg:sticky lg:top-4" aria-label="Live summary">
        <section className="card p-5" aria-labelledby={`${formId}-equation`}>
          <h2 id={`${formId}-equation`} className="text-base mb-2">
            Model equation
          </h2>
          {equation ? (
            <ModelEquationView equation={equation} />
          ) : (
            <p className="text-sm text-ink-500" data-testid="model-equation">
              The equation appears once the outcome, intervention and modifier are chosen and valid.
            </p>
          )}
        </section>
        <section className="card p-5" aria-labelledby={`${formId}-summary`} data-testid="computation-summary">
          <h2 id={`${formId}-summary`} className="text-base mb-2">
            What a run will compute
          </h2>
          {converted.ok ? (
            <>
              <p className="text-sm text-ink-700 mb-3">{specInWords(converted.spec, { columns })}</p>
              <dl className="grid gap-2 text-sm m-0">
                {summary.map((item) => (
                  <div key={item.title}>
                    <dt className="font-semibold">{item.title}</dt>
                    <dd className="m-0 text-ink-700">{item.detail}</dd>
                  </div>
                ))}
              </dl>
            </>
          ) : (
            <p className="text-sm text-ink-500">Complete the specification to see what will be computed.</p>
          )}
        </section>
        <div className="card p-5 grid gap-3">
          {submitted && errorCount > 0 && (
            <p role="alert" className="text-sm text-brick-700" data-testid="form-error-count">
              {errorCount === 1 ? 'One field needs attention.' : `${errorCount} fields need attention.`}
            </p>
          )}
          {apiError && (!apiError.details || unplacedServerErrors.length > 0) && (
            <p role="alert" className="text-sm text-brick-700" data-testid="form-server-error">
              {apiError.details && unplacedServerErrors.length > 0 ? unplacedServerErrors.map((detail) => detail.message).join(' ') : apiError.message}
            </p>
          )}
          {save.error && !(save.error instanceof ApiError) && (
            <p role="alert" className="text-sm text-brick-700">
              Could not save: {save.error.message}
            </p>
          )}
          <button type="submit" className="btn btn-primary justify-center" disabled={save.isPending || save.isSuccess} data-testid="analysis-submit">
            {save.isPending || save.isSuccess ? 'Saving…' : existing ? 'Save changes' : 'Save analysis'}
          </button>
          <p className="text-xs text-ink-500">Saving does not run the analysis; you start runs from the analysis page.</p>
        </div>
      </aside>
      </fieldset>
    </form>
  );
}

/** The island: mount with client:load on the new- and edit-analysis pages. */
export default function AnalysisForm(props: AnalysisFormProps) {
  return (
    <QueryRoot>
      <Form {...props} />
    </QueryRoot>
  );
}
