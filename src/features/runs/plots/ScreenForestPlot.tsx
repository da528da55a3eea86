/** The subgroup screen's forest plot island: every modifier's effects, grouped by modifier. */
import { useMemo } from 'react';
import { PlotFrame } from './PlotFrame';
import { screenForestFigure, type ScreenPlotInput } from './screenForest';

export default function ScreenForestPlot({ result }: { result: ScreenPlotInput }) {
  const figure = useMemo(() => screenForestFigure(result), [result]);
  return figure ? <PlotFrame figure={figure} testId="plot-screen-forest" /> : null;
}
