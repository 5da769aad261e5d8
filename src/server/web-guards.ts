// Hygiene for a server that listens on a user's machine: the usual response headers, and a check
// of Host (and Origin on POST) so that a page on another site cannot reach the API by pointing a
// DNS name of its own at 127.0.0.1 (DNS rebinding): such a request carries that name as its Host.

import { isIP } from 'node:net';
import type { NextFunction, Request, Response } from 'express';

const HEADERS: Readonly<Record<string, string>> = {
  'X-Content-Type-Options': 'nosniff',
  // Scripts, connections and everything else from the page's own origin only. Styles also inline:
  // plotly inserts its modebar and hover rules as <style> elements (it ships no CSS file), and
  // without them the plot's controls lose their layout. Plot export makes data: and blob: images.
  'Content-Security-Policy': "default-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data: blob:; object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'",
  'X-Frame-Options': 'DENY',
  'Referrer-Policy': 'no-referrer',
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Resource-Policy': 'same-origin',
};

export function securityHeaders(_req: Request, res: Response, next: NextFunction): void {
  res.set(HEADERS);
  next();
}

/** Host names accepted besides IP literals: loopback's name and any the server was bound to by name. */
function hostAllowed(hostname: string, extraNames: readonly string[]): boolean {
  const bare = hostname.replace(/^\[(.*)\]$/, '$1').toLowerCase();
  return isIP(bare) !== 0 || bare === 'localhost' || extraNames.includes(bare);
}

/** Splits "name:port" or "[v6]:port"; undefined when it is not that shape. */
function splitHost(host: string): { hostname: string; port: string } | undefined {
  const m = /^(\[[0-9a-fA-F:.]+\]|[^:[\]]+)(?::(\d{1,5}))?$/.exec(host);
  return m ? { hostname: m[1]!, port: m[2] ?? '80' } : undefined;
}

export interface HostCheckOptions { extraHostNames?: readonly string[] }

/**
 * Refuses with 403 a request whose Host is a name this server was not bound to, or whose port is
 * not the one it listens on; a POST whose Origin is not this same host and port is refused too.
 */
export function hostCheck(options: HostCheckOptions = {}) {
  const names = (options.extraHostNames ?? []).map((n) => n.toLowerCase());
  return (req: Request, res: Response, next: NextFunction): void => {
    const port = String(req.socket.localPort ?? '');
    const host = splitHost(req.headers.host ?? '');
    if (!host || !hostAllowed(host.hostname, names) || host.port !== port) {
      res.status(403).json({ error: `refused: the Host header ${JSON.stringify(req.headers.host ?? '')} is not this server's address (expected an IP address, localhost${names.length ? `, ${names.join(', ')}` : ''} with port ${port}); open the page at the URL flyclamp printed` });
      return;
    }
    const origin = req.headers.origin;
    if (req.method === 'POST' && origin !== undefined) {
      let same = false;
      try {
        const o = new URL(origin);
        same = o.protocol === 'http:' && o.host.toLowerCase() === (req.headers.host ?? '').toLowerCase();
      } catch { /* "null" or garbage: not the same origin */ }
      if (!same) {
        res.status(403).json({ error: `refused: a POST from the origin ${JSON.stringify(origin)}, which is not this server's page; only the page served here may post to its API` });
        return;
      }
    }
    next();
  };
}
