/**
 * What the analysis pages need in one read: the analysis and its form columns. The runs
 * belong to the runs area, which depends on analyses; the page adds them (listRuns).
 */
import type { Transaction } from 'sequelize';
import { ExtractVersion } from '../../../db/models';
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
  const version = await ExtractVersion.findByPk(analysis.extractVersionId, { attributes: ['dictionary', 'profile'], transaction });
  // jsonb as stored: the dictionary and profile confirmed and written by the extracts area.
  const dictionary = (version?.dictionary ?? []) as DictionaryEntry[];
  const profile = (version?.profile ?? []) as ColumnProfile[];
  return {
    analysis,
    columns: formColumns(dictionary, profile),
  };
}
