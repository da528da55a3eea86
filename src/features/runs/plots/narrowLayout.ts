/**
 * A plot's layout on a narrow screen (a phone, under 640 CSS pixels): slimmer margins, a
 * slightly smaller font, and the legend laid flat under the plot, where its entries can
 * wrap across the width instead of covering the title or running off the side.
 */
export const NARROW_PLOT_WIDTH = 640;

export function narrowLayout(layout: Record<string, unknown>): Record<string, unknown> {
  const font = (layout.font ?? {}) as Record<string, unknown>;
  const height = Number(layout.height ?? 360);
  // Axis titles in a smaller type, so a long one ("Odds ratio (95 % CI), log scale") fits the narrow plot.
  const axes = Object.fromEntries(
    Object.entries(layout)
      .filter(([key, value]) => /^[xy]axis\d*$/.test(key) && typeof value === 'object' && value !== null)
      .map(([key, value]) => {
        const axis = value as Record<string, unknown>;
        const title = (axis.title ?? {}) as Record<string, unknown>;
        return [key, { ...axis, tickfont: { size: 10 }, title: { ...title, font: { size: 10 } } }];
      }),
  );
  return {
    ...layout,
    font: { ...font, size: 11 },
    ...axes,
    margin: { l: 44, r: 20, t: 28, b: 48 },
    legend: { orientation: 'h', x: 0, xanchor: 'left', y: -0.22, yanchor: 'top', font: { size: 11 } },
    // Room for a legend of two or three rows below the axis title.
    height: height + 40,
  };
}
