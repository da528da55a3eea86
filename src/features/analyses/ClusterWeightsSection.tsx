/**
 * The analysis form's rows and standard errors: the person-time of a count outcome (its
 * log is the model's offset, giving rate ratios), the cluster column (cluster-robust CR1
 * standard errors), the frequency-weights column of a grouped extract, and robust standard
 * errors for the Poisson model. Unsuitable columns are shown disabled with the reason.
 */
import { Field, Section, type SectionProps } from './formFields';

function ExtraOptions({ options, placeholder }: { options: { name: string; disabledReason?: string }[]; placeholder: string }) {
  return (
    <>
      <option value="">{placeholder}</option>
      {options.map((option) => (
        <option key={option.name} value={option.name} disabled={Boolean(option.disabledReason)}>
          {option.name}
          {option.disabledReason ? ` (${option.disabledReason})` : ''}
        </option>
      ))}
    </>
  );
}

export function ClusterWeightsSection({ spec, choices, fieldId, shownError, changeSpec }: SectionProps) {
  const count = spec.outcome.type === 'count';
  return (
    <Section title="Rows and standard errors" description="Person-time for rates, clustered rows (wards, sites) and grouped extracts with a count per row.">
      <div className="grid gap-4 md:grid-cols-2">
        {count && (
          <Field id={fieldId('outcome.personTime')} label="Person-time (optional)" error={shownError('outcome.personTime')} hint="Time at risk per row, e.g. bed-days: effects become rate ratios, and rates are shown per 1,000 units.">
            {(describedBy, invalid) => (
              <select id={fieldId('outcome.personTime')} className="field-input" value={spec.outcome.personTime ?? ''} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ outcome: { ...spec.outcome, personTime: e.target.value } }, 'outcome.personTime')}>
                <ExtraOptions options={choices.extras.personTimes} placeholder="None (counts per row)" />
              </select>
            )}
          </Field>
        )}
        <Field id={fieldId('cluster')} label="Cluster column (optional)" error={shownError('cluster')} hint="Rows of one site or ward are not independent: standard errors become cluster-robust (CR1). Needs 30 or more clusters to be reliable.">
          {(describedBy, invalid) => (
            <select id={fieldId('cluster')} className="field-input" value={spec.cluster} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ cluster: e.target.value }, 'cluster')}>
              <ExtraOptions options={choices.extras.clusters} placeholder="None (rows independent)" />
            </select>
          )}
        </Field>
        <Field id={fieldId('weights')} label="Frequency weights (optional)" error={shownError('weights')} hint="For a grouped extract: each row stands for this many identical rows (a positive whole number).">
          {(describedBy, invalid) => (
            <select id={fieldId('weights')} className="field-input" value={spec.weights} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ weights: e.target.value }, 'weights')}>
              <ExtraOptions options={choices.extras.weights} placeholder="None (one row per person)" />
            </select>
          )}
        </Field>
      </div>
      {spec.model === 'poisson' && (
        <div>
          <label className="flex items-start gap-2.5 text-sm" htmlFor={fieldId('standardErrors')}>
            <input id={fieldId('standardErrors')} type="checkbox" className="mt-1" checked={spec.robust} aria-invalid={Boolean(shownError('standardErrors'))} onChange={(e) => changeSpec({ robust: e.target.checked }, 'standardErrors')} />
            <span>
              <span className="font-semibold">Robust standard errors</span>: use when the counts vary more than the Poisson model allows (the results check this).
            </span>
          </label>
          {shownError('standardErrors') && <p className="field-error">{shownError('standardErrors')}</p>}
        </div>
      )}
    </Section>
  );
}
