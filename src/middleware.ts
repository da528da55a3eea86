import { randomBytes, randomUUID } from 'node:crypto';
import { defineMiddleware, sequence } from 'astro:middleware';
import { scopedTo } from './lib/server/db';
import { clientAddress, errorResponse, outagePage } from './lib/server/http';
import { AppError, isDatabaseUnavailable } from './lib/server/errors';
import { logger } from './lib/server/logger';
import { keepPage, keptPageBody } from './lib/server/pageCache';
import { readAlongTarget } from './lib/server/requestReads';
import { addNonceToScripts, securityHeaders } from './lib/server/securityHeaders';
import { resolveSession } from './lib/server/session';
import { resolveApiToken } from './features/auth/apiTokens.server';
import { sweepOnce } from './features/extracts/intake.server';

// Partial upload files left by an earlier process (a crash, a kill) go as the server starts serving.
void sweepOnce();

/** Gives each request an id and a CSP nonce, and logs its outcome (no bodies, no cookies). */
const requestContext = defineMiddleware(async (context, next) => {
  context.locals.requestId = randomUUID();
  context.locals.cspNonce = randomBytes(16).toString('hex');
  const started = performance.now();
  const response = await next();
  logger.info(
    {
      requestId: context.locals.requestId,
      method: context.request.method,
      path: context.url.pathname,
      status: response.status,
      ms: Math.round(performance.now() - started),
    },
    'request',
  );
  return response;
});

/**
 * Always sets locals.user, locals.session (null when signed out) and locals.db. For a page
 * that may be kept, the session's read brings the page's counter along (locals.pageRead).
 */
const session = defineMiddleware(async (context, next) => {
  const resolved = await resolveSession({
    cookies: context.cookies,
    request: context.request,
    url: context.url,
    clientAddress: clientAddress(context),
  }, { verifyBearer: resolveApiToken, pageTarget: context.request.method === 'GET' ? readAlongTarget(context.url.pathname) : null });
  context.locals.user = resolved.user;
  context.locals.session = resolved.session;
  context.locals.pageRead = resolved.page ?? null;
  context.locals.db = scopedTo(resolved.user?.id ?? null);
  return next();
});

/**
 * Security headers on every response; the nonce is stamped onto HTML script tags. A page
 * that may be kept whole (locals.pageCacheKey) is kept here, before its nonce.
 */
const headers = defineMiddleware(async (context, next) => {
  const response = await next();
  const nonce = context.locals.cspNonce;
  const extra = securityHeaders(nonce);
  const type = response.headers.get('content-type') ?? '';
  const kept = context.locals.keptPage;
  if (kept && response.status === 200) {
    const served = new Response(keptPageBody(kept, nonce), { status: 200, headers: response.headers });
    for (const [name, value] of Object.entries(extra)) served.headers.set(name, value);
    return served;
  }
  if (type.includes('text/html')) {
    const page = await response.text();
    if (context.locals.pageCacheKey && response.status === 200) keepPage(context.locals.pageCacheKey, page);
    const html = addNonceToScripts(page, nonce);
    const rewritten = new Response(html, { status: response.status, statusText: response.statusText, headers: response.headers });
    for (const [name, value] of Object.entries(extra)) rewritten.headers.set(name, value);
    return rewritten;
  }
  for (const [name, value] of Object.entries(extra)) {
    try {
      response.headers.set(name, value);
    } catch {
      // Some responses (redirects made by Response.redirect) have immutable headers.
    }
  }
  return response;
});

/**
 * A database outage is not a bug: whatever request meets it (session look-up, page,
 * endpoint) gets a 503 that says so, and the next request after the database is back is
 * served as usual. Other errors go on to Astro's own handling.
 */
const outage = defineMiddleware(async (context, next) => {
  try {
    return await next();
  } catch (error) {
    if (!isDatabaseUnavailable(error)) throw error;
    if (context.url.pathname.startsWith('/api/')) return errorResponse(error, context.locals.requestId);
    logger.warn({ requestId: context.locals.requestId, reason: error instanceof Error ? error.message : String(error) }, 'database unavailable');
    return outagePage(context.locals.requestId);
  }
});

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Cross-site request forgery guard for every state-changing request that relies on the
 * session cookie, whatever its content type (Astro's own origin check covers form posts;
 * this also covers JSON and raw uploads). Bearer-token requests carry no ambient
 * credentials and are exempt.
 */
const sameOrigin = defineMiddleware(async (context, next) => {
  const { request, url } = context;
  if (SAFE_METHODS.has(request.method) || request.headers.get('authorization')?.startsWith('Bearer ')) return next();
  const origin = request.headers.get('origin');
  const fetchSite = request.headers.get('sec-fetch-site');
  const allowed = origin ? origin === url.origin : fetchSite === null || fetchSite === 'same-origin' || fetchSite === 'none';
  if (!allowed) {
    return errorResponse(new AppError(403, 'cross-site-request', 'Cross-site requests are refused.'), context.locals.requestId);
  }
  return next();
});

export const onRequest = sequence(requestContext, headers, outage, sameOrigin, session);
