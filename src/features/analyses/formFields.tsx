/**
 * The analysis form's building blocks: a labelled field wired for screen readers, a select
 * of levels, the column options of a select, a section, and what every section receives
 * from the form.
 */
import type { ReactNode } from 'react';
import type { FormColumn } from './formColumns';
import type { ColumnChoice, FormChoices, SpecDraft } from './specForm';

/** What the form hands each specification section: the draft, its choices, ids, messages and the one way to change it. */
export interface SectionProps {
  spec: SpecDraft;
  choices: FormChoices;
  /** The element id of a field path. */
  fieldId: (path: string) => string;
  /** The message shown under a field path, if any. */
  shownError: (path: string) => string | undefined;
  /** Applies a change through reviseDraft and marks the field path touched. */
  changeSpec: (change: Partial<SpecDraft>, path: string) => void;
}

const TYPE_LABEL: Record<FormColumn['type'], string> = { binary: 'binary', categorical: 'categorical', continuous: 'continuous', count: 'count' };

/** A labelled field with its hint and its message, wired for screen readers. */
export function Field({
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
export function LevelSelect({
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

export function ColumnOptions({ choices, placeholder }: { choices: ColumnChoice[]; placeholder: string }) {
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

export function Section({ title, description, children }: { title: string; description?: string; children: ReactNode }) {
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
