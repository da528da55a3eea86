/** The run comparison's overlaid forest plot island (client:only: plotly needs the browser). */
import { useMemo } from 'react';
import { PlotFrame } from './PlotFrame';
import { comparisonForestFigure, type ComparisonForestInput } from './comparisonForest';

export default function ComparisonForestPlot({ runs }: { runs: { name: string; result: ComparisonForestInput }[] }) {
  const figure = useMemo(() => comparisonForestFigure(runs), [runs]);
  return figure ? <PlotFrame figure={figure} testId="plot-comparison-forest" /> : null;
}
