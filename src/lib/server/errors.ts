/**
 * The one error vocabulary. Every known failure is an AppError with an HTTP status and a
 * stable machine-readable code in kebab-case, and a message written for people; endpoints
 * turn it into `{ "error": { "code", "message", "details"?, "requestId" } }`. Anything
 * else becomes a logged 500 (stack in the log, a generic message with the request id).
 * Other vocabularies are translated where they leave their area: an extract refusal in
 * intake.server.ts, an engine refusal stored on a failed run in runs/runFailure.ts.
 */
export const ERROR_CODE = /^[a-z]+(-[a-z0-9]+)*$/;

export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
    readonly headers?: Record<string, string>,
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const badRequest = (message: string, details?: unknown) =>
  new AppError(400, 'bad-request', message, details);
export const validationFailed = (details: unknown) =>
  new AppError(400, 'validation-failed', 'Some fields are missing or invalid.', details);
export const unauthenticated = (message = 'Sign in to continue.') =>
  new AppError(401, 'unauthenticated', message);
export const forbidden = (message = 'You do not have permission to do that.') =>
  new AppError(403, 'forbidden', message);
/** Also used where a record exists but the caller may not know it does. */
export const notFound = (what = 'That record') => new AppError(404, 'not-found', `${what} was not found.`);
export const conflict = (message: string, details?: unknown) =>
  new AppError(409, 'conflict', message, details);
export const payloadTooLarge = (message: string) => new AppError(413, 'payload-too-large', message);
export const unsupportedMediaType = (message: string) =>
  new AppError(415, 'unsupported-media-type', message);
export const unprocessable = (code: string, message: string, details?: unknown) =>
  new AppError(422, code, message, details);
export const tooManyRequests = (message: string, retryAfterSeconds: number) =>
  new AppError(429, 'too-many-requests', message, undefined, { 'Retry-After': String(retryAfterSeconds) });

export const databaseUnavailable = () =>
  new AppError(
    503,
    'database-unavailable',
    'The database cannot be reached just now, so nothing was read or changed. Try again in a few seconds; the service resumes by itself once the database is back.',
    undefined,
    { 'Retry-After': '5' },
  );

/** Node's socket errors that mean the database server is not there. */
const UNREACHABLE_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENOTFOUND']);
/** Sequelize's connection-level error classes (by name, so this module needs no database library). */
const CONNECTION_ERROR_NAMES = /^Sequelize(Connection|ConnectionRefused|ConnectionTimedOut|HostNotFound|HostNotReachable|ConnectionAcquireTimeout|InvalidConnection)Error$/;

/**
 * True when an error means the database is unreachable rather than that the request was
 * wrong: a refused or reset connection, PostgreSQL's class 08 (connection exception) and
 * 57P01-57P03 (shut down by an administrator, crashed, starting up), a connection that
 * ended under a query, or Sequelize's connection errors. Looks through wrapped causes.
 */
export function isDatabaseUnavailable(error: unknown): boolean {
  const seen = new Set<unknown>();
  let current: unknown = error;
  while (current instanceof Error && !seen.has(current)) {
    seen.add(current);
    const { code, name, message } = current as Error & { code?: unknown };
    if (typeof code === 'string' && (UNREACHABLE_CODES.has(code) || /^08[0-9A-Z]{3}$/.test(code) || /^57P0[123]$/.test(code))) return true;
    if (CONNECTION_ERROR_NAMES.test(name)) return true;
    if (/Connection terminated|Client has encountered a connection error|terminating connection due to administrator command|the database system is (starting up|shutting down|in recovery mode)/i.test(message)) return true;
    const wrapped = current as Error & { parent?: unknown; original?: unknown; cause?: unknown };
    current = wrapped.parent ?? wrapped.original ?? wrapped.cause;
  }
  return false;
}

/** The JSON body of an error response. */
export interface ErrorBody {
  error: { code: string; message: string; details?: unknown; requestId?: string };
}
