/**
 * One plot of the results: a figure with its heading, the plotly chart (scatter traces
 * only, from the basic bundle) and a caption that is the plot's text alternative. Load it
 * only through client:only="react" islands: plotly needs the browser.
 */
import createPlotlyComponent from 'react-plotly.js/factory';
import Plotly from 'plotly.js-basic-dist';
import { useId } from 'react';
import { PLOT_CONFIG, type PlotFigure } from './plotFigures';

const Plot = createPlotlyComponent(Plotly);

export function PlotFrame({ figure, testId }: { figure: PlotFigure; testId: string }) {
  const captionId = useId();
  return (
    <figure className="card px-4 pt-4 pb-3 m-0 break-inside-avoid" data-testid={testId} aria-describedby={captionId}>
      <h3 className="text-base font-semibold px-1 mb-1">{figure.title}</h3>
      {/* Not role="img": the chart holds plotly's own buttons, and an image may not hold controls. The caption is the text alternative. */}
      <div>
        <Plot
          data={figure.data}
          layout={{ ...figure.layout, autosize: true }}
          config={PLOT_CONFIG}
          useResizeHandler
          style={{ width: '100%', height: `${Number(figure.layout.height ?? 360)}px` }}
        />
      </div>
      <figcaption id={captionId} className="px-1 pt-2 text-xs leading-relaxed text-ink-700 border-t border-linen-200 mt-2">
        {figure.caption}
      </figcaption>
    </figure>
  );
}
