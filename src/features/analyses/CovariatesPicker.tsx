/**
 * The analysis form's adjustment: the covariates as toggles, and the reference level of
 * each categorical covariate chosen.
 */
import { Field, LevelSelect, Section, type SectionProps } from './formFields';

export function CovariatesPicker({ spec, choices, fieldId, shownError, changeSpec }: SectionProps) {
  return (
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
  );
}
