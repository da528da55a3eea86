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

/** Adds the nonce to every <script> tag of an HTML page that lacks one. */
export function addNonceToScripts(html: string, nonce: string): string {
  return html.replace(/<script(?![^>]*\snonce=)(?=[\s>])/g, `<script nonce="${nonce}"`);
}
