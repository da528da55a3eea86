/**
 * The analysis form island: the question in plain words and the specification through
 * choices drawn from the extract's confirmed dictionary, with the model equation and a
 * summary of what will be computed shown live. It saves through the API (POST
 * /api/analyses, or PATCH /api/analyses/{id} when editing) and then goes to the analysis.
 * Each section is its own component (QuestionSection, OutcomeSection, ModifierSection,
 * CovariatesPicker, IntervalOptions, SummaryPanel) built from formFields.tsx.
 */
import { useMutation } from '@tanstack/react-query';
import { useId, useMemo, useState, type SubmitEvent } from 'react';
import type { AnySpec, Spec } from '@/engine/boundary/schemas';
import { ApiError, apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { ClusterWeightsSection } from './ClusterWeightsSection';
import { CovariatesPicker } from './CovariatesPicker';
import type { FormColumn } from './formColumns';
import type { SectionProps } from './formFields';
import { IntervalOptions } from './IntervalOptions';
import { ModifierSection } from './ModifierSection';
import { OutcomeSection } from './OutcomeSection';
import { QuestionSection } from './QuestionSection';
import { defaultDraft, formChoices, reviseDraft, specToDraft, type AnalysisDraft, type SpecDraft } from './specForm';
import { draftToSpec, fieldForServerPath, validateAnalysis, type FieldErrors } from './specValidation';
import { SummaryPanel } from './SummaryPanel';
import { AnalysisKindChoice, ScreenModifiersSection } from './ScreenModifiersSection';
import { screenErrors, toScreenSpec, type ScreenRowDraft } from './screenDraft';
import { isScreenSpec, screenModifierSpec } from './screenSpecs';

export interface ExistingAnalysis {
  id: string;
  title: string;
  question: string;
  prespecified: boolean;
  /** When the analysis was declared prespecified (ISO time), if it was. */
  prespecifiedAt?: string | null;
  /** A single-modifier specification or a subgroup screen. */
  spec: AnySpec;
}

export interface AnalysisFormProps {
  initiativeId: string;
  extractVersionId: string;
  /** The confirmed dictionary with levels: formColumns(dictionary, profile). */
  columns: FormColumn[];
  existing?: ExistingAnalysis;
  /** Where to go after saving; "{id}" is replaced by the analysis id. Default "/analyses/{id}". */
  onSavedHref?: string;
  /** A new analysis that starts from this specification (a subgroup screen's "full analysis" link). */
  prefill?: Spec;
}

function Form({ initiativeId, extractVersionId, columns, existing, onSavedHref = '/analyses/{id}', prefill }: AnalysisFormProps) {
  const formId = useId();
  const hydrated = useHydrated();
  const fieldId = (path: string) => `${formId}-${path.replace(/[^\w-]/g, '-')}`;
  // A screen's shared choices live in the draft with its first modifier; the list in screenRows.
  const [screenRows, setScreenRows] = useState<ScreenRowDraft[] | null>(() =>
    existing && isScreenSpec(existing.spec) ? existing.spec.modifiers.map((modifier) => ({ column: modifier.column, reference: modifier.reference ?? '' })) : null,
  );
  const [draft, setDraft] = useState<AnalysisDraft>(() =>
    existing
      ? {
          title: existing.title, question: existing.question, prespecified: existing.prespecified,
          spec: specToDraft(isScreenSpec(existing.spec) ? screenModifierSpec(existing.spec, 0) : (existing.spec as Spec), columns),
        }
      : prefill
        ? { ...defaultDraft(), spec: specToDraft(prefill, columns) }
        : defaultDraft(),
  );
  const [touched, setTouched] = useState<Set<string>>(() => new Set());
  const [submitted, setSubmitted] = useState(false);
  const [serverErrors, setServerErrors] = useState<FieldErrors>({});

  const spec = draft.spec;
  const choices = useMemo(() => formChoices(columns, spec), [columns, spec]);
  // In a screen, the shared choices are checked with the first listed modifier in place of the one modifier.
  const checkedDraft = useMemo(
    () => (screenRows ? { ...draft, spec: { ...draft.spec, modifier: { ...draft.spec.modifier, column: screenRows[0]?.column ?? '', reference: screenRows[0]?.reference ?? '' }, standardize: false } } : draft),
    [draft, screenRows],
  );
  const converted = useMemo(() => draftToSpec(columns, checkedDraft.spec), [columns, checkedDraft]);
  const errors = useMemo(() => {
    const found = validateAnalysis(columns, checkedDraft);
    if (!screenRows) return found;
    const shared = Object.fromEntries(Object.entries(found).filter(([path]) => !path.startsWith('modifier.')));
    return { ...shared, ...screenErrors(columns, screenRows, { outcome: spec.outcome.column, exposure: spec.exposure.column, covariates: spec.covariates }) };
  }, [columns, checkedDraft, screenRows, spec]);
  const screenSpec = useMemo(() => (screenRows && converted.ok ? toScreenSpec(columns, converted.spec, screenRows) : null), [columns, screenRows, converted]);
  const byName = useMemo(() => new Map(columns.map((column) => [column.name, column])), [columns]);

  const shownError = (path: string): string | undefined => serverErrors[path] ?? (submitted || touched.has(path) ? errors[path] : undefined);
  const touch = (path: string) => setTouched((current) => (current.has(path) ? current : new Set(current).add(path)));
  const changeSpec = (change: Partial<SpecDraft>, path: string) => {
    setDraft((current) => ({ ...current, spec: reviseDraft(columns, current.spec, change) }));
    setServerErrors({});
    touch(path);
  };

  const save = useMutation({
    mutationFn: (body: { initiativeId: string; extractVersionId: string; title: string; question: string; prespecified: boolean; spec: AnySpec }) =>
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
      for (const detail of error.details) {
        mapped[detail.path.startsWith('spec.modifiers') ? detail.path.replace(/^spec\./, '') : fieldForServerPath(detail.path, isScreenSpec(body.spec) ? screenModifierSpec(body.spec, 0) : (body.spec as Spec))] = detail.message;
      }
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
    save.mutate({ initiativeId, extractVersionId, title: draft.title.trim(), question: draft.question.trim(), prespecified: draft.prespecified, spec: screenSpec ?? converted.spec });
  };

  const modifierRange = byName.get(spec.modifier.column)?.numeric;
  const errorCount = Object.keys(errors).length;
  const sectionProps: SectionProps = { spec, choices, fieldId, shownError, changeSpec };

  return (
    <form onSubmit={submit} noValidate className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_24rem] items-start" aria-label={existing ? 'Edit analysis' : 'New analysis'} data-testid="analysis-form" data-hydrated={hydrated} aria-busy={!hydrated}>
      {/* Controls stay disabled until the island has hydrated (see useHydrated). */}
      <fieldset disabled={!hydrated} className="contents">
      <div className="grid gap-5 min-w-0">
        <QuestionSection
          draft={draft}
          fieldId={fieldId}
          shownError={shownError}
          touch={touch}
          existing={existing}
          onChange={(change, clearsServerErrors) => {
            setDraft((current) => ({ ...current, ...change }));
            if (clearsServerErrors) setServerErrors({});
          }}
        />
        <OutcomeSection {...sectionProps} outcomeDescription={byName.get(spec.outcome.column)?.description || undefined} />
        <AnalysisKindChoice rows={screenRows} fieldId={fieldId} onChange={(rows, path) => { setScreenRows(rows); setServerErrors({}); touch(path); }} />
        {screenRows ? (
          <ScreenModifiersSection rows={screenRows} columns={columns} choices={choices} fieldId={fieldId} shownError={shownError} onChange={(rows, path) => { setScreenRows(rows); setServerErrors({}); touch(path); }} />
        ) : (
          <ModifierSection {...sectionProps} modifierRange={modifierRange} />
        )}
        <CovariatesPicker {...sectionProps} />
        <ClusterWeightsSection {...sectionProps} />
        <IntervalOptions {...sectionProps} />
      </div>

      <aside className="grid gap-4 lg:sticky lg:top-4" aria-label="Live summary">
        <SummaryPanel idPrefix={formId} spec={converted.ok && !screenRows ? converted.spec : null} screen={screenSpec} columns={columns} />
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
