/**
 * The plots of a finished run on its results page: fetches the run's plot data from
 * GET /api/runs/{id}/plot-data (kept by the browser and revalidated on each view, so the
 * page itself stays small) and draws PlotsPanel. Mount with client:only="react".
 */
import { useQuery } from '@tanstack/react-query';
import { apiFetch } from '@/lib/client/api';
import { QueryRoot } from '@/components/ui/QueryRoot';
import type { PlotInput } from './plotInput';
import PlotsPanel from './PlotsPanel';

interface Props {
  runId: string;
}

function Plots({ runId }: Props) {
  const data = useQuery({ queryKey: ['plot-data', runId], queryFn: () => apiFetch<PlotInput>(`/api/runs/${runId}/plot-data`), staleTime: Infinity });
  if (data.isError) {
    return (
      <p role="alert" className="text-sm text-brick-700" data-testid="plots-error">
        The plots could not be loaded ({data.error.message}). The tables above hold every number; reload the page to try again.
      </p>
    );
  }
  if (!data.data) return <p className="text-sm text-ink-500" aria-live="polite" data-testid="plots-loading">Loading the plots…</p>;
  return <PlotsPanel result={data.data} />;
}

export default function RunPlots({ runId }: Props) {
  return (
    <QueryRoot>
      <Plots runId={runId} />
    </QueryRoot>
  );
}
