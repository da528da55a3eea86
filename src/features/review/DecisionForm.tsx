/**
 * The confirmation step of a review decision, which is an electronic signature: the
 * clinician states what the decision means (one of our meanings, or their own words),
 * adds a note (required to send back), enters their password again and presses "Sign".
 * Opened from "Sign off…" or "Send back…"; Escape or "Cancel" closes it.
 */
import { useEffect, useId, useRef, useState, type KeyboardEvent, type SyntheticEvent } from 'react';
import { ApiError } from '@/lib/client/api';
import { SEND_BACK_MEANINGS, SIGN_OFF_MEANINGS } from './review.schema';

export type Decision = 'sign-off' | 'send-back';
export interface DecisionRequest {
  decision: Decision;
  note: string;
  meaning: string;
  password: string;
}

const OWN = 'own';
const TEXT = {
  'sign-off': { heading: 'Sign off this run', note: 'Note to the analyst (optional)', button: 'Sign' },
  'send-back': { heading: 'Send this run back', note: 'What needs to change (required)', button: 'Sign and send back' },
} as const;

interface Props {
  decision: Decision;
  pending: boolean;
  error: Error | null;
  onSign: (request: DecisionRequest) => void;
  onCancel: () => void;
}

export function DecisionForm({ decision, pending, error, onSign, onCancel }: Props) {
  const id = useId();
  const heading = useRef<HTMLHeadingElement>(null);
  const meanings: readonly string[] = decision === 'sign-off' ? SIGN_OFF_MEANINGS : SEND_BACK_MEANINGS;
  const [choice, setChoice] = useState<string>(meanings[0]);
  const [own, setOwn] = useState('');
  const [note, setNote] = useState('');
  const [password, setPassword] = useState('');
  const [problems, setProblems] = useState<Record<string, string>>({});
  useEffect(() => heading.current?.focus(), []);
  useEffect(() => {
    if (!(error instanceof ApiError)) return;
    setProblems({ note: error.fieldMessage('note') ?? '', meaning: error.fieldMessage('meaning') ?? '', password: error.fieldMessage('password') ?? '' });
    setPassword('');
  }, [error]);

  const submit = (event: SyntheticEvent) => {
    event.preventDefault();
    const meaning = choice === OWN ? own.trim() : choice;
    const found: Record<string, string> = {};
    if (!meaning) found.meaning = 'Say what your signature means.';
    if (decision === 'send-back' && !note.trim()) found.note = 'Say what needs to change before the run can be signed off.';
    if (!password) found.password = 'Enter your password to sign.';
    setProblems(found);
    if (Object.keys(found).length === 0) onSign({ decision, note, meaning, password });
  };
  const escape = (event: KeyboardEvent) => {
    if (event.key === 'Escape') onCancel();
  };
  const fieldError = (name: string) => (problems[name] ? <p id={`${id}-${name}-error`} className="field-error">{problems[name]}</p> : null);
  const described = (name: string) => (problems[name] ? `${id}-${name}-error` : undefined);
  const otherError = error && !Object.values(problems).some(Boolean) ? error.message : null;

  return (
    <form className="mt-4 grid gap-3 max-w-2xl border border-linen-300 rounded-md p-4 bg-white" onSubmit={submit} onKeyDown={escape}
      aria-labelledby={`${id}-heading`} data-testid={`decision-form-${decision}`}>
      <h3 id={`${id}-heading`} ref={heading} tabIndex={-1} className="font-semibold">{TEXT[decision].heading}</h3>
      <p className="text-xs text-ink-700">
        This is your electronic signature. It records your name, the time (UTC) and the meaning you state, and it is bound to
        this run’s result digest: a later change to the result would not carry your signature.
      </p>
      <fieldset className="grid gap-1" aria-describedby={described('meaning')}>
        <legend className="field-label">What your signature means</legend>
        {[...meanings, OWN].map((value) => (
          <label key={value} className="text-sm flex gap-2 items-center">
            <input type="radio" name={`${id}-meaning`} value={value} checked={choice === value} onChange={() => setChoice(value)} />
            {value === OWN ? 'In my own words' : value}
          </label>
        ))}
        {choice === OWN && (
          <input className="field-input" aria-label="The meaning, in your own words" maxLength={200} value={own} onChange={(e) => setOwn(e.target.value)} />
        )}
        {fieldError('meaning')}
      </fieldset>
      <label className="field-label" htmlFor={`${id}-note`}>{TEXT[decision].note}</label>
      <textarea id={`${id}-note`} className="field-input" rows={3} value={note} aria-invalid={problems.note ? true : undefined}
        aria-describedby={described('note')} onChange={(e) => setNote(e.target.value)} />
      {fieldError('note')}
      <label className="field-label" htmlFor={`${id}-password`}>Your password</label>
      <input id={`${id}-password`} type="password" autoComplete="current-password" className="field-input max-w-sm" value={password}
        aria-invalid={problems.password ? true : undefined} aria-describedby={described('password')} onChange={(e) => setPassword(e.target.value)} />
      {fieldError('password')}
      {otherError && <p role="alert" className="field-error">{otherError}</p>}
      <div className="flex flex-wrap gap-2">
        <button type="submit" className="btn btn-primary" disabled={pending}>{pending ? 'Signing…' : TEXT[decision].button}</button>
        <button type="button" className="btn btn-secondary" onClick={onCancel}>Cancel</button>
      </div>
    </form>
  );
}
