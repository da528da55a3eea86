/**
 * The analysis form's question in plain words: the title, the question and the
 * prespecified declaration.
 */
import { Field, Section } from './formFields';
import type { AnalysisDraft } from './specForm';

function formatWhen(value: string): string {
  return new Date(value).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short', timeZone: 'UTC' }) + ' UTC';
}

export interface QuestionSectionProps {
  draft: AnalysisDraft;
  fieldId: (path: string) => string;
  shownError: (path: string) => string | undefined;
  touch: (path: string) => void;
  /** Changes the words; `clearsServerErrors` drops the server's messages, as editing the title or question does. */
  onChange: (change: Partial<Pick<AnalysisDraft, 'title' | 'question' | 'prespecified'>>, clearsServerErrors: boolean) => void;
  /** When editing: whether, and when, the analysis was declared prespecified. */
  existing?: { prespecified: boolean; prespecifiedAt?: string | null };
}

export function QuestionSection({ draft, fieldId, shownError, touch, onChange, existing }: QuestionSectionProps) {
  return (
    <Section title="The question" description="In plain words, as a clinician would ask it.">
      <Field id={fieldId('title')} label="Title" error={shownError('title')}>
        {(describedBy, invalid) => (
          <input
            id={fieldId('title')}
            className="field-input"
            value={draft.title}
            maxLength={200}
            aria-describedby={describedBy}
            aria-invalid={invalid}
            onChange={(e) => onChange({ title: e.target.value }, true)}
            onBlur={() => touch('title')}
          />
        )}
      </Field>
      <Field id={fieldId('question')} label="Question" hint="For example: does the call-back prevent more readmissions in older patients than in younger ones?" error={shownError('question')}>
        {(describedBy, invalid) => (
          <textarea
            id={fieldId('question')}
            className="field-input min-h-24"
            value={draft.question}
            aria-describedby={describedBy}
            aria-invalid={invalid}
            onChange={(e) => onChange({ question: e.target.value }, true)}
            onBlur={() => touch('question')}
          />
        )}
      </Field>
      <div>
        <label className="flex items-start gap-2.5 text-sm" htmlFor={fieldId('prespecified')}>
          <input
            id={fieldId('prespecified')}
            type="checkbox"
            className="mt-1"
            checked={draft.prespecified}
            aria-describedby={`${fieldId('prespecified')}-hint`}
            onChange={(e) => onChange({ prespecified: e.target.checked }, false)}
          />
          <span>
            <span className="font-semibold">Prespecified</span>: this question was set out before the data were examined.
          </span>
        </label>
        <p id={`${fieldId('prespecified')}-hint`} className="mt-1 ml-6 text-xs text-ink-500">
          {existing?.prespecified && existing.prespecifiedAt
            ? `Declared prespecified on ${formatWhen(existing.prespecifiedAt)}. `
            : 'Crossgrain records the time of this declaration when you save. '}
          Runs on extract versions uploaded after that time are labelled exploratory.
        </p>
      </div>
    </Section>
  );
}
