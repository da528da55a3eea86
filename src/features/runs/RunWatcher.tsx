/**
 * Starts a run and follows it, or follows one already under way: the stage and the share
 * of the work done (bootstrap replicates, for instance), a cancel button, and the way to
 * the results when it ends. The Run button disables itself on the first click and sends
 * an Idempotency-Key (one per intent to run, kept for retries of that intent), so a
 * double-click queues one run. When a run starts or ends, the page's runs table is
 * refreshed (refreshRunsTable.ts).
 */
import { useMutation, useQuery } from '@tanstack/react-query';
import { useEffect, useRef, useState } from 'react';
import { refreshRunsTable } from './refreshRunsTable';
import { apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';
import type { RunStatus } from './runs.schema';

interface RunStatusView {
  id: string;
  status: RunStatus;
  progress: { stage: string; fraction: number };
  error: { code: string; message: string } | null;
  cancelRequested: boolean;
}

const STAGE_LABEL: Record<string, string> = {
  queued: 'Waiting for a worker',
  loading: 'Loading the extract’s columns',
  prepare: 'Preparing the design',
  fit: 'Fitting the model',
  measures: 'Computing interaction measures',
  bootstrap: 'Resampling (bootstrap)',
  tables: 'Stratified tables',
  done: 'Finishing',
};

function Follow({ runId, canCancel }: { runId: string; canCancel: boolean }) {
  const run = useQuery({
    queryKey: ['run', runId],
    queryFn: () => apiFetch<RunStatusView>(`/api/runs/${runId}?fields=status`),
    refetchInterval: (query) => {
      const status = query.state.data?.status;
      return status === 'queued' || status === 'running' || !status ? 700 : false;
    },
  });
  const cancel = useMutation({ mutationFn: () => apiFetch(`/api/runs/${runId}/cancel`, { method: 'POST', body: {} }) });
  const data = run.data;
  const ended = data !== undefined && data.status !== 'queued' && data.status !== 'running';
  // Followed runs were under way when the page loaded or the button queued them: refresh once they end.
  const refreshed = useRef(false);
  useEffect(() => {
    if (ended && !refreshed.current) {
      refreshed.current = true;
      void refreshRunsTable();
    }
  }, [ended]);
  if (!data) return <p role="status" className="text-ink-500">Checking the run…</p>;
  if (data.status === 'queued' || data.status === 'running') {
    const percent = Math.round((data.status === 'queued' ? 0 : data.progress.fraction) * 100);
    const label = data.status === 'queued' ? STAGE_LABEL.queued : (STAGE_LABEL[data.progress.stage] ?? data.progress.stage);
    return (
      <div data-testid="run-progress">
        <div className="flex justify-between text-sm"><span>{label}</span><span className="tabular-nums">{percent} %</span></div>
        <div className="h-2.5 mt-1 rounded-full bg-linen-200 overflow-hidden" role="progressbar" aria-label={label} aria-valuemin={0} aria-valuemax={100} aria-valuenow={percent}>
          <div className="h-full bg-estuary-500 transition-[width] duration-500" style={{ width: `${Math.max(2, percent)}%` }} />
        </div>
        {canCancel && (
          <button type="button" className="btn btn-secondary mt-3" disabled={cancel.isPending || data.cancelRequested} onClick={() => cancel.mutate()}>
            {data.cancelRequested || cancel.isSuccess ? 'Cancelling…' : 'Cancel run'}
          </button>
        )}
      </div>
    );
  }
  if (data.status === 'succeeded') {
    return (
      <div role="status" className="text-sm" data-testid="run-finished">
        <p className="text-reed-700 font-semibold">The run finished.</p>
        <a className="btn btn-primary mt-2" href={`/runs/${runId}`}>Read the results</a>
      </div>
    );
  }
  return (
    <div role="alert" className="text-sm text-brick-700" data-testid="run-ended">
      <p className="font-semibold">{data.status === 'cancelled' ? 'The run was cancelled.' : 'The run failed.'}</p>
      {data.error && <p>{data.error.message}</p>}
      <a className="underline" href={`/runs/${runId}`}>See the run record</a>
    </div>
  );
}

function Launcher({ analysisId, runId: initialRunId, canRun, canCancel, reloadWhenDone }: Props) {
  const [runId, setRunId] = useState(initialRunId ?? null);
  // One key per intent to run: reused if the request must be retried, renewed once a run is queued.
  const intentKey = useRef<string | null>(null);
  const sending = useRef(false);
  const start = useMutation({
    mutationFn: (key: string) =>
      apiFetch<{ runId: string }>(`/api/analyses/${analysisId}/runs`, { method: 'POST', body: {}, headers: { 'Idempotency-Key': key } }),
    onSuccess: ({ runId: started }) => {
      intentKey.current = null;
      setRunId(started);
      void refreshRunsTable();
    },
    onSettled: () => {
      sending.current = false;
    },
  });
  const run = () => {
    if (sending.current) return;
    sending.current = true;
    intentKey.current ??= crypto.randomUUID();
    start.mutate(intentKey.current);
  };
  const hydrated = useHydrated();
  return (
    <div className="space-y-3" data-testid="run-watcher" data-hydrated={hydrated ? 'true' : 'false'}>
      {canRun && analysisId && (
        <button type="button" className="btn btn-primary" data-testid="run-button" onClick={run} disabled={start.isPending}>
          {start.isPending ? 'Queuing…' : runId ? 'Run again' : 'Run this analysis'}
        </button>
      )}
      {start.error && <p role="alert" className="field-error">{start.error.message}</p>}
      {runId && <Follow key={runId} runId={runId} canCancel={canCancel} />}
      {reloadWhenDone && runId && <ReloadWhenDone runId={runId} />}
    </div>
  );
}

/** On the results page of a run still under way: reload once it has ended. */
function ReloadWhenDone({ runId }: { runId: string }) {
  useQuery({
    queryKey: ['run', runId],
    queryFn: async () => {
      const run = await apiFetch<RunStatusView>(`/api/runs/${runId}?fields=status`);
      if (run.status !== 'queued' && run.status !== 'running') window.location.reload();
      return run;
    },
    refetchInterval: 700,
  });
  return null;
}

interface Props {
  analysisId?: string;
  runId?: string;
  canRun: boolean;
  canCancel: boolean;
  reloadWhenDone?: boolean;
}

export default function RunWatcher(props: Props) {
  return (
    <QueryRoot>
      <Launcher {...props} />
    </QueryRoot>
  );
}
