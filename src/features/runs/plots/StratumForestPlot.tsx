/** The stratum forest plot island: the intervention's effect per modifier level with its interval. */
import { useMemo } from 'react';
import type { PlotInput } from './plotInput';
import { PlotFrame } from './PlotFrame';
import { stratumForestFigure } from './plotFigures';

export default function StratumForestPlot({ result }: { result: PlotInput }) {
  const figure = useMemo(() => stratumForestFigure(result), [result]);
  return <PlotFrame figure={figure} testId="plot-stratum-forest" />;
}
