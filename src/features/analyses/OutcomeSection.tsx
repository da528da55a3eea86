/**
 * The analysis form's outcome and intervention: the kind of outcome, its column and event
 * level, the intervention and its reference level.
 */
import { ColumnOptions, Field, LevelSelect, Section, type SectionProps } from './formFields';

export function OutcomeSection({ spec, choices, fieldId, shownError, changeSpec, outcomeDescription }: SectionProps & { outcomeDescription?: string }) {
  return (
    <Section title="Outcome and intervention">
      <div role="radiogroup" aria-labelledby={`${fieldId('outcome.type')}-label`}>
        <p id={`${fieldId('outcome.type')}-label`} className="field-label">
          Kind of outcome
        </p>
        <div className="flex flex-wrap gap-4 text-sm">
          {(['binary', 'continuous', 'count'] as const).map((type) => (
            <label key={type} className="flex items-center gap-2">
              <input type="radio" name={fieldId('outcome.type')} value={type} checked={spec.outcome.type === type} onChange={() => changeSpec({ outcome: { ...spec.outcome, type } }, 'outcome.type')} />
              {type === 'binary' ? 'Binary (an event: yes or no)' : type === 'count' ? 'Count of events (falls, calls), as rates with person-time' : 'Continuous or count (a measurement)'}
            </label>
          ))}
        </div>
      </div>
      <div className="grid gap-4 md:grid-cols-2">
        <Field id={fieldId('outcome.column')} label="Outcome" error={shownError('outcome.column')} hint={outcomeDescription}>
          {(describedBy, invalid) => (
            <select
              id={fieldId('outcome.column')}
              className="field-input"
              value={spec.outcome.column}
              aria-describedby={describedBy}
              aria-invalid={invalid}
              onChange={(e) => changeSpec({ outcome: { ...spec.outcome, column: e.target.value } }, 'outcome.column')}
            >
              <ColumnOptions choices={choices.outcomes} placeholder={choices.outcomes.length === 0 ? `No ${spec.outcome.type === 'binary' ? 'binary' : spec.outcome.type === 'count' ? 'count' : 'continuous or count'} columns` : 'Choose a column'} />
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
      <div role="radiogroup" aria-labelledby={`${fieldId('exposure.type')}-label`}>
        <p id={`${fieldId('exposure.type')}-label`} className="field-label">
          Kind of intervention
        </p>
        <div className="flex flex-wrap gap-4 text-sm">
          {(['binary', 'continuous'] as const).map((type) => (
            <label key={type} className="flex items-center gap-2">
              <input type="radio" name={fieldId('exposure.type')} value={type} checked={spec.exposure.type === type} onChange={() => changeSpec({ exposure: { ...spec.exposure, type } }, 'exposure.type')} />
              {type === 'binary' ? 'Given or not (two levels)' : 'A dose (minutes, number of calls …)'}
            </label>
          ))}
        </div>
        {spec.exposure.type === 'continuous' && (
          <p className="text-xs text-ink-500 mt-1" data-testid="dose-note">
            The effect is a slope per unit of the dose within each level of the modifier. The additive measures (RERI, AP, S and the joint table) need two intervention levels and do not apply; the bootstrap, MOVER and preventive recoding, which serve them, are not offered.
          </p>
        )}
      </div>
      <div className="grid gap-4 md:grid-cols-2">
        <Field id={fieldId('exposure.column')} label="Intervention" error={shownError('exposure.column')} hint={spec.exposure.type === 'continuous' ? 'A continuous or count column: the amount of intervention each patient had.' : 'A column with two levels: with and without the intervention.'}>
          {(describedBy, invalid) => (
            <select id={fieldId('exposure.column')} className="field-input" value={spec.exposure.column} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ exposure: { ...spec.exposure, column: e.target.value } }, 'exposure.column')}>
              <ColumnOptions choices={choices.interventions} placeholder="Choose a column" />
            </select>
          )}
        </Field>
        {spec.exposure.type === 'binary' && (
        <Field id={fieldId('exposure.reference')} label="Reference level of the intervention" error={shownError('exposure.reference')} hint="Usually the level without the intervention.">
          {(describedBy, invalid) => (
            <LevelSelect id={fieldId('exposure.reference')} value={spec.exposure.reference} levels={choices.exposureReferences} placeholder={choices.exposureReferences.length === 0 ? 'Choose the intervention first' : 'Choose a level'} disabled={choices.exposureReferences.length === 0} describedBy={describedBy} invalid={invalid} onChange={(value) => changeSpec({ exposure: { ...spec.exposure, reference: value } }, 'exposure.reference')} />
          )}
        </Field>
        )}
      </div>
    </Section>
  );
}
