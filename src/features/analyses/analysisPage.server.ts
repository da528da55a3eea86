/** What the analysis pages need in one read: the analysis, its runs, and its form columns. */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from '../../lib/server/db';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';
import { listRuns, type RunView } from '../runs/runs.server';
import { getAnalysis, type AnalysisView } from './analyses.server';
import { formColumns, type FormColumn } from './specForm';

export interface AnalysisPage {
  analysis: AnalysisView;
  runs: RunView[];
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
    runs: await listRuns(transaction, analysisId),
    columns: formColumns(version?.dictionary ?? [], version?.profile ?? []),
  };
}
