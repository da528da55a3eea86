/** A small HTTP client with a cookie jar, for API tests against the test server. */
import { appUrl } from '../browser/harness';

export class ApiClient {
  private cookies = new Map<string, string>();

  constructor(private readonly bearer?: string) {}

  /** The value of one cookie the server set, if any. */
  cookie(name: string): string | undefined {
    return this.cookies.get(name);
  }

  setCookie(name: string, value: string): void {
    this.cookies.set(name, value);
  }

  async request(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<Response> {
    const cookieHeader = [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
    const response = await fetch(`${appUrl}${path}`, {
      method,
      redirect: 'manual',
      headers: {
        // As the API reference asks of scripts: state-changing requests always declare JSON,
        // which Astro's origin check accepts without an Origin header.
        ...(body === undefined && (method === 'GET' || method === 'HEAD') ? {} : { 'Content-Type': 'application/json' }),
        ...(cookieHeader ? { Cookie: cookieHeader } : {}),
        ...(this.bearer ? { Authorization: `Bearer ${this.bearer}` } : {}),
        ...headers,
      },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
    for (const line of response.headers.getSetCookie()) {
      const [pair, ...attributes] = line.split(';');
      const [name, value] = pair.split('=');
      const expired = attributes.some((a) => /max-age=0/i.test(a)) || value === '';
      if (expired) this.cookies.delete(name.trim());
      else this.cookies.set(name.trim(), value);
    }
    return response;
  }

  async signIn(email: string, password: string): Promise<Response> {
    return this.request('POST', '/api/auth/sign-in', { email, password });
  }
}
