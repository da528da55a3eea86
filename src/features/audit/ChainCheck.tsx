/**
 * Lets an auditor recompute the audit trail's hash chain and see whether it is intact,
 * save a checkpoint of the chain's head (a file kept outside Crossgrain), and later check
 * the chain against a saved checkpoint, which is how removed newest events show.
 */
import { useMutation } from '@tanstack/react-query';
import { useRef, useState, type ChangeEvent } from 'react';
import { apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { parseCheckpointText, type AuditCheckpoint, type ChainReport } from './audit.schema';

/** Reads a checkpoint file chosen in the browser. */
async function readCheckpointFile(file: File): Promise<AuditCheckpoint> {
  const read = parseCheckpointText(await file.text());
  if ('problem' in read) throw new Error(`${file.name} cannot be used: ${read.problem}.`);
  return read.checkpoint;
}

function chainSentence(report: ChainReport): string {
  if (report.broken) {
    return `Broken at position ${report.broken.position} (event ${report.broken.eventId}): ${report.broken.reason}. ${report.checked.toLocaleString('en-GB')} events before it are intact.`;
  }
  return `Intact: all ${report.checked.toLocaleString('en-GB')} events in Crossgrain’s trail link up and match their hashes. The check covers every event in the product (every initiative’s and the account events), so it counts more than the list below, which shows only this trail’s. Head at position ${report.headPosition}, hash ${report.headHash?.slice(0, 16)}…`;
}

function Check() {
  const hydrated = useHydrated();
  const fileInput = useRef<HTMLInputElement>(null);
  const [fileError, setFileError] = useState<string | null>(null);
  const verify = useMutation({
    mutationFn: (checkpoint?: AuditCheckpoint) => apiFetch<ChainReport>('/api/audit/verify', { method: 'POST', body: checkpoint ? { checkpoint } : {} }),
  });
  const report = verify.data;

  const chooseCheckpoint = async (event: ChangeEvent<HTMLInputElement>) => {
    const file = event.target.files?.[0];
    event.target.value = '';
    if (!file) return;
    setFileError(null);
    try {
      verify.mutate(await readCheckpointFile(file));
    } catch (error) {
      verify.reset();
      setFileError(error instanceof Error ? error.message : String(error));
    }
  };

  return (
    <div data-testid="chain-check" data-hydrated={hydrated}>
      <div className="flex flex-wrap gap-2">
        <button type="button" className="btn btn-secondary" onClick={() => { setFileError(null); verify.mutate(undefined); }} disabled={!hydrated || verify.isPending}>
          {verify.isPending ? 'Checking…' : 'Verify the audit trail'}
        </button>
        <button type="button" className="btn btn-secondary" onClick={() => fileInput.current?.click()} disabled={!hydrated || verify.isPending}>
          Check against a saved checkpoint…
        </button>
        <input ref={fileInput} type="file" accept=".json,.jsonl,application/json" className="sr-only" aria-label="Checkpoint file" data-testid="checkpoint-file" onChange={(e) => void chooseCheckpoint(e)} disabled={!hydrated} />
        <a className="btn btn-secondary" href="/api/audit/checkpoint?download=1" download data-testid="checkpoint-download">
          Save a checkpoint
        </a>
      </div>
      <p className="text-xs text-ink-500 mt-2 max-w-2xl">
        A checkpoint records the newest event’s position and hash. Keep it outside Crossgrain (your governance records); checking against it later
        shows whether events were removed from the end of the trail, which the links alone cannot show.
      </p>
      {fileError && <p role="alert" className="field-error">{fileError}</p>}
      {verify.error && <p role="alert" className="field-error">{verify.error.message}</p>}
      {report && (
        <div role="status" data-testid="chain-report" className={`mt-2 text-sm ${report.intact ? 'text-reed-700' : 'text-brick-700 font-semibold'}`}>
          <p>{chainSentence(report)}</p>
          {report.checkpoint && (
            <p data-testid="checkpoint-finding" data-holds={report.checkpoint.holds}>
              {report.checkpoint.finding}
            </p>
          )}
        </div>
      )}
    </div>
  );
}

export default function ChainCheck() {
  return (
    <QueryRoot>
      <Check />
    </QueryRoot>
  );
}
