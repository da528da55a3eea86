/** The effect curve island (continuous modifiers): the effect across the modifier, its band, the marked points, thin data and both Johnson-Neyman boundaries. */
import { useMemo } from 'react';
import type { PlotInput } from './plotInput';
import { PlotFrame } from './PlotFrame';
import { effectCurveFigure } from './effectCurve';

export default function SignificanceBandPlot({ result }: { result: PlotInput }) {
  const figure = useMemo(() => effectCurveFigure(result), [result]);
  if (!figure) return null;
  return <PlotFrame figure={figure} testId="plot-effect-curve" />;
}
