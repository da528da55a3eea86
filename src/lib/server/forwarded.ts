/**
 * Which address a request came from. Astro's Node adapter takes the first value of
 * X-Forwarded-For whenever the header is present, so any client could name itself. Here
 * the header counts only when the connection comes from a proxy listed in
 * CROSSGRAIN_TRUSTED_PROXIES; otherwise the socket's own address is the client's.
 *
 * The adapter builds each Request in `NodeApp.createRequest`; a wrapper around it records
 * the socket's address on the Request (under a private symbol) for `clientAddressOf`.
 */
import type { IncomingMessage } from 'node:http';
import { NodeApp } from 'astro/app/node';
import { env } from './env';

const PEER = Symbol.for('crossgrain.socketAddress');
const WRAPPED = Symbol.for('crossgrain.createRequestWrapped');

/** "::ffff:10.0.0.1" and "10.0.0.1" name the same IPv4 peer. */
function plainAddress(address: string): string {
  return address.startsWith('::ffff:') ? address.slice(7) : address;
}

export function isTrustedProxy(address: string | undefined, trusted: readonly string[] = env.CROSSGRAIN_TRUSTED_PROXIES): boolean {
  if (!address) return false;
  const plain = plainAddress(address);
  return trusted.some((entry) => plainAddress(entry) === plain);
}

/**
 * The client's address given the socket's peer, the X-Forwarded-For header and the
 * trusted proxies: the right-most forwarded address that is not itself a trusted proxy
 * (a client can prepend anything it likes, but not what the proxy appends).
 */
export function resolveClientAddress(peer: string, forwardedFor: string | null, trusted: readonly string[] = env.CROSSGRAIN_TRUSTED_PROXIES): string {
  if (!forwardedFor || !isTrustedProxy(peer, trusted)) return plainAddress(peer);
  const hops = forwardedFor.split(',').map((hop) => hop.trim()).filter((hop) => hop.length > 0);
  for (let index = hops.length - 1; index >= 0; index -= 1) {
    if (!isTrustedProxy(hops[index], trusted)) return plainAddress(hops[index]);
  }
  return plainAddress(hops[0] ?? peer);
}

type CreateRequest = typeof NodeApp.createRequest;
const current = NodeApp.createRequest as CreateRequest & { [WRAPPED]?: true };
if (!current[WRAPPED]) {
  const wrapped = Object.assign(
    function createRequestWithPeer(this: unknown, req: IncomingMessage, options?: Parameters<CreateRequest>[1]): Request {
      const request = current.call(NodeApp, req, options);
      const peer = req.socket?.remoteAddress;
      if (peer) Reflect.set(request, PEER, peer);
      return request;
    },
    { [WRAPPED]: true as const },
  );
  NodeApp.createRequest = wrapped;
}

/**
 * The client's address for a request. `astroAddress` is what Astro reports (it may come
 * from a forged header). When the socket's address is unknown (the first request before
 * this module was loaded) and a forwarded header is present, the answer is "unknown"
 * rather than the header's claim.
 */
export function clientAddressOf(request: Request, astroAddress: string): string {
  const peer: unknown = Reflect.get(request, PEER);
  const forwardedFor = request.headers.get('x-forwarded-for');
  if (typeof peer === 'string') return resolveClientAddress(peer, forwardedFor);
  return forwardedFor ? 'unknown' : astroAddress;
}
