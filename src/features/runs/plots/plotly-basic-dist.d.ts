/** plotly.js-basic-dist ships no types: the little of its API that Crossgrain calls. */
declare module 'plotly.js-basic-dist' {
  interface PlotlyBasic {
    /** Saves the chart in the graph div as an image file, in the browser (no server involved). */
    downloadImage(graphDiv: HTMLElement, options: { format: 'png' | 'svg'; filename: string; width?: number; height?: number; scale?: number }): Promise<string>;
  }
  const Plotly: PlotlyBasic;
  export default Plotly;
}
