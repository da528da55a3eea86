/** The absolute-effects plot island: standardized risks under each arm per modifier level. */
import { useMemo } from 'react';
import { absoluteEffectsFigure } from './absoluteEffectsFigure';
import type { PlotInput } from './plotInput';
import { PlotFrame } from './PlotFrame';

export default function AbsoluteEffectsPlot({ result }: { result: PlotInput }) {
  const figure = useMemo(() => absoluteEffectsFigure(result), [result]);
  return figure ? <PlotFrame figure={figure} testId="plot-absolute-effects" /> : null;
}
