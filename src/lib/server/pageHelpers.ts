import type { AstroGlobal } from 'astro';
import { AppError } from './errors';

/** A same-site path to go to after signing in; anything else becomes "/". */
export function safeNext(value: string | null | undefined): string {
  if (!value || !value.startsWith('/') || value.startsWith('//') || value.startsWith('/\\')) return '/';
  return value;
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

/** Reads a form field as trimmed text ('' when absent). */
export function field(form: FormData, name: string): string {
  const value = form.get(name);
  return typeof value === 'string' ? value : '';
}
