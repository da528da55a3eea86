import type { AstroGlobal } from 'astro';
import { AppError } from './errors';
import { assertStorableText } from './textSafety';

/**
 * A same-origin path to go to after signing in; anything else becomes "/". The value must
 * start with a single "/", hold no backslash and no control character (a tab or newline
 * inside "/\t/evil.example" is dropped by URL parsers and leaves "//evil.example"), and
 * still resolve to the same origin once parsed as a URL.
 */
export function safeNext(value: string | null | undefined): string {
  if (!value || !value.startsWith('/') || value.startsWith('//')) return '/';
  if (value.includes('\\') || /[\u0000-\u001f\u007f-\u009f]/.test(value)) return '/';
  const origin = 'http://crossgrain.invalid';
  let parsed: URL;
  try {
    parsed = new URL(value, origin);
  } catch {
    return '/';
  }
  if (parsed.origin !== origin || !parsed.pathname.startsWith('/') || parsed.pathname.startsWith('//')) return '/';
  return `${parsed.pathname}${parsed.search}${parsed.hash}`;
}

/** Redirects signed-out visitors to the sign-in page, remembering where they were going. */
export function signInRedirect(astro: AstroGlobal): Response {
  const next = `${astro.url.pathname}${astro.url.search}`;
  return astro.redirect(`/sign-in?next=${encodeURIComponent(next)}`);
}

/** The message of a known error, for showing on a form; unknown errors are rethrown. */
export function formError(error: unknown): { status: number; message: string; field?: string } {
  if (error instanceof AppError) {
    const details = Array.isArray(error.details) ? (error.details as { path?: string }[]) : [];
    return { status: error.status, message: error.message, field: details[0]?.path };
  }
  throw error;
}

/** Reads a form field as text ('' when absent); a control character in it is a 400 naming the field. */
export function field(form: FormData, name: string): string {
  const value = form.get(name);
  if (typeof value !== 'string') return '';
  assertStorableText(value, [name]);
  return value;
}
