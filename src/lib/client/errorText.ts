import { ApiError } from './api';

/** An API error in words: the field messages when the server named fields, else its message. */
export function errorText(error: Error): string {
  return error instanceof ApiError && error.details && error.details.length > 0 ? error.details.map((detail) => detail.message).join(' ') : error.message;
}
