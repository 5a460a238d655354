/**
 * Hardening that applies to every request, before any route sees it.
 *
 * 1. **Host allow-list** (defence against DNS rebinding). A page on another site can make its own
 *    name resolve to 127.0.0.1; the browser then treats this server as that site's origin, so the
 *    Origin check of the CSRF protection passes. The Host header still carries the foreign name, so
 *    every request whose Host is not a loopback name or a name the operator configured
 *    (`--allowed-host`, `VOIDCAST_ALLOWED_HOSTS`) is answered 421 Misdirected Request (RFC 9110
 *    §15.5.20) before anything is read or stored.
 * 2. **Security headers** through Hono's `secureHeaders`: a Content-Security-Policy that allows
 *    script and style from this server only (no inline script, no eval: the page behaviour lives in
 *    /assets/voidcast.js), `frame-ancestors 'none'` (W3C CSP Level 3 §6.4.2) with X-Frame-Options
 *    DENY for older browsers, `X-Content-Type-Options: nosniff`, and a same-origin referrer policy
 *    (W3C Referrer Policy). Strict-Transport-Security is not sent: the server speaks plain HTTP
 *    (RFC 6797 §7.2 says a host must not send it over a non-secure transport).
 */
import type { MiddlewareHandler } from 'hono';
import { secureHeaders } from 'hono/secure-headers';

/** Names every installation accepts: this machine's loopback names (RFC 6761 §6.3, RFC 5735, RFC 4291). */
export function isLoopbackName(host: string): boolean {
  const h = host.toLowerCase();
  if (h === 'localhost' || h.endsWith('.localhost')) return true;
  if (h === '[::1]' || h === '::1') return true;
  return /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(h);
}

/** True when a bind address keeps the server on this machine. */
export function isLoopbackBind(address: string): boolean {
  const a = address.trim().replace(/^\[|\]$/g, '');
  return a === '::1' || isLoopbackName(a);
}

/** The host name of a Host header value, without the port, lower-cased; null when malformed. */
export function hostName(header: string): string | null {
  const h = header.trim().toLowerCase();
  if (h === '') return null;
  const m = /^(\[[0-9a-f:.]+\]|[a-z0-9.-]+)(?::(\d{1,5}))?$/.exec(h);
  return m ? m[1]!.replace(/\.$/, '') : null;
}

/** Parses a comma- or space-separated list of host names given by an operator. */
export function parseAllowedHosts(text: string | undefined): string[] {
  if (text === undefined) return [];
  return text
    .split(/[\s,]+/)
    .map((s) => s.trim().toLowerCase())
    .filter((s) => s !== '');
}

/** Refuses every request whose Host is neither a loopback name nor listed in `allowed`. */
export function hostAllowList(allowed: readonly string[], log: (line: string) => void): MiddlewareHandler {
  const names = new Set(allowed.map((a) => hostName(a) ?? a.toLowerCase()));
  return async function hostAllowList(c, next) {
    // Node's server builds the request URL from the Host header; app.request() from its URL.
    const raw = c.req.header('host') ?? new URL(c.req.url).host;
    const name = hostName(raw);
    if (name !== null && (isLoopbackName(name) || names.has(name))) return next();
    log(`REFUSED ${c.req.method} ${c.req.path}: Host ${JSON.stringify(raw.slice(0, 100))} is not allowed`);
    return c.text(
      `This server does not answer to the name ${JSON.stringify(raw.slice(0, 100))}. ` +
        'The operator can allow a name with --allowed-host NAME (or VOIDCAST_ALLOWED_HOSTS).\n',
      421,
    );
  };
}

/** The Content-Security-Policy directives (exported for the tests and the docs). */
export const CSP = {
  defaultSrc: ["'self'"],
  scriptSrc: ["'self'"],
  styleSrc: ["'self'"],
  imgSrc: ["'self'", 'data:'],
  connectSrc: ["'self'"],
  fontSrc: ["'self'"],
  objectSrc: ["'none'"],
  baseUri: ["'self'"],
  formAction: ["'self'"],
  frameAncestors: ["'none'"],
};

/** Security headers on every response (hono/secure-headers). */
export function securityHeaders(): MiddlewareHandler {
  return secureHeaders({
    contentSecurityPolicy: CSP,
    xFrameOptions: 'DENY',
    xContentTypeOptions: true,
    referrerPolicy: 'same-origin',
    strictTransportSecurity: false,
    crossOriginOpenerPolicy: 'same-origin',
    crossOriginResourcePolicy: 'same-origin',
  });
}
