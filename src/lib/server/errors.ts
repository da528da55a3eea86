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

/** The JSON body of an error response. */
export interface ErrorBody {
  error: { code: string; message: string; details?: unknown; requestId?: string };
}
