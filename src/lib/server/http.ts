import type { APIContext, APIRoute } from 'astro';
import { z, type ZodType } from 'zod';
import { AppError, databaseUnavailable, isDatabaseUnavailable, validationFailed, type ErrorBody } from './errors';
import { logger } from './logger';
import { clientAddressOf } from './forwarded';
import { assertStorableText } from './textSafety';

/** A JSON response with the given status. */
export function json(body: unknown, status = 200, headers: Record<string, string> = {}): Response {
  return new Response(JSON.stringify(body), {
    status,
    headers: { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store', ...headers },
  });
}

/** Turns any thrown value into the error vocabulary's response; unknown errors are logged. */
export function errorResponse(error: unknown, requestId?: string): Response {
  if (error instanceof z.ZodError) error = validationFailed(flattenIssues(error));
  if (!(error instanceof AppError) && isDatabaseUnavailable(error)) {
    // An outage, not a bug: one warning line without the stack, and a 503 the client can retry.
    logger.warn({ requestId, reason: error instanceof Error ? error.message : String(error) }, 'database unavailable');
    error = databaseUnavailable();
  }
  if (error instanceof AppError) {
    const body: ErrorBody = { error: { code: error.code, message: error.message, requestId } };
    if (error.details !== undefined) body.error.details = error.details;
    return json(body, error.status, error.headers);
  }
  // The stack goes to the log only; the client gets a generic message and the reference.
  logger.error({ err: error, requestId }, 'unhandled error');
  const reference = requestId ? ` under reference ${requestId}` : '';
  return json(
    { error: { code: 'internal-error', message: `Something went wrong on our side. The error has been logged${reference}.`, requestId } },
    500,
  );
}

/**
 * The page shown instead of any page while the database cannot be reached (API paths get
 * the JSON error instead). Plain and self-contained: it needs nothing from the database.
 */
export function outagePage(requestId?: string): Response {
  const reference = requestId ? `<p>Reference: <code>${requestId}</code></p>` : '';
  const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Crossgrain is waiting for its database</title>
<meta name="viewport" content="width=device-width, initial-scale=1"></head>
<body style="font-family: system-ui, sans-serif; max-width: 40rem; margin: 4rem auto; padding: 0 1rem; line-height: 1.5">
<h1>Crossgrain is waiting for its database</h1>
<p>The database cannot be reached just now, so nothing was read or changed. Reload this page in a few seconds; the service resumes by itself once the database is back.</p>
${reference}</body></html>`;
  return new Response(html, {
    status: 503,
    headers: { 'Content-Type': 'text/html; charset=utf-8', 'Cache-Control': 'no-store', 'Retry-After': '5' },
  });
}

/**
 * Wraps an endpoint once: known errors (AppError, in the one kebab-case vocabulary)
 * become their status and code; anything else, a database or engine error included, a
 * logged 500 whose body holds neither its message nor its stack.
 */
export function endpoint(handler: (context: APIContext) => Promise<Response> | Response): APIRoute {
  return async (context) => {
    try {
      return await handler(context);
    } catch (error) {
      return errorResponse(error, context.locals.requestId);
    }
  };
}

/** Field-level messages: `[{ path: "spec.outcome.column", message }]`. */
export function flattenIssues(error: z.ZodError): { path: string; message: string }[] {
  return error.issues.map((issue) => ({ path: issue.path.join('.'), message: issue.message }));
}

/** Parses a JSON request body with a zod schema; 400 with field messages when it fails. */
export async function parseBody<S extends ZodType>(request: Request, schema: S): Promise<z.infer<S>> {
  let raw: unknown;
  try {
    raw = await request.json();
  } catch {
    throw new AppError(400, 'invalid-json', 'The request body must be JSON.');
  }
  assertStorableText(raw);
  const parsed = schema.safeParse(raw);
  if (!parsed.success) throw validationFailed(flattenIssues(parsed.error));
  return parsed.data;
}

/** Parses a URL's query string with a zod schema (values arrive as strings). */
export function parseQuery<S extends ZodType>(url: URL, schema: S): z.infer<S> {
  const raw = Object.fromEntries(url.searchParams);
  assertStorableText(raw);
  const parsed = schema.safeParse(raw);
  if (!parsed.success) throw validationFailed(flattenIssues(parsed.error));
  return parsed.data;
}

/**
 * The client's address: the socket's, or X-Forwarded-For's only when the connection comes
 * from a proxy named in CROSSGRAIN_TRUSTED_PROXIES (see forwarded.ts).
 */
export function clientAddress(context: APIContext | { clientAddress: string; request: Request }): string {
  let astroAddress: string;
  try {
    astroAddress = context.clientAddress;
  } catch {
    astroAddress = 'unknown';
  }
  return clientAddressOf(context.request, astroAddress);
}

/** The signed-in user, or a 401. */
export function requireUser<U>(locals: { user: U | null }): U {
  if (!locals.user) throw new AppError(401, 'unauthenticated', 'Sign in to continue.');
  return locals.user;
}

/** An empty success response. */
export function noContent(headers: Record<string, string> = {}): Response {
  return new Response(null, { status: 204, headers: { 'Cache-Control': 'no-store', ...headers } });
}

/** A file to save: CSV or JSON text with its name, never cached. */
export function attachment(body: string, format: 'csv' | 'json', filename: string): Response {
  return new Response(body, {
    status: 200,
    headers: {
      'Content-Type': format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8',
      'Content-Disposition': `attachment; filename="${filename}"`,
      'Cache-Control': 'no-store',
    },
  });
}

/** Parses a path parameter that must be a uuid; anything else is a 404 (ids are opaque). */
export function uuidParam(value: string | undefined, what = 'That record'): string {
  const parsed = z.uuid().safeParse(value);
  if (!parsed.success) throw new AppError(404, 'not-found', `${what} was not found.`);
  return parsed.data;
}
