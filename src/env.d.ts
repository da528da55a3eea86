/// <reference types="astro/client" />

declare namespace App {
  interface Locals {
    /** A random id for this request, echoed in logs and error bodies. */
    requestId: string;
    /** The nonce that this response's Content-Security-Policy allows inline scripts by. */
    cspNonce: string;
    /** The signed-in user, or null. */
    user: import('./lib/server/session').SessionUser | null;
    /** The current session, or null. */
    session: import('./lib/server/session').SessionInfo | null;
    /** Runs work in this request's transaction, as this request's user (row-level security). */
    db: import('./lib/server/db').Scoped;
    /** A kept page's counter, read with the session (lib/server/requestReads.ts PageRead), or null. */
    pageRead?: import('./lib/server/requestReads').PageRead | null;
    /** Set by a page that may be kept whole (lib/server/pageCache.ts): the key its HTML is kept under when it answers 200. */
    pageCacheKey?: string;
    /** Set by a page that answers with a kept page (serveKeptPage): the middleware writes its bytes. */
    keptPage?: import('./lib/server/pageCache').KeptPage;
  }
}
