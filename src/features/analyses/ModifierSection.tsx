/**
 * The analysis form's modifier: its column and reference level, or, for a continuous
 * modifier, the centring and where the effect is reported.
 */
import { scoresText } from '../extracts/orderedScores';
import type { FormColumn } from './formColumns';
import { ColumnOptions, Field, LevelSelect, Section, type SectionProps } from './formFields';
import { DEFAULT_PERCENTILES, type SpecDraft } from './specForm';

export function ModifierSection({ spec, choices, fieldId, shownError, changeSpec, modifierRange }: SectionProps & { modifierRange: FormColumn['numeric'] | undefined }) {
  return (
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
      {choices.modifierScores && (
        <div className="text-sm" data-testid="ordered-modifier">
          <p className="text-ink-700">
            The dictionary declares {spec.modifier.column} ordered, with scores {scoresText(choices.modifierScores)}.
          </p>
          <label className="flex items-start gap-2.5 mt-1" htmlFor={fieldId('modifier.trend')}>
            <input id={fieldId('modifier.trend')} type="checkbox" className="mt-1" checked={spec.modifier.trend} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, trend: e.target.checked } }, 'modifier.trend')} />
            <span>
              <span className="font-semibold">Test for trend</span>: one product term of the intervention with these scores, reported beside the omnibus test. The scores are saved with the analysis.
            </span>
          </label>
        </div>
      )}
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
          <Field id={fieldId('modifier.slopesAt')} label="Report the effect at" error={shownError('modifier.slopesAt')} hint={slopeHint(spec.modifier.slopes, modifierRange)}>
            {(describedBy, invalid) => (
              <div className="flex gap-2">
                <select id={fieldId('modifier.slopesAt')} className="field-input" value={spec.modifier.slopes} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, slopes: e.target.value as SpecDraft['modifier']['slopes'], slopeList: e.target.value === 'percentiles' ? DEFAULT_PERCENTILES : e.target.value === 'values' ? '' : spec.modifier.slopeList } }, 'modifier.slopesAt')}>
                  <option value="percentiles">Percentiles</option>
                  <option value="values">Values clinicians name</option>
                  <option value="sd">Mean and ± 1 SD</option>
                </select>
                {spec.modifier.slopes !== 'sd' && (
                  <input className="field-input" aria-label={spec.modifier.slopes === 'percentiles' ? 'Percentiles' : 'Values and their names'} data-testid="slope-points" value={spec.modifier.slopeList} aria-invalid={invalid} aria-describedby={describedBy} onChange={(e) => changeSpec({ modifier: { ...spec.modifier, slopeList: e.target.value } }, 'modifier.slopesAt')} />
                )}
              </div>
            )}
          </Field>
        </div>
      )}
    </Section>
  );
}

/** The hint under "Report the effect at", by choice. */
function slopeHint(choice: SpecDraft['modifier']['slopes'], range: FormColumn['numeric'] | undefined): string {
  if (choice === 'percentiles') return 'Separate with commas, e.g. 10, 25, 50, 75, 90.';
  if (choice === 'values') {
    const example = range ? `${range.min} = low, ${range.median} = typical, ${range.max} = high` : '3 = mild, 5 = moderate, 7 = severe';
    return `Values with the names clinicians use, separated by commas, e.g. ${example}. A name is optional.`;
  }
  return 'The mean, and one standard deviation below and above it.';
}
