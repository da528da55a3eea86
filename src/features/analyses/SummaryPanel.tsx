/**
 * The analysis form's live summary: the model equation and what a run will compute (the
 * specification in words and the list of results), once the specification is complete.
 */
import type { ScreenSpec, Spec } from '@/engine/boundary/schemas';
import { screenModifierSpec } from './screenSpecs';
import type { FormColumn } from './formColumns';
import { modelEquation } from './modelEquation';
import { ModelEquationView } from './ModelEquationView';
import { computationSummary, specInWords } from './specWords';

export interface SummaryPanelProps {
  /** Prefix of the headings' ids. */
  idPrefix: string;
  /** The converted specification, or null while the draft does not convert. */
  spec: Spec | null;
  columns: readonly FormColumn[];
  /** A subgroup screen: one equation per modifier and the screen in words (spec is then null). */
  screen?: ScreenSpec | null;
}

export function SummaryPanel({ idPrefix, spec, columns, screen = null }: SummaryPanelProps) {
  if (screen) return <ScreenSummary idPrefix={idPrefix} screen={screen} columns={columns} />;
  const equation = spec ? modelEquation(spec, columns) : null;
  const summary = spec ? computationSummary(spec, columns) : [];
  return (
    <>
      <section className="card p-5" aria-labelledby={`${idPrefix}-equation`}>
        <h2 id={`${idPrefix}-equation`} className="text-base mb-2">
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
      <section className="card p-5" aria-labelledby={`${idPrefix}-summary`} data-testid="computation-summary">
        <h2 id={`${idPrefix}-summary`} className="text-base mb-2">
          What a run will compute
        </h2>
        {spec ? (
          <>
            <p className="text-sm text-ink-700 mb-3">{specInWords(spec, { columns })}</p>
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
    </>
  );
}

/** A subgroup screen's summary: one model equation per modifier, and the screen in words. */
function ScreenSummary({ idPrefix, screen, columns }: { idPrefix: string; screen: ScreenSpec; columns: readonly FormColumn[] }) {
  return (
    <>
      <section className="card p-5" aria-labelledby={`${idPrefix}-equation`} data-testid="screen-equations">
        <h2 id={`${idPrefix}-equation`} className="text-base mb-2">
          Model equations, one per modifier
        </h2>
        <ol className="grid gap-3 list-none p-0 m-0">
          {screen.modifiers.map((modifier, index) => (
            <li key={index} data-testid="screen-equation">
              <p className="text-xs text-ink-500 mb-1">{modifier.column}</p>
              <ModelEquationView equation={modelEquation(screenModifierSpec(screen, index), columns)} />
            </li>
          ))}
        </ol>
      </section>
      <section className="card p-5" aria-labelledby={`${idPrefix}-summary`} data-testid="computation-summary">
        <h2 id={`${idPrefix}-summary`} className="text-base mb-2">
          What a run will compute
        </h2>
        <p className="text-sm" data-testid="spec-in-words">{specInWords(screen, { columns })}</p>
      </section>
    </>
  );
}
