/**
 * A brief's content as an HTML fragment: the draft preview, the published page and the
 * frozen snapshot are this one rendering, so the preview is exactly what publishes. Every
 * text is escaped; the plot is inline SVG with a <title> per point (its hover text) and
 * the caption as its text alternative.
 */
import type { BriefContent } from './briefContent';
import { plotLayout } from './briefPlot';

const escapeMap: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };
export const escapeHtml = (text: string) => text.replace(/[&<>"']/g, (char) => escapeMap[char]);

export interface BriefHtmlMeta {
  /** "Version 2, published 2 December 2026 at 09:14 UTC", or "Draft preview". */
  status: string;
}

function keyTableHtml(content: BriefContent): string {
  const table = content.keyTable;
  if (!table) return '';
  const arms = table.rows[0]?.cells.map((cell) => cell.exposure) ?? [];
  const events = table.rows[0]?.cells[0]?.events !== null;
  const head = arms.map((arm) => `<th scope="colgroup" colspan="${events ? 4 : 3}">${escapeHtml(`${content.exposure.column} = ${arm}`)}</th>`).join('');
  const sub = arms.map(() => `<th scope="col">People</th>${events ? '<th scope="col">Events</th>' : ''}<th scope="col">${content.outcomeLabel === 'risk' ? 'Risk %' : 'Mean'}</th><th scope="col">${escapeHtml(content.measureName)} (${escapeHtml(content.ciLabel)})</th>`).join('');
  const rows = table.rows.map((row) => {
    const cells = row.cells.map((cell) => `<td data-count>${escapeHtml(cell.n)}</td>${events ? `<td data-count>${escapeHtml(cell.events ?? '')}</td>` : ''}<td>${escapeHtml(cell.outcome)}</td><td>${escapeHtml(cell.effect)}</td>`).join('');
    const caution = row.small ? ' <span class="brief-small" title="Small stratum: read with caution">small stratum, read with caution</span>' : '';
    return `<tr${row.small ? ' data-small-stratum' : ''}><th scope="row">${escapeHtml(row.level)}${row.isReference ? ' (reference)' : ''}${caution}</th>${cells}` +
      `<td data-count>${escapeHtml(row.within.n)}</td><td>${escapeHtml(row.within.effect)}</td><td>${escapeHtml(row.reri)}</td><td>${escapeHtml(row.ratioOfRatios)}</td></tr>`;
  }).join('');
  return `<div class="brief-table-wrap"><table class="brief-table" data-testid="brief-key-table">
<caption>Each combination of ${escapeHtml(content.exposure.column)} and ${escapeHtml(content.modifier.column)} against one reference (${escapeHtml(table.referenceLabel)}), the intervention's effect within each stratum, and the interaction measures.</caption>
<thead><tr><th scope="col" rowspan="2">${escapeHtml(content.modifier.column)}</th>${head}<th scope="col" rowspan="2">People in stratum</th><th scope="col" rowspan="2">Effect of ${escapeHtml(content.exposure.column)} within stratum (${escapeHtml(content.ciLabel)})</th><th scope="col" rowspan="2">RERI (${escapeHtml(content.ciLabel)})</th><th scope="col" rowspan="2">Ratio of ratios (${escapeHtml(content.ciLabel)})</th></tr>
<tr>${sub}</tr></thead><tbody>${rows}</tbody></table></div>`;
}

function slopesHtml(content: BriefContent): string {
  if (!content.slopes) return '';
  const rows = content.slopes.map((slope) => `<tr><th scope="row">${escapeHtml(slope.label)}</th><td>${escapeHtml(slope.at)}</td><td>${escapeHtml(slope.effect)}</td><td>${escapeHtml(slope.p)}</td></tr>`).join('');
  const range = content.effectRange ? `<p data-testid="brief-effect-range">${escapeHtml(content.effectRange)}</p>` : '';
  return `${range}<div class="brief-table-wrap"><table class="brief-table" data-testid="brief-slopes-table"><caption>The intervention's effect at the marked points of ${escapeHtml(content.modifier.column)}.</caption>
<thead><tr><th scope="col">Marked point</th><th scope="col">${escapeHtml(content.modifier.column)}</th><th scope="col">${escapeHtml(content.measureName)} (${escapeHtml(content.ciLabel)})</th><th scope="col">p</th></tr></thead><tbody>${rows}</tbody></table></div>`;
}

function absoluteHtml(content: BriefContent): string {
  const parts: string[] = [];
  const absolute = content.absolute;
  if (absolute) {
    const [header, ...rows] = absolute.table;
    const body = rows.map((row, index) => {
      const caution = absolute.small[index] ? ' <span class="brief-small" title="Small stratum: read with caution">small stratum, read with caution</span>' : '';
      return `<tr${absolute.small[index] ? ' data-small-stratum' : ''}><th scope="row">${escapeHtml(row[0])}${caution}</th>${row.slice(1).map((cell) => `<td>${escapeHtml(cell)}</td>`).join('')}</tr>`;
    }).join('');
    parts.push(`<div class="brief-table-wrap"><table class="brief-table" data-testid="brief-absolute-table"><caption>Absolute effects. ${escapeHtml(absolute.explanation)}${absolute.headline ? ` ${escapeHtml(absolute.headline)}` : ''}</caption>
<thead><tr>${header.map((cell) => `<th scope="col">${escapeHtml(cell)}</th>`).join('')}</tr></thead><tbody>${body}</tbody></table></div>`);
  }
  if (content.eValues) {
    parts.push(`<p data-testid="brief-evalues">${escapeHtml(content.eValues.sentence)}</p><ul>${content.eValues.lines.map((line) => `<li>${escapeHtml(line)}</li>`).join('')}</ul>`);
  }
  return parts.join('');
}

/** The plot as inline SVG. */
export function plotSvg(content: BriefContent, width = 640): string {
  const plot = content.plot;
  if (!plot || plot.points.length === 0) return '';
  const layout = plotLayout(plot, width);
  const axisY = layout.top + layout.rowHeight * plot.points.length + 4;
  const ticks = layout.ticks.map((tick) => `<line x1="${tick.x}" y1="${layout.top}" x2="${tick.x}" y2="${axisY}" stroke="#e8e4d9"/><text x="${tick.x}" y="${axisY + 14}" text-anchor="middle" font-size="11" fill="#3d4a52">${escapeHtml(tick.text)}</text>`).join('');
  const rows = layout.rows.map((row) => `<g><title>${escapeHtml(row.hover)}</title>` +
    `<text x="${layout.labelWidth - 8}" y="${row.y + 4}" text-anchor="end" font-size="12" fill="#18232b">${escapeHtml(row.label)}${row.small ? ' †' : ''}</text>` +
    `<line x1="${row.lower}" y1="${row.y}" x2="${row.upper}" y2="${row.y}" stroke="#1f5f74" stroke-width="2"/>` +
    `<rect x="${row.point - 4}" y="${row.y - 4}" width="8" height="8" fill="#1f5f74"/></g>`).join('');
  return `<figure class="brief-figure" data-testid="brief-plot"><svg role="img" aria-labelledby="brief-plot-caption" viewBox="0 0 ${layout.width} ${layout.height}" width="100%" style="max-width:${layout.width}px">` +
    `${ticks}<line x1="${layout.nullX}" y1="${layout.top}" x2="${layout.nullX}" y2="${axisY}" stroke="#8a2f1d" stroke-dasharray="4 3"/>${rows}` +
    `<text x="${(layout.labelWidth + layout.width) / 2}" y="${axisY + 28}" text-anchor="middle" font-size="11" fill="#3d4a52">${escapeHtml(plot.axisLabel)}</text></svg>` +
    `<figcaption id="brief-plot-caption"><strong>${escapeHtml(plot.title)}.</strong> ${escapeHtml(plot.caption)}${plot.points.some((point) => point.small) ? ' † small stratum, read with caution.' : ''}</figcaption></figure>`;
}

/** The whole brief as an HTML fragment (styled by .brief-* rules in the global stylesheet). */
export function renderBriefHtml(content: BriefContent, meta: BriefHtmlMeta): string {
  const section = (id: string, heading: string, body: string) => `<section class="brief-section" aria-labelledby="${id}"><h2 id="${id}">${heading}</h2>${body}</section>`;
  const cautions = [...content.cautions.map((text) => `<li>${escapeHtml(text)}</li>`), ...content.ownCautions.map((text) => `<li data-own-caution>${escapeHtml(text)}</li>`)].join('');
  const signOff = content.signOff
    ? `<p data-testid="brief-sign-off">Signed off by <strong>${escapeHtml(content.signOff.by)}</strong> on ${escapeHtml(content.signOff.at)}.${content.signOff.meaning ? ` Stated meaning: “${escapeHtml(content.signOff.meaning)}”` : ' No meaning was stated with the sign-off.'}</p>`
    : '<p>No sign-off is recorded.</p>';
  return `<article class="brief" data-testid="brief-document">
<header class="brief-header"><p class="brief-eyebrow">Internal brief · ${escapeHtml(meta.status)}</p><h1>${escapeHtml(content.title)}</h1>
<p class="brief-question">${escapeHtml(content.question)}</p></header>
<aside class="brief-cautions" role="note" aria-label="Cautions" data-testid="brief-cautions"><p><strong>Before reading this brief</strong></p><ul>${cautions}</ul></aside>
${section('brief-summary', 'Summary', `<p data-testid="brief-summary">${escapeHtml(content.summary)}</p>`)}
${section('brief-key-table', 'Key table', `${keyTableHtml(content)}${slopesHtml(content)}${absoluteHtml(content)}<p>${escapeHtml(content.interactionTest)}</p>
<p>Adjusted for: ${content.adjustment.length ? escapeHtml(content.adjustment.join('; ')) : 'nothing (no covariates)'}.</p><p class="brief-note" data-testid="brief-small-cell-note">${escapeHtml(content.smallCellNote)}</p>`)}
${content.plot ? section('brief-plot-heading', 'Plot', plotSvg(content)) : ''}
${content.credibility ? section('brief-credibility', 'How credible is the subgroup claim', `<p data-testid="brief-credibility">${escapeHtml(content.credibility)}</p>`) : ''}
${section('brief-methods', 'Methods', `<p data-testid="brief-methods">${escapeHtml(content.methods)}</p>`)}
${section('brief-limitations', 'Limitations', `<ul data-testid="brief-limitations">${content.limitations.map((text) => `<li>${escapeHtml(text)}</li>`).join('')}</ul>`)}
${section('brief-signoff', 'Sign-off', signOff)}
<footer class="brief-footer"><p>Run ${escapeHtml(content.provenance.runId)} · ${escapeHtml(content.provenance.extract)} · SHA-256 <span class="brief-mono">${escapeHtml(content.provenance.extractSha256)}</span> · engine ${escapeHtml(content.provenance.engineVersion)}${content.provenance.seed !== null ? ` · seed ${content.provenance.seed}` : ''}</p>
<p>${escapeHtml(content.cautions[0] ?? '')} ${escapeHtml(content.cautions.at(-1) ?? '')}</p></footer>
</article>`;
}
