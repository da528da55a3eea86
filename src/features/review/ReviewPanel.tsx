/**
 * The review of one run, at the foot of its results page: its state and history, the
 * analyst's "Submit for review", the clinician's "Sign off" and "Send back" (with a note
 * saying why), and the threaded comments. What each person may do comes from the page
 * (the same abilities the API checks).
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useRef, useState, type SyntheticEvent } from 'react';
import { apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { DecisionForm, type Decision, type DecisionRequest } from './DecisionForm';
import { REVIEW_STATE_LABEL, type ReviewView } from './review.schema';

interface Props {
  runId: string;
  /** The signed-in person: a clinician who already signed this round is not offered the decision again. */
  viewerId: string;
  canSubmit: boolean;
  canDecide: boolean;
  canComment: boolean;
}

const STEP_WORDS = {
  submitted: 'submitted it for review', 'co-signed': 'signed it off', 'signed-off': 'signed it off', 'sent-back': 'sent it back',
} as const;
const STATE_CLASS = {
  draft: 'bg-linen-100 text-ink-700 border-linen-300',
  submitted: 'bg-ochre-50 text-ochre-700 border-ochre-100',
  'sent-back': 'bg-brick-50 text-brick-700 border-brick-100',
  'signed-off': 'bg-reed-50 text-reed-700 border-reed-100',
} as const;
const when = (iso: string) => `${iso.slice(0, 16).replace('T', ' ')} UTC`;

function Comments({ review, runId, canComment }: { review: ReviewView; runId: string; canComment: boolean }) {
  const client = useQueryClient();
  const [text, setText] = useState('');
  const [replyTo, setReplyTo] = useState<string | null>(null);
  const [reply, setReply] = useState('');
  const add = useMutation({
    mutationFn: (body: { body: string; parentId?: string }) => apiFetch<{ id: string }>(`/api/runs/${runId}/comments`, { method: 'POST', body }),
    onSuccess: (_data, body) => {
      if (body.parentId) {
        setReply('');
        setReplyTo(null);
      } else setText('');
      void client.invalidateQueries({ queryKey: ['review', runId] });
    },
  });
  const threads = review.comments.filter((c) => c.parentId === null);
  const repliesTo = (id: string) => review.comments.filter((c) => c.parentId === id);
  const submit = (event: SyntheticEvent, body: string, parentId?: string) => {
    event.preventDefault();
    if (body.trim()) add.mutate(parentId ? { body, parentId } : { body });
  };
  return (
    <section aria-labelledby="comments-heading" className="mt-5">
      <h3 id="comments-heading" className="font-semibold text-sm">Comments</h3>
      {threads.length === 0 && <p className="text-sm text-ink-500 mt-1">No comments yet.</p>}
      <ol className="list-none p-0 m-0 mt-2 grid gap-3" data-testid="comment-threads">
        {threads.map((comment) => (
          <li key={comment.id} className="border border-linen-200 rounded-md p-3 bg-white">
            <p className="text-xs text-ink-500"><strong className="text-ink-900">{comment.author.name}</strong> · {when(comment.at)}</p>
            <p className="text-sm mt-1 whitespace-pre-wrap">{comment.body}</p>
            {repliesTo(comment.id).length > 0 && (
              <ol className="list-none p-0 m-0 mt-2 ml-4 pl-3 border-l-2 border-linen-200 grid gap-2">
                {repliesTo(comment.id).map((replyItem) => (
                  <li key={replyItem.id}>
                    <p className="text-xs text-ink-500"><strong className="text-ink-900">{replyItem.author.name}</strong> · {when(replyItem.at)}</p>
                    <p className="text-sm mt-0.5 whitespace-pre-wrap">{replyItem.body}</p>
                  </li>
                ))}
              </ol>
            )}
            {canComment && (replyTo === comment.id ? (
              <form className="mt-2 grid gap-2" onSubmit={(e) => submit(e, reply, comment.id)}>
                <label className="field-label" htmlFor={`reply-${comment.id}`}>Reply to {comment.author.name}</label>
                <textarea id={`reply-${comment.id}`} className="field-input" rows={2} value={reply} onChange={(e) => setReply(e.target.value)} />
                <div className="flex gap-2">
                  <button type="submit" className="btn btn-primary" disabled={add.isPending || !reply.trim()}>Post reply</button>
                  <button type="button" className="btn btn-secondary" onClick={() => setReplyTo(null)}>Cancel</button>
                </div>
              </form>
            ) : (
              <button type="button" className="btn btn-secondary mt-2 text-xs" onClick={() => { setReplyTo(comment.id); setReply(''); }}>Reply</button>
            ))}
          </li>
        ))}
      </ol>
      {canComment && (
        <form className="mt-3 grid gap-2 max-w-2xl" onSubmit={(e) => submit(e, text)}>
          <label className="field-label" htmlFor="new-comment">Add a comment</label>
          <textarea id="new-comment" className="field-input" rows={3} value={text} onChange={(e) => setText(e.target.value)} placeholder="A question about the estimates, a concern about plausibility, …" />
          <div><button type="submit" className="btn btn-secondary" disabled={add.isPending || !text.trim()}>Add comment</button></div>
        </form>
      )}
      {add.error && <p role="alert" className="field-error">{add.error.message}</p>}
    </section>
  );
}

/** Every other view of this run's review state on the page (the header badge) follows the panel. */
function showStateElsewhere(runId: string, state: ReviewView['state']) {
  for (const element of document.querySelectorAll<HTMLElement>(`[data-review-state-for="${runId}"]`)) element.textContent = REVIEW_STATE_LABEL[state];
}

function Panel({ runId, viewerId, canSubmit, canDecide, canComment }: Props) {
  const hydrated = useHydrated();
  const client = useQueryClient();
  const [note, setNote] = useState('');
  const [deciding, setDeciding] = useState<Decision | null>(null);
  // The button that opened the confirmation gets the focus back when it closes (it is re-rendered, so after the render).
  const openers = useRef<Partial<Record<Decision, HTMLButtonElement | null>>>({});
  const [refocus, setRefocus] = useState<Decision | null>(null);
  useEffect(() => {
    if (!refocus || deciding) return;
    openers.current[refocus]?.focus();
    setRefocus(null);
  }, [refocus, deciding]);
  const review = useQuery({ queryKey: ['review', runId], queryFn: () => apiFetch<ReviewView>(`/api/runs/${runId}/review`) });
  const done = (data: ReviewView) => {
    client.setQueryData(['review', runId], data);
    showStateElsewhere(runId, data.state);
  };
  const submit = useMutation({
    mutationFn: () => apiFetch<ReviewView>(`/api/runs/${runId}/review/submit`, { method: 'POST', body: { note } }),
    onSuccess: (data) => {
      setNote('');
      done(data);
    },
  });
  const decide = useMutation({
    mutationFn: (request: DecisionRequest) => apiFetch<ReviewView>(`/api/runs/${runId}/review/decision`, { method: 'POST', body: request }),
    onSuccess: (data) => {
      setDeciding(null);
      done(data);
    },
  });
  if (review.isPending) return <p className="text-sm text-ink-500">Loading the review…</p>;
  if (review.error) return <p role="alert" className="field-error">Could not load the review: {review.error.message}</p>;
  const data = review.data;
  const maySubmit = canSubmit && (data.state === 'draft' || data.state === 'sent-back');
  const signedThisRound = data.state === 'submitted' && data.signOffs.signedBy.includes(viewerId);
  const mayDecide = canDecide && data.state === 'submitted' && !signedThisRound;
  const open = (decision: Decision) => {
    decide.reset();
    setDeciding(decision);
  };
  const close = () => {
    setRefocus(deciding);
    setDeciding(null);
  };

  return (
    <div data-testid="review-panel" data-hydrated={hydrated} data-state={data.state}>
      <p className="text-sm">
        <span className={`inline-block rounded-full border px-2.5 py-0.5 text-xs font-semibold ${STATE_CLASS[data.state]}`} data-testid="review-state">
          {REVIEW_STATE_LABEL[data.state]}
        </span>
        {data.state === 'draft' && <span className="ml-2 text-ink-700">Not submitted for review yet.</span>}
        {data.signOffs.required > 1 && (data.state === 'submitted' || data.state === 'signed-off') && (
          <span className="ml-2 text-ink-700" data-testid="review-sign-offs">
            {data.signOffs.given} of {data.signOffs.required} sign-offs{data.state === 'submitted' ? ' from distinct clinicians' : ''}
          </span>
        )}
      </p>
      {data.steps.length > 0 && (
        <ol className="list-none p-0 m-0 mt-3 grid gap-1.5 text-sm" data-testid="review-history">
          {data.steps.map((step, index) => (
            <li key={index}>
              <span className="text-ink-500">{when(step.at)}</span> · <strong>{step.actor.name}</strong> {STEP_WORDS[step.kind]}
              {step.meaning && (
                <span className="block ml-4 text-ink-700" data-testid="review-signature">
                  Signed by {step.actor.name} at {when(step.at)}, meaning “{step.meaning}”
                  {step.resultDigest && <> · result <span className="font-mono text-xs" title={step.resultDigest}>{step.resultDigest.slice(0, 16)}</span></>}
                </span>
              )}
              {step.note && <span className="block ml-4 text-ink-700 whitespace-pre-wrap">“{step.note}”</span>}
            </li>
          ))}
        </ol>
      )}
      {maySubmit && (
        <div className="mt-4 grid gap-2 max-w-2xl">
          <label className="field-label" htmlFor="review-note">Note for the reviewers (optional)</label>
          <textarea id="review-note" className="field-input" rows={3} value={note} onChange={(e) => setNote(e.target.value)} disabled={!hydrated} />
          <div>
            <button type="button" className="btn btn-primary" disabled={!hydrated || submit.isPending} onClick={() => submit.mutate()}>
              {data.state === 'sent-back' ? 'Submit again for review' : 'Submit for review'}
            </button>
          </div>
          {submit.error && <p role="alert" className="field-error">{submit.error.message}</p>}
        </div>
      )}
      {canDecide && signedThisRound && (
        <p className="mt-4 text-sm text-ink-700" data-testid="review-waiting">
          You have signed this submission. It is signed off once {data.signOffs.required - data.signOffs.given} more
          {data.signOffs.required - data.signOffs.given === 1 ? ' clinician signs' : ' clinicians sign'}.
        </p>
      )}
      {mayDecide && !deciding && (
        <div className="mt-4 grid gap-2 max-w-2xl">
          <div className="flex flex-wrap gap-2">
            <button type="button" ref={(b) => { openers.current['sign-off'] = b; }} className="btn btn-secondary" disabled={!hydrated} onClick={() => open('sign-off')}>Sign off…</button>
            <button type="button" ref={(b) => { openers.current['send-back'] = b; }} className="btn btn-secondary" disabled={!hydrated} onClick={() => open('send-back')}>Send back…</button>
          </div>
          <p className="text-xs text-ink-500">Either decision is your electronic signature, with your password and its meaning. Signing off says the analysis is clinically plausible and fit to brief; it is still exploratory, not clinical guidance.</p>
        </div>
      )}
      {mayDecide && deciding && (
        <DecisionForm key={deciding} decision={deciding} pending={decide.isPending} error={decide.error} onSign={(request) => decide.mutate(request)} onCancel={close} />
      )}
      <Comments review={data} runId={runId} canComment={canComment} />
    </div>
  );
}

export default function ReviewPanel(props: Props) {
  return (
    <QueryRoot>
      <Panel {...props} />
    </QueryRoot>
  );
}
