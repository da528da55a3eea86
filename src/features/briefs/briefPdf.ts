/**
 * A brief as a PDF, drawn on the server with pdfkit: Noto Sans embedded (subset) from the
 * WOFF files @fontsource/noto-sans ships (unpacked once per process, woffFont.ts), the plot as
 * vector paths, the caution in every page's footer with the page number, document
 * metadata (title, author, subject, dates), A4 or US Letter, and real text that can be
 * selected and read aloud. The same BriefContent as the page, so the same suppressed counts.
 */
import { createRequire } from 'node:module';
import PDFDocument from 'pdfkit';
import { STANDING_CAUTION } from '@/lib/cautions';
import type { BriefContent } from './briefContent';
import { plotLayout } from './briefPlot';
import { fontFromWoff } from './woffFont';

const require = createRequire(import.meta.url);
const FONT = {
  regular: require.resolve('@fontsource/noto-sans/files/noto-sans-latin-400-normal.woff'),
  bold: require.resolve('@fontsource/noto-sans/files/noto-sans-latin-700-normal.woff'),
};

export type PageSize = 'A4' | 'LETTER';

export interface PdfMeta {
  author: string;
  status: string;
  createdAt: Date;
  /** Set on the retraction copy: printed on every page. */
  retraction?: { reason: string; at: string } | null;
}

/** Characters outside the font's Latin set, spelled in ones it has. */
const SPELLED: Record<string, string> = { 'χ': 'chi', '∞': 'infinity', '≥': '>=', '≤': '<=', '→': '->', '±': '+/-', '†': '*' };
const COVERED = /[\u0000-\u00ff\u0131\u0152\u0153\u02bb\u02bc\u02c6\u02da\u02dc\u2000-\u201f\u2022\u2026\u2030-\u206f\u20ac\u2122\u2191\u2193\u2212\u2215]/;

/** The text with every character the embedded font cannot draw replaced. */
export function pdfText(text: string): string {
  return [...text].map((char) => (COVERED.test(char) ? char : (SPELLED[char] ?? '?'))).join('');
}

const INK = '#18232b';
const MUTED = '#3d4a52';
const ACCENT = '#1f5f74';
const BRICK = '#8a2f1d';

/** Renders the brief; resolves with the PDF bytes. */
export function renderBriefPdf(content: BriefContent, pageSize: PageSize, meta: PdfMeta): Promise<Buffer> {
  const margin = 56;
  const doc = new PDFDocument({
    size: pageSize, margins: { top: margin, bottom: margin + 30, left: margin, right: margin }, bufferPages: true, lang: 'en-GB', displayTitle: true, tagged: true,
    info: {
      Title: pdfText(content.title), Author: pdfText(meta.author), Subject: pdfText(`Internal brief: ${content.analysisTitle}`),
      Keywords: 'Crossgrain; internal brief; exploratory; effect modification', Creator: 'Crossgrain', Producer: 'Crossgrain',
      CreationDate: meta.createdAt, ModDate: meta.createdAt,
    },
  });
  const chunks: Buffer[] = [];
  doc.on('data', (chunk: Buffer) => chunks.push(chunk));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  doc.registerFont('Noto', fontFromWoff(FONT.regular));
  doc.registerFont('Noto-Bold', fontFromWoff(FONT.bold));
  const width = doc.page.width - margin * 2;
  const text = (value: string, options: { size?: number; bold?: boolean; color?: string; gap?: number } = {}) => {
    doc.font(options.bold ? 'Noto-Bold' : 'Noto').fontSize(options.size ?? 10).fillColor(options.color ?? INK).text(pdfText(value), { width });
    doc.moveDown(options.gap ?? 0.4);
  };
  const heading = (value: string) => {
    doc.moveDown(0.4);
    text(value, { size: 13, bold: true, color: ACCENT, gap: 0.2 });
  };

  if (meta.retraction) text(`RETRACTED on ${meta.retraction.at}: ${meta.retraction.reason}`, { size: 12, bold: true, color: BRICK });
  text(`Internal brief · ${meta.status}`, { size: 9, color: MUTED, gap: 0.2 });
  text(content.title, { size: 20, bold: true, gap: 0.2 });
  text(content.question, { size: 11, color: MUTED });

  doc.moveDown(0.2);
  text('Before reading this brief', { bold: true, size: 10, gap: 0.1 });
  for (const caution of [...content.cautions, ...content.ownCautions]) text(`• ${caution}`, { size: 9.5, gap: 0.1 });

  heading('Summary');
  text(content.summary, { size: 10.5 });

  heading('Key table');
  drawKeyTable(doc, content, width, margin);
  if (content.absolute) {
    text(`Absolute effects. ${content.absolute.explanation}${content.absolute.headline ? ` ${content.absolute.headline}` : ''}`, { size: 8.5 });
    const [header, ...rows] = content.absolute.table;
    const marked = rows.map((row, index) => (content.absolute?.small[index] ? [`${row[0]} †`, ...row.slice(1)] : row));
    drawRows(doc, [header, ...marked], [0.16, 0.15, 0.15, 0.2, 0.14, 0.2], width, margin);
  }
  if (content.eValues) {
    text(content.eValues.sentence, { size: 8.5 });
    for (const line of content.eValues.lines) text(`• ${line}`, { size: 8.5, gap: 0.1 });
  }
  text(content.interactionTest);
  text(`Adjusted for: ${content.adjustment.length ? content.adjustment.join('; ') : 'nothing (no covariates)'}.`);
  text(content.smallCellNote, { size: 8.5, color: MUTED });

  if (content.plot && content.plot.points.length > 0) {
    // Keep the heading with its figure.
    if (doc.y + plotLayout(content.plot, width).height + 40 > doc.page.height - doc.page.margins.bottom) doc.addPage();
    heading('Plot');
    drawPlot(doc, content, width, margin);
    text(`${content.plot.title}. ${content.plot.caption}`, { size: 8.5, color: MUTED });
  }
  if (content.credibility) {
    heading('How credible is the subgroup claim');
    text(content.credibility);
  }
  heading('Methods');
  text(content.methods);
  heading('Limitations');
  for (const limitation of content.limitations) text(`• ${limitation}`, { gap: 0.15 });
  heading('Sign-off');
  text(content.signOff
    ? `Signed off by ${content.signOff.by} on ${content.signOff.at}. ${content.signOff.meaning ? `Stated meaning: "${content.signOff.meaning}"` : 'No meaning was stated with the sign-off.'}`
    : 'No sign-off is recorded.');
  text(`Run ${content.provenance.runId} · ${content.provenance.extract} · SHA-256 ${content.provenance.extractSha256} · engine ${content.provenance.engineVersion}` +
    `${content.provenance.seed !== null ? ` · seed ${content.provenance.seed}` : ''}`, { size: 8, color: MUTED });

  // Footers last, on every buffered page: the caution and the page number.
  const range = doc.bufferedPageRange();
  for (let index = range.start; index < range.start + range.count; index += 1) {
    doc.switchToPage(index);
    const bottom = doc.page.height - margin;
    doc.page.margins.bottom = 0;
    const prefix = meta.retraction ? 'RETRACTED. ' : '';
    doc.font('Noto').fontSize(7.5).fillColor(meta.retraction ? BRICK : MUTED)
      .text(pdfText(`${prefix}${STANDING_CAUTION}`), margin, bottom, { width: width - 70, lineBreak: true });
    doc.text(`Page ${index + 1} of ${range.count}`, margin + width - 64, bottom, { width: 64, align: 'right' });
  }
  doc.end();
  return done;
}

function drawKeyTable(doc: PDFKit.PDFDocument, content: BriefContent, width: number, margin: number): void {
  const table = content.keyTable;
  if (!table && content.slopes) {
    if (content.effectRange) {
      doc.font('Noto').fontSize(9).fillColor(INK).text(pdfText(content.effectRange), margin, doc.y, { width });
      doc.moveDown(0.4);
    }
    const header = ['marked point', content.modifier.column, `${content.measureName} (${content.ciLabel})`, 'p'];
    drawRows(doc, [header, ...content.slopes.map((slope) => [slope.label, slope.at, slope.effect, slope.p])], [0.25, 0.2, 0.4, 0.15], width, margin);
    return;
  }
  if (!table) return;
  const binary = table.rows[0]?.cells[0]?.events !== null;
  const header = [content.modifier.column];
  for (const cell of table.rows[0]?.cells ?? []) {
    header.push(`${content.exposure.column}=${cell.exposure}: people`);
    if (binary) header.push('events');
    header.push(content.outcomeLabel === 'risk' ? 'risk %' : 'mean', content.measureName);
  }
  header.push('people in stratum', `effect within stratum (${content.ciLabel})`, 'RERI', 'ratio of ratios');
  const rows = table.rows.map((row) => {
    const out = [`${row.level}${row.isReference ? ' (reference)' : ''}${row.small ? ' †' : ''}`];
    for (const cell of row.cells) {
      out.push(cell.n);
      if (binary) out.push(cell.events ?? '');
      out.push(cell.outcome, cell.effect);
    }
    out.push(row.within.n, row.within.effect, row.reri, row.ratioOfRatios);
    return out;
  });
  const count = header.length;
  const shares = header.map((_, index) => (index === 0 ? 1.1 : index >= count - 3 ? 1.6 : 0.9));
  const total = shares.reduce((a, b) => a + b, 0);
  drawRows(doc, [header, ...rows], shares.map((share) => share / total), width, margin);
  doc.font('Noto').fontSize(8).fillColor(MUTED).text(pdfText(`Reference for every combination: ${table.referenceLabel}.${rows.some((row) => row[0].endsWith('†')) ? ' † small stratum, read with caution.' : ''}`), margin, doc.y, { width });
  doc.moveDown(0.4);
}

function drawRows(doc: PDFKit.PDFDocument, rows: string[][], shares: number[], width: number, margin: number): void {
  const size = 7;
  rows.forEach((row, rowIndex) => {
    doc.font(rowIndex === 0 ? 'Noto-Bold' : 'Noto').fontSize(size);
    const heights = row.map((cell, index) => doc.heightOfString(pdfText(cell), { width: shares[index] * width - 4 }));
    const height = Math.max(...heights) + 4;
    if (doc.y + height > doc.page.height - doc.page.margins.bottom) doc.addPage();
    const y = doc.y;
    let x = margin;
    row.forEach((cell, index) => {
      doc.fillColor(INK).text(pdfText(cell), x + 2, y + 2, { width: shares[index] * width - 4 });
      x += shares[index] * width;
    });
    doc.moveTo(margin, y + height).lineTo(margin + width, y + height).lineWidth(0.4).strokeColor('#cfc8b8').stroke();
    doc.x = margin;
    doc.y = y + height;
  });
  doc.moveDown(0.3);
}

function drawPlot(doc: PDFKit.PDFDocument, content: BriefContent, width: number, margin: number): void {
  const plot = content.plot;
  if (!plot) return;
  const layout = plotLayout(plot, width);
  if (doc.y + layout.height > doc.page.height - doc.page.margins.bottom) doc.addPage();
  const top = doc.y;
  const axisY = top + layout.top + layout.rowHeight * plot.points.length + 4;
  doc.lineWidth(0.5);
  for (const tick of layout.ticks) {
    doc.moveTo(margin + tick.x, top + layout.top).lineTo(margin + tick.x, axisY).strokeColor('#e8e4d9').stroke();
    doc.font('Noto').fontSize(7.5).fillColor(MUTED).text(pdfText(tick.text), margin + tick.x - 20, axisY + 3, { width: 40, align: 'center' });
  }
  doc.moveTo(margin + layout.nullX, top + layout.top).lineTo(margin + layout.nullX, axisY).dash(3, { space: 2 }).strokeColor(BRICK).stroke().undash();
  for (const row of layout.rows) {
    const y = top + row.y;
    doc.font('Noto').fontSize(8.5).fillColor(INK).text(pdfText(`${row.label}${row.small ? ' †' : ''}`), margin, y - 5, { width: layout.labelWidth - 8, align: 'right' });
    doc.moveTo(margin + row.lower, y).lineTo(margin + row.upper, y).lineWidth(1.5).strokeColor(ACCENT).stroke();
    doc.rect(margin + row.point - 3, y - 3, 6, 6).fill(ACCENT);
  }
  doc.font('Noto').fontSize(7.5).fillColor(MUTED).text(pdfText(plot.axisLabel), margin + layout.labelWidth, axisY + 16, { width: width - layout.labelWidth, align: 'center' });
  doc.x = margin;
  doc.y = top + layout.height + 6;
}
