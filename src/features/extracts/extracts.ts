/**
 * The pure ingest pipeline of a cohort extract: read (streaming), screen, profile and
 * encode, with no database. The server side streams the request body into
 * {@link ingestExtract}, refuses on a thrown {@link ExtractRefusalError} or on findings,
 * and otherwise writes `encoded` columns and the profile in one transaction.
 */
import { readCsv, type CsvReadSummary, type ReadCsvOptions } from './csvReader';
import { ColumnSet, type ColumnData, type ColumnSetOptions } from './columnAccumulator';
import { buildColumnProfile, summarizeColumn } from './columnProfile';
import { encodeColumn, type EncodedColumn } from './columnStore';
import { refusalsByColumn, type ColumnRefusal, type Finding } from './identifierFindings';
import { DEFAULT_PRIVACY_REGIME } from '@/lib/privacyRegime';
import { DEFAULT_SCREEN_OPTIONS, screenColumn, type ScreenOptions } from './identifierScreen';
import type { ColumnProfile, ProcessingStage } from './extracts.schema';

export { ExtractRefusalError } from './extractRefusal';

/** Options of {@link ingestExtract}. */
export interface IngestOptions extends Omit<ReadCsvOptions, 'onProgress'>, ColumnSetOptions {
  /** Size of the upload when known (Content-Length), for progress and to size the columns. */
  expectedBytes?: number;
  /** Screen regime and thresholds; defaults in identifierScreen.ts and src/lib/privacyRegime.ts. */
  screen?: Partial<ScreenOptions>;
  /** Progress: stage and percentage of the whole ingest (reading is 0-90%). */
  onProgress?: (progress: { stage: ProcessingStage; percent: number; bytesRead: number; rows: number }) => void;
  /** Whether to encode the columns even when the screen found something. Default false. */
  encodeWhenRefused?: boolean;
}

/** Everything the pipeline learnt about an upload that was read to the end. */
export interface IngestedExtract {
  read: CsvReadSummary;
  /** Columns kept (dropped ones excluded), in file order. */
  columns: ColumnData[];
  droppedColumns: string[];
  profile: ColumnProfile[];
  findings: Finding[];
  /** One message per flagged column. */
  refusals: ColumnRefusal[];
  /** Whether the upload must be refused (any finding). */
  refused: boolean;
  /** Storage form of the columns; empty when refused (unless encodeWhenRefused). */
  encoded: EncodedColumn[];
}

/** The columns of an upload that has been read to the end. */
export interface ReadExtract {
  read: CsvReadSummary;
  columns: ColumnData[];
  droppedColumns: string[];
  /** Every name of the file's header, in order (dropped and skipped columns included). */
  header: string[];
  /** The file line (header on line 1) of data row `row` (0-based); give it to the engine as `lineOfRow`. */
  lineOfRow: (row: number) => number;
}

/** What the screen and the profile say about the columns. */
export interface ReviewedExtract {
  profile: ColumnProfile[];
  /** Findings that refuse the upload (kept columns' name findings excluded). */
  findings: Finding[];
  refusals: ColumnRefusal[];
  refused: boolean;
  /** Name findings of the columns the analyst kept (see {@link keepableColumn}). */
  kept: Finding[];
  /** Columns asked to be kept that the screen did not flag at all. */
  keptButNotFlagged: string[];
}

/**
 * Whether a column's findings allow the analyst to keep it: it was flagged by its name
 * alone. A value-based finding (phone numbers, full dates, e-mail addresses, ages over 89,
 * near-unique codes ...) can never be overridden.
 */
export function keepableColumn(findings: readonly Finding[]): boolean {
  return findings.length > 0 && findings.every((f) => f.rule === 'column-name');
}

type ChunkSource = AsyncIterable<Uint8Array | string> | Iterable<Uint8Array | string>;

/**
 * Stage 1: streams the upload through the reader into columns (0-90% of the progress).
 * Throws {@link ExtractRefusalError} when the file itself is unacceptable.
 */
export async function readExtractColumns(source: ChunkSource, options: IngestOptions = {}): Promise<ReadExtract> {
  const { onProgress, expectedBytes } = options;
  const sink = new ColumnSet(options);
  let lastPercent = -1;
  const read = await readCsv(source, sink, {
    ...options,
    onProgress: ({ bytesRead, recordsRead }) => {
      sink.noteBytesRead(bytesRead);
      if (!onProgress) return;
      const percent = expectedBytes ? Math.min(90, Math.floor((bytesRead / expectedBytes) * 90)) : 0;
      if (percent === lastPercent) return;
      lastPercent = percent;
      onProgress({ stage: 'reading', percent, bytesRead, rows: recordsRead });
    },
  });
  return {
    read, columns: sink.finish(), droppedColumns: sink.droppedColumns.slice(), header: sink.headerNames.slice(),
    lineOfRow: (row) => sink.lineOfRow(row),
  };
}

/**
 * Stage 2: the identifier screen and the profile of every column (synchronous, no I/O).
 * The screen follows `screen.regime` (the server passes the deployment's setting; without
 * it, the default regime of src/lib/privacyRegime.ts).
 * Columns named in `keep` that were flagged by their name alone are kept: their findings
 * move to `kept` and their profile is built as if unflagged. A kept column with a
 * value-based finding still refuses the upload, with the same message.
 */
export function reviewExtractColumns(
  columns: readonly ColumnData[],
  screen: Partial<ScreenOptions> = {},
  keep: readonly string[] = [],
): ReviewedExtract {
  const screenOptions: ScreenOptions = { ...DEFAULT_SCREEN_OPTIONS, regime: DEFAULT_PRIVACY_REGIME, ...screen };
  const findings: Finding[] = [];
  const kept: Finding[] = [];
  const profile: ColumnProfile[] = [];
  const keepNames = new Set(keep);
  const flagged = new Set<string>();
  for (const column of columns) {
    const summary = summarizeColumn(column);
    const columnFindings = screenColumn(
      {
        name: column.name,
        index: column.index,
        nonMissing: summary.nonMissing,
        patterns: column.patterns,
        numericValues: column.kind === 'numeric' ? column.values : column.numericValues,
        rowCount: column.rowCount,
        distinct: summary.distinctIsLowerBound ? null : summary.distinct,
        codeLike: column.kind === 'text' || summary.integerValued,
        levelsOverflowed: column.kind === 'text' && column.levelsOverflowed,
        levelCap: column.kind === 'text' ? column.levelCap : 0,
      },
      screenOptions,
    );
    if (columnFindings.length > 0) flagged.add(column.name);
    if (keepNames.has(column.name) && keepableColumn(columnFindings)) {
      kept.push(...columnFindings);
      const columnProfile = buildColumnProfile(column, summary, []);
      profile.push({ ...columnProfile, notes: [...columnProfile.notes, 'Flagged by its name only; kept by the uploader as not an identifier.'] });
      continue;
    }
    findings.push(...columnFindings);
    profile.push(buildColumnProfile(column, summary, columnFindings));
  }
  const keptButNotFlagged = keep.filter((name) => !flagged.has(name));
  return { profile, findings, refusals: refusalsByColumn(findings), refused: findings.length > 0, kept, keptButNotFlagged };
}

/**
 * Reads a CSV upload from `source` (a Node Readable, a web ReadableStream or any async
 * iterable of byte chunks), screens and profiles every column and encodes the columns:
 * {@link readExtractColumns}, {@link reviewExtractColumns} and {@link encodeColumn} in turn.
 *
 * Throws {@link ExtractRefusalError} when the file itself is unacceptable (size, encoding,
 * shape); returns with `refused: true` and the findings when the identifier screen flags
 * columns. Memory: the columns (8 bytes per numeric value, 4 per text value, 1 bit per
 * missing flag) plus one chunk; the file is never held.
 */
export async function ingestExtract(source: ChunkSource, options: IngestOptions = {}): Promise<IngestedExtract> {
  const { read, columns, droppedColumns } = await readExtractColumns(source, options);
  const progress = (stage: ProcessingStage, percent: number): void =>
    options.onProgress?.({ stage, percent, bytesRead: read.byteCount, rows: read.recordCount });
  progress('screening', 90);
  const review = reviewExtractColumns(columns, options.screen);
  progress('profiling', 95);
  const encoded =
    !review.refused || options.encodeWhenRefused
      ? columns.filter((c) => c.kind === 'numeric' || !c.levelsOverflowed).map(encodeColumn)
      : [];
  progress('storing', 96);
  return { read, columns, droppedColumns, ...review, encoded };
}
