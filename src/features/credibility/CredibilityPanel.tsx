/**
 * "How credible is this subgroup claim?" on a run's results page: the overall rating with
 * its reasons, the items Crossgrain worked out from its own records (read-only), and the
 * clinician's two ratings. Clinicians who may decide on the run rate them; analysts and
 * auditors read. The page renders it with the assessment already computed (initial).
 */
import { useMutation } from '@tanstack/react-query';
import { useState, type SubmitEvent } from 'react';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { apiFetch } from '@/lib/client/api';
import { errorText } from '@/lib/client/errorText';
import type { CredibilityItem, CredibilityView } from './credibility.schema';
import { PRIOR_LABEL, PRIOR_RATINGS, RATIONALE_LABEL, RATIONALE_RATINGS, type PriorRating, type RationaleRating } from './credibilityRule';

interface Props {
  runId: string;
  initial: CredibilityView;
}

const STANDING_WORDS: Record<CredibilityItem['standing'], string> = {
  for: 'Speaks for the claim', against: 'Speaks against it', 'not-applicable': 'No bearing on the rating', 'not-rated': 'Waiting for a clinician',
};
const STANDING_CLASS: Record<CredibilityItem['standing'], string> = {
  for: 'text-estuary-700', against: 'text-brick-700', 'not-applicable': 'text-ink-500', 'not-rated': 'text-ochre-700',
};

function Panel({ runId, initial }: Props) {
  const [view, setView] = useState(initial);
  const [form, setForm] = useState({
    rationale: initial.clinician?.rationale ?? ('' as RationaleRating | ''),
    rationaleNote: initial.clinician?.rationaleNote ?? '',
    priorEvidence: initial.clinician?.priorEvidence ?? ('' as PriorRating | ''),
    priorEvidenceNote: initial.clinician?.priorEvidenceNote ?? '',
  });
  const save = useMutation({
    mutationFn: () => apiFetch<CredibilityView>(`/api/runs/${runId}/credibility`, { method: 'PUT', body: form }),
    onSuccess: (data) => setView(data),
  });
  const onSave = (event: SubmitEvent<HTMLFormElement>) => { event.preventDefault(); save.mutate(); };
  const computed = view.items.filter((item) => item.source === 'computed');
  const rated = view.items.filter((item) => item.source === 'clinician');
  const itemList = (items: CredibilityItem[], label: string) => (
    <dl className="grid gap-2 text-sm" aria-label={label}>
      {items.map((item) => (
        <div key={item.key} className="grid md:grid-cols-[16rem_1fr] gap-x-4" data-testid={`credibility-item-${item.key}`} data-standing={item.standing}>
          <dt className="font-semibold">{item.question}</dt>
          <dd>{item.answer} <span className={`text-xs ${STANDING_CLASS[item.standing]}`}>({STANDING_WORDS[item.standing]})</span></dd>
        </div>
      ))}
    </dl>
  );
  return (
    <div className="grid gap-4" data-testid="credibility-panel" data-level={view.overall.level}>
      <div>
        <p className="text-base"><strong data-testid="credibility-level">{view.overall.label}</strong>{view.overall.provisional && <span className="badge ml-2">Provisional</span>}</p>
        {view.overall.reasons.length === 0
          ? <p className="text-sm mt-1">Every item the rating looks at speaks for the claim.</p>
          : <ul className="text-sm list-disc pl-5 mt-1" data-testid="credibility-reasons">{view.overall.reasons.map((reason) => <li key={reason}>{reason}</li>)}</ul>}
        <p className="text-xs text-ink-500 mt-2 max-w-3xl">{view.rule}</p>
      </div>
      <section aria-labelledby="credibility-computed">
        <h3 id="credibility-computed" className="font-semibold mb-1">From Crossgrain's records</h3>
        <p className="text-xs text-ink-500 mb-2">Worked out from the register, the analyses and this run's result; no one can edit these.</p>
        {itemList(computed, 'Items from the records')}
      </section>
      <section aria-labelledby="credibility-clinician">
        <h3 id="credibility-clinician" className="font-semibold mb-1">The clinician's judgement</h3>
        {itemList(rated, 'Items rated by a clinician')}
        {view.canRate && (
          <form onSubmit={onSave} className="grid gap-2 max-w-2xl mt-3" aria-label="Rate the credibility">
            <HydratedFieldset>
              <label className="field-label" htmlFor="credibility-rationale">Clinical or biological reason for the difference</label>
              <select id="credibility-rationale" className="field-input" value={form.rationale}
                onChange={(e) => setForm({ ...form, rationale: RATIONALE_RATINGS.find((r) => r === e.target.value) ?? '' })}>
                <option value="">Choose…</option>
                {RATIONALE_RATINGS.map((rating) => <option key={rating} value={rating}>{RATIONALE_LABEL[rating]}</option>)}
              </select>
              <label className="field-label" htmlFor="credibility-rationale-note">Note on the reason (optional)</label>
              <textarea id="credibility-rationale-note" rows={2} className="field-input" value={form.rationaleNote} onChange={(e) => setForm({ ...form, rationaleNote: e.target.value })} />
              <label className="field-label" htmlFor="credibility-prior">Agreement with earlier evidence</label>
              <select id="credibility-prior" className="field-input" value={form.priorEvidence}
                onChange={(e) => setForm({ ...form, priorEvidence: PRIOR_RATINGS.find((r) => r === e.target.value) ?? '' })}>
                <option value="">Choose…</option>
                {PRIOR_RATINGS.map((rating) => <option key={rating} value={rating}>{PRIOR_LABEL[rating]}</option>)}
              </select>
              <label className="field-label" htmlFor="credibility-prior-note">Note on earlier evidence (optional)</label>
              <textarea id="credibility-prior-note" rows={2} className="field-input" value={form.priorEvidenceNote} onChange={(e) => setForm({ ...form, priorEvidenceNote: e.target.value })} />
              <div><button type="submit" className="btn btn-primary" disabled={save.isPending}>Save the ratings</button></div>
            </HydratedFieldset>
            {save.error && <p role="alert" className="field-error">{errorText(save.error)}</p>}
            {save.isSuccess && <p role="status" className="text-sm text-estuary-700">Saved. The overall rating above is updated.</p>}
          </form>
        )}
      </section>
    </div>
  );
}

export default function CredibilityPanel(props: Props) {
  return <QueryRoot><Panel {...props} /></QueryRoot>;
}
