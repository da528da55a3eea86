/**
 * The analysis form's model, intervals and tests: the effect measure and model, the
 * interval method and level, the bootstrap settings, α, the adjustment across strata and
 * the preventive recoding.
 */
import { Field, Section, type SectionProps } from './formFields';
import type { SpecDraft } from './specForm';
import { doseRefusal } from './doseRules';
import { CI_METHOD_LABEL, MODEL_LABEL, MULTIPLICITY_LABEL, measureLabel } from './specRules';

export function IntervalOptions({ spec, choices, fieldId, shownError, changeSpec }: SectionProps) {
  return (
    <Section title="Model, intervals and tests">
      <div className="grid gap-4 md:grid-cols-2">
        <Field id={fieldId('effectMeasure')} label="Effect measure" error={shownError('effectMeasure')}>
          {(describedBy, invalid) => (
            <select id={fieldId('effectMeasure')} className="field-input" value={spec.effectMeasure} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ effectMeasure: e.target.value as SpecDraft['effectMeasure'] }, 'effectMeasure')}>
              {choices.measures.map(({ value, disabledReason }) => (
                <option key={value} value={value} disabled={disabledReason !== undefined && value !== spec.effectMeasure}>
                  {measureLabel(value, spec.outcome.type)} ({value}){disabledReason ? ` — not available: ${disabledReason}` : ''}
                </option>
              ))}
            </select>
          )}
        </Field>
        <Field id={fieldId('model')} label="Model" error={shownError('model')} hint={spec.model === 'log-binomial' ? 'Falls back to modified Poisson if it does not converge; the run says so.' : undefined}>
          {(describedBy, invalid) => (
            <select id={fieldId('model')} className="field-input" value={spec.model} aria-describedby={describedBy} aria-invalid={invalid} onChange={(e) => changeSpec({ model: e.target.value as SpecDraft['model'] }, 'model')}>
              {choices.models.map(({ value, disabledReason }) => (
                <option key={value} value={value} disabled={disabledReason !== undefined && value !== spec.model}>
                  {MODEL_LABEL[value]}{disabledReason ? ` — not available: ${disabledReason}` : ''}
                </option>
              ))}
            </select>
          )}
        </Field>
        <Field id={fieldId('ci.method')} label="Interval method" error={shownError('ci.method')} hint={spec.exposure.type === 'continuous' ? 'A dose has Wald (delta) intervals only: the bootstrap and MOVER serve the additive measures, which do not apply to it.' : spec.model === 'linear' ? undefined : 'Applies to RERI, AP and S; ratios use Wald intervals.'}>
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
        <input id={fieldId('preventive')} type="checkbox" className="mt-1" checked={spec.preventive} disabled={spec.exposure.type === 'continuous' && !spec.preventive} onChange={(e) => changeSpec({ preventive: e.target.checked }, 'preventive')} />
        <span>
          <span className="font-semibold">The intervention prevents the outcome</span>: recode each comparison so that the lowest-risk combination is the reference for RERI, AP and S.
          {spec.exposure.type === 'continuous' && <span className="block text-xs text-ink-500">Not available: {doseRefusal('preventive')}</span>}
        </span>
      </label>
      <div>
        <label className="flex items-start gap-2.5 text-sm" htmlFor={fieldId('standardize')}>
          <input id={fieldId('standardize')} type="checkbox" className="mt-1" checked={spec.standardize} aria-describedby={shownError('standardize') ? `${fieldId('standardize')}-error` : undefined} aria-invalid={Boolean(shownError('standardize'))} onChange={(e) => changeSpec({ standardize: e.target.checked }, 'standardize')} />
          <span>
            <span className="font-semibold">Absolute effects</span> (binary outcomes): standardized risks with and without the intervention in each modifier level, their risk difference, the number needed to treat and how the difference varies across levels.
          </span>
        </label>
        {shownError('standardize') && (
          <p id={`${fieldId('standardize')}-error`} className="field-error" data-field-error={fieldId('standardize')}>
            {shownError('standardize')}
          </p>
        )}
      </div>
      {shownError('preventive') && <p className="field-error">{shownError('preventive')}</p>}
    </Section>
  );
}
