/**
 * Upload an extract: drag and drop or pick a CSV, watch the transfer and then the server's
 * processing (reading, screening, profiling, storing), cancel at any point. A refusal
 * lists its reasons; nothing of a refused file is kept.
 */
import { useQuery } from '@tanstack/react-query';
import { useEffect, useRef, useState, type DragEvent } from 'react';
import { apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';
import type { ExtractView, VersionView } from './extracts.server';
import { EXTRACTS_CHANGED_EVENT } from './extractsEvents';

type Phase =
  | { kind: 'idle' }
  | { kind: 'sending'; loaded: number; total: number }
  | { kind: 'processing'; extractId: string; versionId: string }
  | { kind: 'refused-at-once'; message: string }
  | { kind: 'cancelled' };

const STAGE_LABEL: Record<string, string> = {
  receiving: 'Receiving',
  reading: 'Reading and checking the file',
  screening: 'Screening for identifiers',
  profiling: 'Profiling columns',
  storing: 'Storing',
};

interface Props {
  /** Upload target: a new extract in this initiative, or a new version of this extract. */
  initiativeId?: string;
  extractId?: string;
  maxBytes: number;
  /** The identifiers the deployment's privacy regime names, as examples (src/lib/privacyRegime.ts). */
  identifierExamples: string;
  /** The rules the regime follows, in words. */
  regimeCitation: string;
}

function formatBytes(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
  if (bytes >= 1024) return `${(bytes / 1024).toFixed(0)} KB`;
  return `${bytes} B`;
}

function ProgressBar({ percent, label }: { percent: number; label: string }) {
  return (
    <div className="mt-3">
      <div className="flex justify-between text-sm"><span>{label}</span><span className="tabular-nums">{Math.round(percent)} %</span></div>
      <div className="h-2.5 mt-1 rounded-full bg-linen-200 overflow-hidden" role="progressbar" aria-label={label} aria-valuemin={0} aria-valuemax={100} aria-valuenow={Math.round(percent)}>
        <div className="h-full bg-estuary-500 transition-[width] duration-300" style={{ width: `${Math.max(2, Math.min(100, percent))}%` }} />
      </div>
    </div>
  );
}

interface RefusalReasonView {
  message: string;
  column?: string;
  rules?: string[];
}

/**
 * Offers to keep the columns flagged by their name alone (their values matched no
 * identifier pattern), asking why they are not identifiers; one reason covers them all.
 */
function KeepColumns({ columns, onKeep }: { columns: string[]; onKeep: (columns: string[], reason: string) => void }) {
  const [open, setOpen] = useState(false);
  const [chosen, setChosen] = useState<string[]>(columns);
  const [reason, setReason] = useState('');
  const one = columns.length === 1;
  if (!open) {
    return (
      <button type="button" className="btn btn-secondary mt-2 ml-2" onClick={() => setOpen(true)} data-testid="keep-columns">
        {one ? 'Keep this column: it is not an identifier' : 'Keep these columns: they are not identifiers'}
      </button>
    );
  }
  return (
    <div className="mt-3 border border-linen-300 bg-white rounded-sm p-3 text-ink-900" data-testid="keep-form">
      <p className="text-sm">
        {one ? <><strong>{columns[0]}</strong> was flagged by its name only; its values match</> : 'These columns were flagged by their names only; their values match'} no
        identifier pattern. Your reason and your name are kept with the version and in the audit trail.
      </p>
      {!one && (
        <fieldset className="mt-2">
          <legend className="field-label">Columns to keep</legend>
          {columns.map((column) => (
            <label key={column} className="flex gap-2 items-center text-sm">
              <input type="checkbox" checked={chosen.includes(column)}
                onChange={(e) => setChosen(e.target.checked ? [...chosen, column] : chosen.filter((c) => c !== column))} />
              {column}
            </label>
          ))}
        </fieldset>
      )}
      <label className="field-label mt-2" htmlFor="keep-reason">Why {one ? 'is it' : 'are they'} not an identifier?</label>
      <textarea id="keep-reason" className="field-input" rows={2} maxLength={1000} value={reason} onChange={(e) => setReason(e.target.value)}
        placeholder="e.g. 0/1 flag: whether the patient got the follow-up phone call" />
      <button type="button" className="btn btn-primary mt-2" disabled={!reason.trim() || chosen.length === 0} onClick={() => onKeep(chosen, reason.trim())}>
        Upload again keeping {chosen.join(', ')}
      </button>
    </div>
  );
}

function Processing({ extractId, versionId, onCancel, onRetryWithout, onRetryKeeping, onSettled }: {
  extractId: string;
  versionId: string;
  onCancel: () => void;
  onRetryWithout: (columns: string[]) => void;
  onRetryKeeping: (columns: string[], reason: string) => void;
  /** Called once the upload has left processing, so the panel takes a new file again. */
  onSettled: () => void;
}) {
  const status = useQuery({
    queryKey: ['extract', extractId],
    queryFn: () => apiFetch<ExtractView>(`/api/extracts/${extractId}`),
    refetchInterval: (query) => {
      const version = query.state.data?.versions.find((v) => v.versionId === versionId);
      return !version || version.status === 'processing' ? 500 : false;
    },
  });
  const version: VersionView | undefined = status.data?.versions.find((v) => v.versionId === versionId);
  const settled = Boolean(version && version.status !== 'processing');
  const stored = Boolean(version && (version.status === 'needs-review' || version.status === 'ready'));
  useEffect(() => {
    if (settled) onSettled();
  }, [settled, onSettled]);
  useEffect(() => {
    if (stored) window.dispatchEvent(new CustomEvent(EXTRACTS_CHANGED_EVENT, { detail: { extractId } }));
  }, [stored, extractId]);
  if (!version || version.status === 'processing') {
    return (
      <div data-testid="upload-processing">
        <ProgressBar percent={version?.percent ?? 90} label={STAGE_LABEL[version?.stage ?? 'reading'] ?? 'Processing'} />
        <button type="button" className="btn btn-secondary mt-3" onClick={onCancel}>Cancel upload</button>
      </div>
    );
  }
  if (version.status === 'refused' || version.status === 'failed') {
    const reasons = (version.reasons ?? []) as RefusalReasonView[];
    // Only a column flagged by its name alone may be kept; value-based findings never.
    const keepable = reasons.filter((r) => r.column && r.rules?.length && r.rules.every((rule) => rule === 'column-name')).map((r) => r.column ?? '');
    return (
      <div role="alert" className="mt-3 border border-brick-100 bg-brick-50 rounded-sm p-3 text-sm text-brick-700" data-testid="upload-refused">
        <p className="font-semibold">{version.status === 'refused' ? 'The file was refused. Nothing from it was kept.' : 'The upload did not finish. Nothing from it was kept.'}</p>
        <ul className="list-disc ml-5 mt-1 space-y-0.5">{reasons.map((r, i) => <li key={i}>{r.message}</li>)}</ul>
        {version.status === 'refused' && (() => {
          const flagged = [...new Set(reasons.map((r) => r.column).filter((c): c is string => Boolean(c)))];
          return (
            <>
              <p className="mt-2">Remove the flagged columns from the file (or replace them with grouped values) and upload again
                {flagged.length > 0 && ', or upload the same file again leaving them out: their values are then never stored'}.</p>
              {flagged.length > 0 && (
                <button type="button" className="btn btn-secondary mt-2" onClick={() => onRetryWithout(flagged)} data-testid="retry-without">
                  Upload again without {flagged.join(', ')}
                </button>
              )}
              {keepable.length > 0 && <KeepColumns columns={keepable} onKeep={onRetryKeeping} />}
            </>
          );
        })()}
      </div>
    );
  }
  return (
    <div role="status" className="mt-3 border border-reed-100 bg-reed-50 rounded-sm p-3 text-sm text-reed-700" data-testid="upload-done">
      <p className="font-semibold">Received: {version.rows?.toLocaleString('en-GB')} rows and {version.columns} columns.</p>
      <p>Next, check the column types, describe the columns and sign the de-identification statement.</p>
      <a className="btn btn-primary mt-2" href={`/extracts/${extractId}`}>Review version {version.version}</a>
    </div>
  );
}

function Uploader({ initiativeId, extractId, maxBytes, identifierExamples, regimeCitation }: Props) {
  const [file, setFile] = useState<File | null>(null);
  const [name, setName] = useState('');
  const [phase, setPhase] = useState<Phase>({ kind: 'idle' });
  const [dragging, setDragging] = useState(false);
  const [settled, setSettled] = useState(false);
  const request = useRef<XMLHttpRequest | null>(null);
  const input = useRef<HTMLInputElement>(null);

  const choose = (chosen: File | undefined) => {
    if (!chosen) return;
    setFile(chosen);
    if (!name) setName(chosen.name.replace(/\.(csv|tsv|txt)$/i, ''));
    setPhase({ kind: 'idle' });
  };
  const onDrop = (event: DragEvent) => {
    event.preventDefault();
    setDragging(false);
    if (!busy) choose(event.dataTransfer.files[0]);
  };
  const tooLarge = file ? file.size > maxBytes : false;

  const send = (drop: string[] = [], keep: { columns: string[]; reason: string } = { columns: [], reason: '' }) => {
    if (!file || tooLarge) return;
    const params = new URLSearchParams();
    if (!extractId) params.set('name', name.trim());
    if (drop.length) params.set('drop', drop.join(','));
    for (const column of keep.columns) params.append('keep', column);
    if (keep.columns.length) params.set('keepReason', keep.reason);
    const query = params.toString() ? `?${params}` : '';
    const url = extractId ? `/api/extracts/${extractId}/versions${query}` : `/api/initiatives/${initiativeId}/extracts${query}`;
    const xhr = new XMLHttpRequest();
    request.current = xhr;
    xhr.open('POST', url);
    xhr.setRequestHeader('Content-Type', 'text/csv');
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.upload.onprogress = (event) => setPhase({ kind: 'sending', loaded: event.loaded, total: event.total || file.size });
    xhr.onload = () => {
      const body = xhr.responseText ? JSON.parse(xhr.responseText) : {};
      if (xhr.status === 202) setPhase({ kind: 'processing', extractId: body.extractId, versionId: body.versionId });
      else setPhase({ kind: 'refused-at-once', message: body.error?.message ?? `The server answered ${xhr.status}.` });
    };
    xhr.onerror = () => setPhase({ kind: 'refused-at-once', message: 'The connection failed before the upload finished. Nothing was kept.' });
    xhr.onabort = () => setPhase({ kind: 'cancelled' });
    setSettled(false);
    setPhase({ kind: 'sending', loaded: 0, total: file.size });
    xhr.send(file);
  };

  const cancel = async () => {
    if (phase.kind === 'sending') request.current?.abort();
    if (phase.kind === 'processing') {
      await apiFetch(`/api/extracts/${phase.extractId}/versions/${phase.versionId}/cancel`, { method: 'POST', body: {} }).catch(() => undefined);
      setPhase({ kind: 'cancelled' });
    }
  };

  const hydrated = useHydrated();
  const busy = !hydrated || phase.kind === 'sending' || (phase.kind === 'processing' && !settled);
  const markSettled = () => setSettled(true);
  return (
    <section className="card p-5" aria-labelledby="upload-heading" data-testid="upload-panel" data-hydrated={hydrated}>
      <h2 id="upload-heading" className="text-lg">{extractId ? 'Upload a new version' : 'Upload an extract'}</h2>
      <p className="text-sm text-ink-700 mt-1">
        A de-identified CSV with a header row (comma, semicolon or tab), UTF-8, at most {formatBytes(maxBytes)}. Columns that look like
        identifiers ({identifierExamples}) refuse the file. The screen follows {regimeCitation}.
      </p>
      <div
        className={`mt-4 border-2 border-dashed rounded-md p-6 text-center ${dragging ? 'border-estuary-500 bg-estuary-50' : 'border-linen-300 bg-linen-50'}`}
        onDragOver={(e) => { e.preventDefault(); setDragging(true); }}
        onDragLeave={() => setDragging(false)}
        onDrop={onDrop}
      >
        <p className="text-sm">{file ? <><strong>{file.name}</strong> · {formatBytes(file.size)}</> : 'Drop the CSV file here, or'}</p>
        <button type="button" className="btn btn-secondary mt-2" onClick={() => input.current?.click()} disabled={busy}>Choose a file…</button>
        <input ref={input} type="file" accept=".csv,.tsv,.txt,text/csv" className="sr-only" aria-label="CSV file" data-testid="upload-file" disabled={busy}
          onChange={(e) => choose(e.target.files?.[0])} />
      </div>
      {tooLarge && <p role="alert" className="field-error">This file is larger than the limit of {formatBytes(maxBytes)}.</p>}
      {!extractId && (
        <div className="mt-4 max-w-md">
          <label className="field-label" htmlFor="extract-name">Name of the extract</label>
          <input id="extract-name" className="field-input" value={name} onChange={(e) => setName(e.target.value)} disabled={busy} placeholder="e.g. Discharges Jan–Sep 2026" />
        </div>
      )}
      <div className="mt-4 flex gap-3">
        <button type="button" className="btn btn-primary" onClick={() => send()} disabled={!file || tooLarge || busy || (!extractId && !name.trim())}>Upload</button>
        {phase.kind === 'sending' && <button type="button" className="btn btn-secondary" onClick={() => void cancel()}>Cancel upload</button>}
      </div>
      {phase.kind === 'sending' && <ProgressBar percent={(phase.loaded / Math.max(1, phase.total)) * 100} label={`Sending ${formatBytes(phase.loaded)} of ${formatBytes(phase.total)}`} />}
      {phase.kind === 'processing' && (
        <Processing extractId={phase.extractId} versionId={phase.versionId} onCancel={() => void cancel()} onRetryWithout={(columns) => send(columns)}
          onRetryKeeping={(columns, reason) => send([], { columns, reason })} onSettled={markSettled} />
      )}
      {phase.kind === 'refused-at-once' && (
        <p role="alert" className="mt-3 border border-brick-100 bg-brick-50 rounded-sm p-3 text-sm text-brick-700" data-testid="upload-refused">
          <strong>The file was refused. Nothing from it was kept.</strong> {phase.message}
        </p>
      )}
      {phase.kind === 'cancelled' && <p role="status" className="mt-3 text-sm text-ink-700">Upload cancelled. Nothing was kept.</p>}
    </section>
  );
}

export default function UploadPanel(props: Props) {
  return (
    <QueryRoot>
      <Uploader {...props} />
    </QueryRoot>
  );
}
