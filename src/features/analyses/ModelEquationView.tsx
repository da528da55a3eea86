/**
 * The model equation in mathematical notation with plain HTML: variables in <var>, β with
 * <sub>scripts</sub>, a middle dot for coefficients and × for product terms. No TeX and no
 * formula language. Renders on the server too (no client directive needed on a page).
 */
import { Fragment } from 'react';
import { equationText, type EquationFactor, type EquationTerm, type ModelEquation } from './modelEquation';

function Var({ children }: { children: string }) {
  return <var className="font-serif italic text-ink-900">{children}</var>;
}

function Factor({ factor }: { factor: EquationFactor }) {
  if (factor.kind === 'variable') {
    if (factor.centre === undefined) return <Var>{factor.column}</Var>;
    return (
      <span>
        (<Var>{factor.column}</Var> − {typeof factor.centre === 'number' ? factor.centre : <span className="text-ink-700">{factor.centre}</span>})
      </span>
    );
  }
  if (factor.kind === 'indicator') {
    return (
      <span>
        [<Var>{factor.column}</Var> = <span className="not-italic">{factor.level}</span>]
      </span>
    );
  }
  return (
    <span>
      [<Var>{factor.column}</Var> = each level ≠ {factor.reference}]
    </span>
  );
}

function Coefficient({ coefficient }: { coefficient: EquationTerm['coefficient'] }) {
  return (
    <span className="font-serif">
      β<sub>{typeof coefficient === 'number' ? coefficient : `${coefficient[0]}–${coefficient[1]}`}</sub>
    </span>
  );
}

const ROLE_TONE: Record<EquationTerm['role'], string> = {
  intercept: '',
  intervention: 'text-estuary-900',
  modifier: 'text-estuary-900',
  product: 'text-estuary-700 font-semibold',
  covariate: 'text-ink-700',
};

/** The equation, wrapping between terms; the plain-text form is its accessible name. */
export function ModelEquationView({ equation, testId = 'model-equation' }: { equation: ModelEquation; testId?: string }) {
  const left =
    equation.left.kind === 'probability' ? (
      <>
        P(<Var>{equation.left.column}</Var> = {equation.left.event})
      </>
    ) : (
      <>
        E(<Var>{equation.left.column}</Var>)
      </>
    );
  return (
    <div className="text-[0.95rem] leading-loose" data-testid={testId}>
      <p className="m-0" aria-label={equationText(equation)} role="math">
        <span className="whitespace-nowrap">
          {equation.link === 'identity' ? left : (
            <>
              <span className="font-serif">{equation.link}</span>({left})
            </>
          )}{' '}
          =
        </span>{' '}
        {equation.offset && (
          <span className="whitespace-nowrap text-ink-700" data-role="offset">
            <span className="font-serif">log</span>(<Var>{equation.offset}</Var>) +{' '}
          </span>
        )}
        {equation.terms.map((term, index) => (
          <Fragment key={index}>
            {index > 0 && ' + '}
            <span className={`whitespace-nowrap ${ROLE_TONE[term.role]}`} data-role={term.role}>
              <Coefficient coefficient={term.coefficient} />
              {term.factors.length > 0 && '·'}
              {term.factors.map((factor, k) => (
                <Fragment key={k}>
                  {k > 0 && '×'}
                  <Factor factor={factor} />
                </Fragment>
              ))}
            </span>
          </Fragment>
        ))}
      </p>
      {equation.notes.length > 0 && (
        <ul className="mt-1.5 text-xs text-ink-500 leading-snug space-y-0.5 list-none p-0">
          {equation.notes.map((note) => (
            <li key={note}>{note}</li>
          ))}
        </ul>
      )}
    </div>
  );
}
