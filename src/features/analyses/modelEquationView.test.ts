import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { ModelEquationView } from './ModelEquationView';
import type { FormColumn } from './formColumns';
import { modelEquation } from './modelEquation';

const columns: FormColumn[] = [
  { name: 'readmitted_30d', type: 'binary', description: '', levels: ['0', '1'], levelsTruncated: false, numeric: null },
  { name: 'call_back', type: 'binary', description: '', levels: ['0', '1'], levelsTruncated: false, numeric: null },
  { name: 'age_band', type: 'categorical', description: '', levels: ['18-44', '45-64'], levelsTruncated: false, numeric: null },
];

describe('ModelEquationView', () => {
  it('renders variables in <var>, coefficients as β with <sub>, and × between product factors', () => {
    const equation = modelEquation(
      {
        outcome: { column: 'readmitted_30d', type: 'binary' },
        exposure: { column: 'call_back', reference: '0' },
        modifier: { column: 'age_band', type: 'categorical', reference: '18-44' },
        covariates: [],
        model: 'logistic',
        ci: { level: 0.95, method: 'delta' },
      },
      columns,
    );
    const html = renderToStaticMarkup(createElement(ModelEquationView, { equation }));
    // Four terms: β0, β1·call_back, β2·[age_band = 45-64], β3·call_back×[age_band = 45-64].
    expect(html.match(/β<sub>\d<\/sub>/g)).toEqual(['β<sub>0</sub>', 'β<sub>1</sub>', 'β<sub>2</sub>', 'β<sub>3</sub>']);
    expect(html).toContain('<var class="font-serif italic text-ink-900">call_back</var>×<span>[<var class="font-serif italic text-ink-900">age_band</var>');
    expect(html).toContain('aria-label="logit(P(readmitted_30d = 1)) = β0 + β1·call_back + β2·[age_band = 45-64] + β3·call_back×[age_band = 45-64]"');
    expect(html).not.toMatch(/\$|\\beta|~/);
  });
});
