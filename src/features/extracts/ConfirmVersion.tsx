/**
 * Confirm a version: check or correct each column's type, describe the columns, and sign
 * the de-identification statement. After this the version is ready and never changes.
 */
import { useMutation } from '@tanstack/react-query';
import { useState, type SyntheticEvent } from 'react';
import { ApiError, apiFetch } from '@/lib/client/api';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import type { AnalysableColumnType } from './extracts.schema';
import { parseScores } from './orderedScores';

interface ColumnChoice {
  name: string;
  inferredType: AnalysableColumnType;
  allowed: AnalysableColumnType[];
  summary: string;
  /** Tokens read as missing, in words (`NA 12, "." 3`); '' when none. */
  tokens: string;
  /** Levels that look like undeclared missing-value codes. */
  suspects: string[];
}

interface Props {
  extractId: string;
  versionId: string;
  columns: ColumnChoice[];
  statement: string;
  signerName: string;
}

const TYPE_LABEL: Record<AnalysableColumnType, string> = {
  binary: 'Binary (two values)',
  categorical: 'Categorical (levels)',
  continuous: 'Continuous (a measurement)',
  count: 'Count (whole numbers)',
};

function Confirm({ extractId, versionId, columns, statement, signerName }: Props) {
  const [entries, setEntries] = useState(() => columns.map((c) => ({ name: c.name, type: c.inferredType, description: '', missing: '', unit: '', order: '' })));
  const unreadable = entries.map((entry) => (entry.type === 'categorical' && parseScores(entry.order) === null ? 'Write the scores as level = number, separated by commas, e.g. low = 1, mid = 2, high = 3.' : null));
  const [signedName, setSignedName] = useState('');
  const [agreed, setAgreed] = useState(false);
  const confirm = useMutation({
    mutationFn: () =>
      apiFetch(`/api/extracts/${extractId}/versions/${versionId}/confirm`, {
        method: 'POST',
        body: {
          attestation: { signedName },
          columns: entries.map(({ missing, unit, order, ...entry }) => {
            const scores = entry.type === 'categorical' ? parseScores(order) : null;
            return { ...entry, missingValues: splitCodes(missing), ...(unit.trim() ? { unit: unit.trim() } : {}), ...(scores && Object.keys(scores).length > 0 ? { ordered: { scores } } : {}) };
          }),
        },
      }),
    onSuccess: () => window.location.reload(),
  });
  const error = confirm.error instanceof ApiError ? confirm.error : null;
  const submit = (event: SyntheticEvent) => {
    event.preventDefault();
    if (agreed && signedName.trim() && unreadable.every((problem) => problem === null)) confirm.mutate();
  };
  return (
    <form onSubmit={submit} className="card p-5" aria-labelledby="confirm-heading" noValidate>
      <HydratedFieldset>
      <h2 id="confirm-heading" className="text-lg">Confirm the data dictionary</h2>
      <p className="text-sm text-ink-700 mt-1">Check the type Crossgrain inferred for each column, correct it where it is wrong, and describe what the column holds. Analyses offer columns by these types.</p>
      <p className="text-sm text-ink-700 mt-1">A categorical column whose levels have an order (such as frailty low, mid, high) can be declared ordered under “Order scores”: give every level a score, e.g. low = 1, mid = 2, high = 3. An analysis with it as the modifier then adds a test for trend in the intervention's effect across the levels, using these scores.</p>
      <p className="text-sm text-ink-700 mt-1">Empty fields and NA, N/A, NULL, “.”, “-” and NaN (in any letter case) are always read as missing. Under “Also missing”, list further codes that mean “not known” in a column, separated by commas (such as 999 or unknown); analyses of this version leave those rows out.</p>
      <table className="data-table w-full text-sm mt-4">
        <thead><tr><th>Column</th><th>What we saw</th><th>Type</th><th>Description</th><th>Also missing</th><th>Order scores</th></tr></thead>
        <tbody>
          {entries.map((entry, index) => (
            <tr key={entry.name}>
              <td className="font-semibold font-mono">{entry.name}</td>
              <td className="text-ink-500">
                {columns[index].summary}
                {columns[index].tokens && <p className="text-xs mt-1" data-testid={`tokens-${entry.name}`}>Read as missing: {columns[index].tokens}</p>}
                {columns[index].suspects.length > 0 && (
                  <p className="text-xs mt-1 text-ochre-700" role="note" data-testid={`suspect-${entry.name}`}>
                    {columns[index].suspects.map((level) => `“${level}”`).join(', ')} may stand for a missing value.{' '}
                    <button type="button" className="underline"
                      onClick={() => setEntries((all) => all.map((x, i) => (i === index ? { ...x, missing: joinCodes([...splitCodes(x.missing), ...columns[index].suspects]) } : x)))}>
                      Declare {columns[index].suspects.length === 1 ? 'it' : 'them'} missing
                    </button>
                  </p>
                )}
              </td>
              <td>
                <select aria-label={`Type of ${entry.name}`} className="field-input" value={entry.type}
                  onChange={(e) => setEntries((all) => all.map((x, i) => (i === index ? { ...x, type: e.target.value as AnalysableColumnType } : x)))}>
                  {columns[index].allowed.map((t) => <option key={t} value={t}>{TYPE_LABEL[t]}</option>)}
                </select>
                {error?.fieldMessage(`columns.${index}.type`) && <p className="field-error">{error.fieldMessage(`columns.${index}.type`)}</p>}
              </td>
              <td>
                <input aria-label={`Description of ${entry.name}`} className="field-input" value={entry.description} maxLength={2000}
                  onChange={(e) => setEntries((all) => all.map((x, i) => (i === index ? { ...x, description: e.target.value } : x)))} />
                {(entry.type === 'continuous' || entry.type === 'count') && (
                  <input aria-label={`Unit of ${entry.name}`} className="field-input mt-1" value={entry.unit} maxLength={40} placeholder="Unit, e.g. bed-days"
                    onChange={(e) => setEntries((all) => all.map((x, i) => (i === index ? { ...x, unit: e.target.value } : x)))} />
                )}
              </td>
              <td>
                <input aria-label={`Further missing-value codes of ${entry.name}`} className="field-input" value={entry.missing} placeholder="e.g. 999, unknown"
                  onChange={(e) => setEntries((all) => all.map((x, i) => (i === index ? { ...x, missing: e.target.value } : x)))} />
                {error?.fieldMessage(`columns.${index}.missingValues`) && <p className="field-error">{error.fieldMessage(`columns.${index}.missingValues`)}</p>}
              </td>
              <td>
                {entry.type === 'categorical' ? (
                  <>
                    <input aria-label={`Order scores of ${entry.name}`} className="field-input" value={entry.order} placeholder="e.g. low = 1, mid = 2" aria-invalid={unreadable[index] !== null}
                      onChange={(e) => setEntries((all) => all.map((x, i) => (i === index ? { ...x, order: e.target.value } : x)))} />
                    {(unreadable[index] ?? error?.fieldMessage(`columns.${index}.ordered`)) && <p className="field-error">{unreadable[index] ?? error?.fieldMessage(`columns.${index}.ordered`)}</p>}
                  </>
                ) : <span className="text-xs text-ink-500">Categorical columns only</span>}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <fieldset className="mt-5 border border-ochre-100 bg-ochre-50 rounded-sm p-4">
        <legend className="font-semibold text-ochre-700 px-1">De-identification statement</legend>
        <p className="text-sm">{statement}</p>
        <label className="flex items-center gap-2 mt-3 text-sm">
          <input type="checkbox" checked={agreed} onChange={(e) => setAgreed(e.target.checked)} /> I have checked the extract and make this statement.
        </label>
        <div className="mt-3 max-w-sm">
          <label className="field-label" htmlFor="signed-name">Your full name, as signature</label>
          <input id="signed-name" className="field-input" value={signedName} onChange={(e) => setSignedName(e.target.value)} placeholder={signerName} />
        </div>
      </fieldset>
      {error && !error.details && <p role="alert" className="field-error mt-3">{error.message}</p>}
      {error?.details && <p role="alert" className="field-error mt-3">{error.message}</p>}
      <button type="submit" className="btn btn-primary mt-4" disabled={!agreed || !signedName.trim() || confirm.isPending}>
        {confirm.isPending ? 'Confirming…' : 'Sign and confirm this version'}
      </button>
      <p className="text-xs text-ink-500 mt-2">Once confirmed, the version and its dictionary never change. A correction is a new upload.</p>
    </HydratedFieldset>
    </form>
  );
}

/** Codes typed as a comma-separated list, trimmed, empty ones dropped. */
function splitCodes(text: string): string[] {
  return text.split(',').map((code) => code.trim()).filter((code) => code !== '');
}

function joinCodes(codes: string[]): string {
  return [...new Set(codes)].join(', ');
}

export default function ConfirmVersion(props: Props) {
  return (
    <QueryRoot>
      <Confirm {...props} />
    </QueryRoot>
  );
}
