/** The profile plot island: the outcome by modifier level, one line per arm. */
import { useMemo } from 'react';
import type { PlotInput } from './plotInput';
import { PlotFrame } from './PlotFrame';
import { profileFigure } from './plotFigures';

export default function ProfilePlot({ result }: { result: PlotInput }) {
  const figure = useMemo(() => profileFigure(result), [result]);
  return <PlotFrame figure={figure} testId="plot-profile" />;
}
