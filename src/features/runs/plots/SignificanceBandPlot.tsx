/** The significance band plot island (continuous modifiers): the conditional effect with its band and the Johnson-Neyman boundaries. */
import { useMemo } from 'react';
import type { PlotInput } from './plotInput';
import { PlotFrame } from './PlotFrame';
import { significanceBandFigure } from './plotFigures';

export default function SignificanceBandPlot({ result }: { result: PlotInput }) {
  const figure = useMemo(() => significanceBandFigure(result), [result]);
  if (!figure) return null;
  return <PlotFrame figure={figure} testId="plot-significance-band" />;
}
