import { validationFailed } from './errors';

/** C0 control characters other than tab, newline and carriage return. */
const FORBIDDEN_CONTROL = /[\u0000-\u0008\u000b\u000c\u000e-\u001f]/;

/**
 * Why a piece of text cannot be stored, or null when it can: a C0 control character
 * (tab, newline and carriage return are allowed) or a lone UTF-16 surrogate. PostgreSQL's
 * text and jsonb refuse NUL, and jsonb refuses lone surrogates, so such text would
 * otherwise fail deep inside a transaction or be stored in a form no reader expects.
 */
export function textProblem(value: string): string | null {
  if (FORBIDDEN_CONTROL.test(value)) return 'Must not contain control characters (only tab and line breaks are allowed).';
  if (!value.isWellFormed()) return 'Must not contain unpaired surrogate characters (broken Unicode).';
  return null;
}

/** Every field (path and message) of a parsed JSON value whose text, or key, cannot be stored. */
export function textProblems(value: unknown, path: (string | number)[] = []): { path: string; message: string }[] {
  if (typeof value === 'string') {
    const problem = textProblem(value);
    return problem ? [{ path: path.join('.'), message: problem }] : [];
  }
  if (Array.isArray(value)) return value.flatMap((item, index) => textProblems(item, [...path, index]));
  if (value && typeof value === 'object') {
    return Object.entries(value).flatMap(([key, item]) => {
      const keyProblem = textProblem(key);
      const here = keyProblem ? [{ path: [...path, key].join('.'), message: `Field name: ${keyProblem}` }] : [];
      return [...here, ...textProblems(item, [...path, key])];
    });
  }
  return [];
}

/** Throws the 400 validation failure naming each field whose text cannot be stored. */
export function assertStorableText(value: unknown, path: (string | number)[] = []): void {
  const problems = textProblems(value, path);
  if (problems.length > 0) throw validationFailed(problems);
}
