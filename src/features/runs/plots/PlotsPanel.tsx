/**
 * The plots of a result, laid out for screen and print: the stratum forest plot and the
 * profile plot side by side, and for continuous modifiers the significance band plot
 * below them. Mount with client:only="react" on the results page only.
 */
import AbsoluteEffectsPlot from './AbsoluteEffectsPlot';
import type { PlotInput } from './plotInput';
import ProfilePlot from './ProfilePlot';
import SignificanceBandPlot from './SignificanceBandPlot';
import StratumForestPlot from './StratumForestPlot';

export interface PlotsPanelProps {
  result: PlotInput;
}

export default function PlotsPanel({ result }: PlotsPanelProps) {
  const continuous = result.modifier.type === 'continuous';
  return (
    <section aria-labelledby="plots-heading" className="space-y-4" data-testid="plots-panel">
      <h2 id="plots-heading" className="text-lg">Plots</h2>
      <div className="grid gap-4 lg:grid-cols-2 print:grid-cols-1">
        <StratumForestPlot result={result} />
        <ProfilePlot result={result} />
      </div>
      {continuous && <SignificanceBandPlot result={result} />}
      {result.standardized && <AbsoluteEffectsPlot result={result} />}
    </section>
  );
}
