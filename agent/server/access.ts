// Who may talk to the agent: the token (when one is set), the Host header (against DNS rebinding on loopback)
// and the Origin header (a page on another site must not drive the agent through the visitor's browser).
import { timingSafeEqual, createHash } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import { isLoopbackHost, type ServerOptions } from './options.ts';

export const TOKEN_COOKIE = 'floorline_token';

export type AccessVerdict = { ok: true; viaQuery: boolean } | { ok: false; status: 401 | 403; reason: string };

function digest(s: string): Buffer {
  return createHash('sha256').update(s).digest();
}

/** Constant-time comparison (hashing first makes the lengths equal). */
function sameToken(given: string, expected: string): boolean {
  return timingSafeEqual(digest(given), digest(expected));
}

function cookieValue(header: string | undefined, name: string): string | undefined {
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) {
      try {
        return decodeURIComponent(part.slice(eq + 1).trim());
      } catch {
        return undefined; // not valid percent-encoding: treated as no cookie, so the request gets a plain 401
      }
    }
  }
  return undefined;
}

/** The host name of a Host header, or null unless it is exactly `name[:port]` or `[v6][:port]`: anything else
 * (`127.0.0.1:80@evil.example`, spaces, a path) is refused rather than guessed at. */
export function hostnameOf(hostHeader: string): string | null {
  const m = /^(\[[0-9A-Fa-f:.]+\]|[A-Za-z0-9.-]+)(?::(\d{1,5}))?$/.exec(hostHeader);
  if (!m) return null;
  if (m[2] !== undefined && Number(m[2]) > 65535) return null;
  return m[1]!;
}

export function checkAccess(req: IncomingMessage, url: URL, options: ServerOptions): AccessVerdict {
  const host = req.headers.host;
  if (!host) return { ok: false, status: 403, reason: 'request has no Host header' };
  const hostname = hostnameOf(host);
  if (hostname === null) return { ok: false, status: 403, reason: 'Host header is not name[:port]' };
  // Bound to loopback, only loopback names may reach us: a rebinding DNS name pointing at 127.0.0.1 is refused.
  if (isLoopbackHost(options.host) && !isLoopbackHost(hostname)) {
    return {
      ok: false,
      status: 403,
      reason: `Host '${host}' is not a loopback name; open the dashboard at http://127.0.0.1:PORT/`,
    };
  }
  const origin = req.headers.origin;
  if (
    origin !== undefined &&
    origin !== `http://${host}` &&
    origin !== `https://${host}` &&
    !options.allowedOrigins.includes(origin)
  ) {
    return { ok: false, status: 403, reason: `Origin '${origin}' is not this agent's page (http://${host})` };
  }
  if (options.token === undefined) return { ok: true, viaQuery: false };
  const auth = req.headers.authorization;
  const bearer = auth?.startsWith('Bearer ') ? auth.slice(7) : undefined;
  const query = url.searchParams.get('token') ?? undefined;
  const cookie = cookieValue(req.headers.cookie, TOKEN_COOKIE);
  for (const candidate of [bearer, cookie, query]) {
    if (candidate !== undefined && sameToken(candidate, options.token))
      return { ok: true, viaQuery: candidate === query && candidate !== cookie };
  }
  return {
    ok: false,
    status: 401,
    reason:
      'missing or wrong token; open the URL the agent printed (it carries ?token=…) or send Authorization: Bearer TOKEN',
  };
}

/** Set after a good ?token= so the page's own asset, API and WebSocket requests carry it without it in every URL. */
export function tokenCookie(token: string): string {
  return `${TOKEN_COOKIE}=${encodeURIComponent(token)}; HttpOnly; SameSite=Strict; Path=/`;
}
