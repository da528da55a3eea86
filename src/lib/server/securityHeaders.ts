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
  if (!/^[0-9a-f]{32,}$/.test(nonce)) throw new Error('CSP nonces must be lowercase hexadecimal');
  return html.replace(/<script(?=[\s>])/g, `<script nonce=${nonce}`);
}
