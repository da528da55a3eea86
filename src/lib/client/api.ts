/**
 * The browser's way to call our JSON API: same-origin, credentials included, and every
 * error turned into an ApiError that carries the server's stable code and field details.
 */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: { path: string; message: string }[],
  ) {
    super(message);
    this.name = 'ApiError';
  }

  /** The message for one form field, when the server named it. */
  fieldMessage(path: string): string | undefined {
    return this.details?.find((d) => d.path === path)?.message;
  }
}

export async function apiFetch<T>(
  path: string,
  options: { method?: string; body?: unknown; signal?: AbortSignal; headers?: Record<string, string> } = {},
): Promise<T> {
  const response = await fetch(path, {
    method: options.method ?? 'GET',
    credentials: 'same-origin',
    headers: {
      ...(options.body === undefined ? { Accept: 'application/json' } : { 'Content-Type': 'application/json', Accept: 'application/json' }),
      ...options.headers,
    },
    body: options.body === undefined ? undefined : JSON.stringify(options.body),
    signal: options.signal,
  });
  if (response.status === 204) return undefined as T;
  const text = await response.text();
  const body: unknown = text ? JSON.parse(text) : undefined;
  if (!response.ok) {
    const error = (body as { error?: { code?: string; message?: string; details?: unknown } } | undefined)?.error;
    if (response.status === 401 && typeof window !== 'undefined') {
      window.location.assign(`/sign-in?notice=expired&next=${encodeURIComponent(window.location.pathname)}`);
    }
    throw new ApiError(
      response.status,
      error?.code ?? 'http-error',
      error?.message ?? `The server answered ${response.status}.`,
      Array.isArray(error?.details) ? (error.details as { path: string; message: string }[]) : undefined,
    );
  }
  return body as T;
}
