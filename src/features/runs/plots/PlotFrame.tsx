/**
 * One plot of the results: a figure with its heading, Crossgrain's own small toolbar
 * (download as PNG or SVG, reset the view after zooming), the plotly chart (scatter
 * traces only, from the basic bundle, without plotly's own toolbar) and a caption that is
 * the plot's text alternative. Load it only through client:only="react" islands: plotly
 * needs the browser. Images are made in the browser and saved as files: nothing leaves
 * the machine.
 */
import createPlotlyComponent from 'react-plotly.js/factory';
import Plotly from 'plotly.js-basic-dist';
import { useEffect, useId, useRef, useState } from 'react';
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

/** A file name from the plot's title: "effect-of-call_back-by-age_band". */
export function plotFileName(title: string): string {
  return title.toLowerCase().replace(/[^a-z0-9_]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 80) || 'crossgrain-plot';
}

export function PlotFrame({ figure, testId }: { figure: PlotFigure; testId: string }) {
  const captionId = useId();
  const headingId = useId();
  const narrow = useNarrow();
  const layout = narrow ? narrowLayout(figure.layout) : figure.layout;
  const graph = useRef<HTMLElement | null>(null);
  // Bumping the key draws the chart afresh from its figure: the view as it first was.
  const [drawing, setDrawing] = useState(0);
  const [status, setStatus] = useState('');
  const download = (format: 'png' | 'svg') => {
    if (!graph.current) return;
    setStatus('');
    Plotly.downloadImage(graph.current, { format, filename: plotFileName(figure.title), scale: format === 'png' ? 2 : 1 })
      .then(() => setStatus(`Saved as ${format.toUpperCase()}.`))
      .catch(() => setStatus('The image could not be made; try again.'));
  };
  return (
    <figure className="card px-4 pt-4 pb-3 m-0 break-inside-avoid" data-testid={testId} aria-describedby={captionId} aria-labelledby={headingId}>
      <div className="flex flex-wrap items-start justify-between gap-2 px-1 mb-1">
        <h3 id={headingId} className="text-base font-semibold">{figure.title}</h3>
        <div role="toolbar" aria-label={`Plot tools: ${figure.title}`} className="flex gap-1.5 print:hidden" data-testid="plot-tools">
          <button type="button" className="btn btn-secondary text-xs px-2 py-0.5" onClick={() => download('png')}>Download PNG</button>
          <button type="button" className="btn btn-secondary text-xs px-2 py-0.5" onClick={() => download('svg')}>Download SVG</button>
          <button type="button" className="btn btn-secondary text-xs px-2 py-0.5" onClick={() => setDrawing((count) => count + 1)}>Reset view</button>
        </div>
      </div>
      <p className="sr-only" role="status">{status}</p>
      {/* Not role="img": the figure holds controls, and an image may not. The caption is the text alternative. */}
      <div>
        <Plot
          key={drawing}
          data={figure.data}
          layout={{ ...layout, autosize: true }}
          config={PLOT_CONFIG}
          useResizeHandler
          onInitialized={(_, div) => { graph.current = div; }}
          onUpdate={(_, div) => { graph.current = div; }}
          style={{ width: '100%', height: `${Number(layout.height ?? 360)}px` }}
        />
      </div>
      <figcaption id={captionId} className="px-1 pt-2 text-xs leading-relaxed text-ink-700 border-t border-linen-200 mt-2">
        {figure.caption}
      </figcaption>
    </figure>
  );
}
