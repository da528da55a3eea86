/**
 * The analysis form's choice between one modifier and a subgroup screen, and the screen's
 * list of candidate modifiers: each a column and, for a categorical one, its reference
 * level. Each is analysed in a model of its own when the screen runs.
 */
import type { FormColumn } from './formColumns';
import { ColumnOptions, Field, LevelSelect, Section } from './formFields';
import { naturalOrder } from './formColumns';
import { reviseScreenRow, screenRowType, SCREEN_MAX_MODIFIERS, type ScreenRowDraft } from './screenDraft';
import type { FormChoices } from './specForm';

export interface ScreenModifiersProps {
  /** The screen's rows, or null for an analysis of one modifier. */
  rows: ScreenRowDraft[] | null;
  onChange: (rows: ScreenRowDraft[] | null, path: string) => void;
  columns: readonly FormColumn[];
  choices: FormChoices;
  fieldId: (path: string) => string;
  shownError: (path: string) => string | undefined;
}

export function AnalysisKindChoice({ rows, onChange, fieldId }: Pick<ScreenModifiersProps, 'rows' | 'onChange' | 'fieldId'>) {
  const name = fieldId('analysis-kind');
  return (
    <div role="radiogroup" aria-labelledby={`${name}-label`} className="card p-5" data-testid="analysis-kind">
      <p id={`${name}-label`} className="field-label">What to examine</p>
      <div className="flex flex-wrap gap-4 text-sm">
        <label className="flex items-center gap-2">
          <input type="radio" name={name} value="single" checked={rows === null} onChange={() => onChange(null, 'modifiers')} />
          One modifier (full analysis)
        </label>
        <label className="flex items-center gap-2">
          <input type="radio" name={name} value="screen" checked={rows !== null} onChange={() => onChange([{ column: '', reference: '' }, { column: '', reference: '' }], 'modifiers')} />
          Subgroup screen (several candidate modifiers)
        </label>
      </div>
    </div>
  );
}

export function ScreenModifiersSection({ rows, onChange, columns, choices, fieldId, shownError }: ScreenModifiersProps) {
  if (rows === null) return null;
  const change = (index: number, row: ScreenRowDraft, path: string) => onChange(rows.map((current, i) => (i === index ? row : current)), path);
  return (
    <Section title="Subgroup screen" description="Each candidate modifier gets a model of its own: the intervention, that modifier, their product and the covariates. The interaction tests are adjusted across the modifiers (Holm and Benjamini-Hochberg).">
      {shownError('modifiers') && <p role="alert" className="text-sm text-brick-700">{shownError('modifiers')}</p>}
      <ol className="grid gap-3 list-none p-0 m-0" data-testid="screen-modifiers">
        {rows.map((row, index) => {
          const type = screenRowType(columns, row.column);
          const levels = columns.find((column) => column.name === row.column)?.levels ?? [];
          return (
            <li key={index} className="grid gap-3 md:grid-cols-[1fr_1fr_auto] items-end">
              <Field id={fieldId(`modifiers.${index}.column`)} label={`Modifier ${index + 1}`} error={shownError(`modifiers.${index}.column`)} hint={type ? (type === 'categorical' ? 'Compared level by level.' : 'Continuous: effects at the mean and ± 1 SD.') : undefined}>
                {(describedBy, invalid) => (
                  <select id={fieldId(`modifiers.${index}.column`)} className="field-input" value={row.column} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => change(index, reviseScreenRow(columns, e.target.value), `modifiers.${index}.column`)}>
                    <ColumnOptions choices={choices.modifiers} placeholder="Choose a column" />
                  </select>
                )}
              </Field>
              {type === 'categorical' ? (
                <Field id={fieldId(`modifiers.${index}.reference`)} label="Reference level" error={shownError(`modifiers.${index}.reference`)}>
                  {(describedBy, invalid) => (
                    <LevelSelect id={fieldId(`modifiers.${index}.reference`)} value={row.reference} levels={naturalOrder(levels)} placeholder="Choose a level" describedBy={describedBy} invalid={invalid} onChange={(value) => change(index, { ...row, reference: value }, `modifiers.${index}.reference`)} />
                  )}
                </Field>
              ) : <div />}
              <button type="button" className="btn btn-secondary text-sm" disabled={rows.length <= 2} onClick={() => onChange(rows.filter((_, i) => i !== index), 'modifiers')} aria-label={`Remove modifier ${index + 1}`}>Remove</button>
            </li>
          );
        })}
      </ol>
      <div>
        <button type="button" className="btn btn-secondary text-sm" disabled={rows.length >= SCREEN_MAX_MODIFIERS} onClick={() => onChange([...rows, { column: '', reference: '' }], 'modifiers')} data-testid="screen-add-modifier">
          Add a modifier
        </button>
      </div>
    </Section>
  );
}
