/**
 * One plot of the results: a figure with its heading, the plotly chart (scatter traces
 * only, from the basic bundle) and a caption that is the plot's text alternative. Load it
 * only through client:only="react" islands: plotly needs the browser.
 */
import createPlotlyComponent from 'react-plotly.js/factory';
import Plotly from 'plotly.js-basic-dist';
import { useEffect, useId, useState } from 'react';
import { NARROW_PLOT_WIDTH, narrowLayout } from './narrowLayout';
import { PLOT_CONFIG, type PlotFigure } from './plotFigures';

const Plot = createPlotlyComponent(Plotly);

/** Whether the window is narrow (a phone), following rotation and resizing. */
function useNarrow(): boolean {
  const query = `(max-width: ${NARROW_PLOT_WIDTH - 1}px)`;
  const [narrow, setNarrow] = useState(() => window.matchMedia(query).matches);
  useEffect(() => {
    const media = window.matchMedia(query);
    const change = () => setNarrow(media.matches);
    media.addEventListener('change', change);
    return () => media.removeEventListener('change', change);
  }, [query]);
  return narrow;
}

export function PlotFrame({ figure, testId }: { figure: PlotFigure; testId: string }) {
  const captionId = useId();
  const narrow = useNarrow();
  const layout = narrow ? narrowLayout(figure.layout) : figure.layout;
  return (
    <figure className="card px-4 pt-4 pb-3 m-0 break-inside-avoid" data-testid={testId} aria-describedby={captionId}>
      <h3 className="text-base font-semibold px-1 mb-1">{figure.title}</h3>
      {/* Not role="img": the chart holds plotly's own buttons, and an image may not hold controls. The caption is the text alternative. */}
      <div>
        <Plot
          data={figure.data}
          layout={{ ...layout, autosize: true }}
          config={PLOT_CONFIG}
          useResizeHandler
          style={{ width: '100%', height: `${Number(layout.height ?? 360)}px` }}
        />
      </div>
      <figcaption id={captionId} className="px-1 pt-2 text-xs leading-relaxed text-ink-700 border-t border-linen-200 mt-2">
        {figure.caption}
      </figcaption>
    </figure>
  );
}
