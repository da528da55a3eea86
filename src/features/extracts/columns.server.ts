/**
 * Columns of a stored version: decoded into typed arrays for the engine (loadAnalysisData,
 * the one way another area reads an extract's data) and for the row preview, whose
 * decoded columns and sort orders are cached per version (versions are immutable).
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { ExtractVersion } from '../../../db/models';
import type { EngineData } from '@/engine';
import { sequelize as appSequelize } from '@/lib/server/db';
import { badRequest } from '@/lib/server/errors';
import { decodeCodes, decodeNumericValues } from './columnStore';
import { toEngineData, type StoredColumn } from './engineData';
import type { DictionaryEntry } from './extracts.schema';


/**
 * Loads columns of one version as typed arrays. The version must be visible to the
 * transaction's identity (row-level security). `missingValues` are the codes the analyst
 * declared missing per column at confirmation (pass them to toEngineData). Versions are
 * immutable, so decoded columns are cached per version after this check.
 */
export async function loadColumns(
  transaction: Transaction,
  versionId: string,
  names?: readonly string[],
): Promise<{ rowCount: number; columns: StoredColumn[]; missingValues: Record<string, string[]> }> {
  // Bulk column storage: the bytea values of many columns at once, decoded below.
  const rows = await appSequelize.query<{ name: string; storage: 'numeric' | 'text'; row_count: number; values: Buffer; levels: string[] | null }>(
    `SELECT name, storage, row_count, values, levels FROM extract_columns
      WHERE version_id = :versionId ${names ? 'AND name IN (:names)' : ''} ORDER BY position`,
    { replacements: { versionId, names: names ?? [] }, type: QueryTypes.SELECT, transaction },
  );
  const rowCount = rows[0]?.row_count ?? 0;
  const columns = rows.map((r): StoredColumn =>
    r.storage === 'numeric'
      ? { name: r.name, storage: 'numeric', values: decodeNumericValues(r.values, r.row_count) }
      : { name: r.name, storage: 'text', codes: decodeCodes(r.values, r.row_count, r.levels?.length ?? 0), levels: r.levels ?? [] },
  );
  const version = await ExtractVersion.findByPk(versionId, { attributes: ['dictionary'], transaction });
  // jsonb as confirmVersion wrote it.
  const dictionary = (version?.dictionary ?? []) as DictionaryEntry[];
  const missingValues: Record<string, string[]> = {};
  for (const entry of dictionary) {
    if (entry.missingValues && entry.missingValues.length > 0) missingValues[entry.name] = entry.missingValues;
  }
  return { rowCount, columns, missingValues };
}

/** The unit the confirmed dictionary gives a column (such as "bed-days"), or null. */
export async function columnUnit(transaction: Transaction, versionId: string, name: string): Promise<string | null> {
  const version = await ExtractVersion.findByPk(versionId, { attributes: ['dictionary'], transaction });
  const entry = ((version?.dictionary ?? []) as DictionaryEntry[]).find((d) => d.name === name);
  return entry?.unit?.trim() || null;
}

/**
 * The columns an analysis uses, engine-ready: the one way another area (runs) reads an
 * extract version's data, with the analyst's declared missing-value codes applied. The
 * version must be visible to the transaction's identity.
 */
export async function loadAnalysisData(
  transaction: Transaction,
  versionId: string,
  roles: Record<string, 'categorical' | 'continuous'>,
): Promise<EngineData> {
  const loaded = await loadColumns(transaction, versionId, Object.keys(roles));
  return toEngineData(loaded.rowCount, loaded.columns, roles, loaded.missingValues);
}

const previewCache = new Map<string, { rowCount: number; columns: StoredColumn[]; order: Map<string, Uint32Array> }>();
const PREVIEW_CACHE_SIZE = 4;

export interface RowsPage {
  columns: string[];
  rows: (string | number | null)[][];
  total: number;
  page: number;
  pageSize: number;
  sort: { column: string; direction: 'asc' | 'desc' } | null;
}

/** One page of rows, sorted on the server. The caller has checked the version is visible. */
export async function previewRows(
  transaction: Transaction,
  versionId: string,
  query: { page: number; pageSize: number; sort?: string; direction: 'asc' | 'desc' },
): Promise<RowsPage> {
  let cached = previewCache.get(versionId);
  if (!cached) {
    const loaded = await loadColumns(transaction, versionId);
    cached = { ...loaded, order: new Map() };
    previewCache.set(versionId, cached);
    if (previewCache.size > PREVIEW_CACHE_SIZE) previewCache.delete(previewCache.keys().next().value as string);
  }
  const { rowCount, columns } = cached;
  const sortColumn = query.sort ? columns.find((c) => c.name === query.sort) : undefined;
  if (query.sort && !sortColumn) throw badRequest(`There is no column “${query.sort}” to sort by.`);
  let order: Uint32Array | null = null;
  if (sortColumn) {
    const key = `${sortColumn.name}:${query.direction}`;
    order = cached.order.get(key) ?? null;
    if (!order) {
      order = sortOrder(sortColumn, rowCount, query.direction);
      cached.order.set(key, order);
    }
  }
  const startRow = (query.page - 1) * query.pageSize;
  const rows: (string | number | null)[][] = [];
  for (let r = startRow; r < Math.min(rowCount, startRow + query.pageSize); r += 1) {
    const i = order ? order[r] : r;
    rows.push(columns.map((c) => {
      if (c.storage === 'numeric') return Number.isNaN(c.values[i]) ? null : c.values[i];
      return c.codes[i] < 0 ? null : c.levels[c.codes[i]];
    }));
  }
  return {
    columns: columns.map((c) => c.name), rows, total: rowCount, page: query.page, pageSize: query.pageSize,
    sort: sortColumn ? { column: sortColumn.name, direction: query.direction } : null,
  };
}

/** A stable sort order of one column; missing values last whatever the direction. */
function sortOrder(column: StoredColumn, rowCount: number, direction: 'asc' | 'desc'): Uint32Array {
  const order = new Uint32Array(rowCount);
  for (let i = 0; i < rowCount; i += 1) order[i] = i;
  const sign = direction === 'asc' ? 1 : -1;
  if (column.storage === 'numeric') {
    const v = column.values;
    order.sort((a, b) => {
      const x = v[a];
      const y = v[b];
      if (Number.isNaN(x)) return Number.isNaN(y) ? a - b : 1;
      if (Number.isNaN(y)) return -1;
      return x === y ? a - b : (x - y) * sign;
    });
  } else {
    const rank = new Int32Array(column.levels.length);
    const sorted = column.levels.map((l, i) => [l, i] as const).sort((p, q) => p[0].localeCompare(q[0]));
    sorted.forEach(([, code], position) => { rank[code] = position; });
    const codes = column.codes;
    order.sort((a, b) => {
      const x = codes[a];
      const y = codes[b];
      if (x < 0) return y < 0 ? a - b : 1;
      if (y < 0) return -1;
      return rank[x] === rank[y] ? a - b : (rank[x] - rank[y]) * sign;
    });
  }
  return order;
}
