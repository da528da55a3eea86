/**
 * The plots of a result, laid out for screen and print: the stratum forest plot and the
 * profile plot side by side. A continuous modifier's effect curve leads the results
 * instead (SignificanceBandPlot, in the result tables' lead slot), unless `withCurve`.
 * Mount with client:only="react" on the results page only.
 */
import AbsoluteEffectsPlot from './AbsoluteEffectsPlot';
import type { PlotInput } from './plotInput';
import ProfilePlot from './ProfilePlot';
import SignificanceBandPlot from './SignificanceBandPlot';
import StratumForestPlot from './StratumForestPlot';

export interface PlotsPanelProps {
  result: PlotInput;
  /** Draw the effect curve of a continuous modifier here too (default false: it leads the page). */
  withCurve?: boolean;
}

export default function PlotsPanel({ result, withCurve = false }: PlotsPanelProps) {
  const continuous = result.modifier.type === 'continuous' && withCurve;
  return (
    <section aria-labelledby="plots-heading" className="space-y-4" data-testid="plots-panel">
      <h2 id="plots-heading" className="text-lg">{result.modifier.type === 'continuous' ? 'More plots' : 'Plots'}</h2>
      <div className="grid gap-4 lg:grid-cols-2 print:grid-cols-1">
        <StratumForestPlot result={result} />
        <ProfilePlot result={result} />
      </div>
      {continuous && <SignificanceBandPlot result={result} />}
      {result.standardized && <AbsoluteEffectsPlot result={result} />}
    </section>
  );
}
