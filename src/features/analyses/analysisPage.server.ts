/**
 * What the analysis pages need in one read: the analysis and its form columns. The runs
 * belong to the runs area, which depends on analyses; the page adds them (listRuns).
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '../../lib/server/db';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';
import { getAnalysis, type AnalysisView } from './analyses.server';
import { formColumns, type FormColumn } from './formColumns';

export interface AnalysisPage {
  analysis: AnalysisView;
  columns: FormColumn[];
}

export async function loadAnalysisPage(transaction: Transaction, analysisId: string): Promise<AnalysisPage | null> {
  const analysis = await getAnalysis(transaction, analysisId);
  if (!analysis) return null;
  const [version] = await sequelize.query<{ dictionary: DictionaryEntry[] | null; profile: ColumnProfile[] }>(
    'SELECT dictionary, profile FROM extract_versions WHERE id = :id',
    { replacements: { id: analysis.extractVersionId }, type: QueryTypes.SELECT, transaction },
  );
  return {
    analysis,
    columns: formColumns(version?.dictionary ?? [], version?.profile ?? []),
  };
}
