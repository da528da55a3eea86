import { isProduction } from './env';

/**
 * The Content-Security-Policy for one response. Inline scripts (Astro's island loader)
 * run only by the per-response nonce; styles allow inline attributes because the chart
 * library and React set element styles.
 */
export function contentSecurityPolicy(nonce: string): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}'`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'none'",
    "frame-ancestors 'none'",
    "form-action 'self'",
  ].join('; ');
}

/** Headers set on every response. */
export function securityHeaders(nonce: string): Record<string, string> {
  const headers: Record<string, string> = {
    'Content-Security-Policy': contentSecurityPolicy(nonce),
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'same-origin',
    'X-Frame-Options': 'DENY',
    'Cross-Origin-Opener-Policy': 'same-origin',
    'Permissions-Policy': 'camera=(), microphone=(), geolocation=()',
  };
  if (isProduction) headers['Strict-Transport-Security'] = 'max-age=31536000; includeSubDomains';
  return headers;
}

/**
 * Adds the nonce to every <script> tag of a rendered page.
 *
 * The nonce is hexadecimal and inserted WITHOUT quotes. That matters: Astro escapes `<`
 * in text but not inside attribute values, so user text in an attribute may contain
 * `<script`. An unquoted hex run stamped into such a value stays inside the attribute,
 * whereas a quoted one would close it early and let a later `<script>` in the same
 * value run with a valid nonce.
 */
export function addNonceToScripts(html: string, nonce: string): string {
  checkNonce(nonce);
  return html.replace(SCRIPT_TAG, `<script nonce=${nonce}`);
}

const SCRIPT_TAG = /<script(?=[\s>])/g;

function checkNonce(nonce: string): void {
  if (!/^[0-9a-f]{32,}$/.test(nonce)) throw new Error('CSP nonces must be lowercase hexadecimal');
}

/**
 * A page cut, as UTF-8 bytes, right after each `<script` that addNonceToScripts would
 * stamp, for a page served many times (pageCache.ts): joinWithNonce then gives the same
 * bytes as addNonceToScripts without searching or encoding the page again.
 */
export function splitAtScripts(html: string): Buffer[] {
  const parts: Buffer[] = [];
  let from = 0;
  for (const match of html.matchAll(SCRIPT_TAG)) {
    const cut = match.index + match[0].length;
    parts.push(Buffer.from(html.slice(from, cut), 'utf8'));
    from = cut;
  }
  parts.push(Buffer.from(html.slice(from), 'utf8'));
  return parts;
}

/** The parts of splitAtScripts joined with ` nonce=…` at each cut. */
export function joinWithNonce(parts: readonly Uint8Array[], nonce: string): Uint8Array<ArrayBuffer> {
  checkNonce(nonce);
  const stamp = Buffer.from(` nonce=${nonce}`, 'latin1');
  const size = parts.reduce((total, part) => total + part.length, 0) + stamp.length * (parts.length - 1);
  const joined = new Uint8Array(size);
  let at = 0;
  parts.forEach((part, index) => {
    if (index > 0) {
      joined.set(stamp, at);
      at += stamp.length;
    }
    joined.set(part, at);
    at += part.length;
  });
  return joined;
}
