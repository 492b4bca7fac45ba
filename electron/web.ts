/**
 * Browser mode: the renderer built by Vite (dist/) and the service behind loopback HTTP.
 * Bound to 127.0.0.1 only. The address printed at start carries a random token once: the first
 * page load trades it for an HttpOnly, SameSite=Strict cookie and is redirected to the bare
 * address, so the token stays out of the page's address and history. Every /api/ request must
 * carry the token in that cookie or in the x-loopwise-token header (never in the URL; 401
 * otherwise), and requests from another origin are refused (403), as are paths outside the
 * folders named at start: read roots (cohorts, the sample) are only read; outputs go only inside
 * write roots, and never into a cohort folder. Progress travels as server-sent events.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { existsSync, statSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { extname, resolve, sep } from 'node:path';
import type { LoopwiseApi, OpenCohortRequest, ProgressEvent } from './api.ts';
import { ContractError } from './contract.ts';
import { callPaths, checkDoorPaths, insideRoots, realPathOf } from './service/confine.ts';
import { BadRequest, checkCall, isApiMethod, TOKEN_HEADER, type DoorInfo } from './web-client.ts';

export interface WebServerOptions {
  /** 0 picks a free port. */
  port: number;
  /** The folders the server may read (cohort folders, the sample); never written. */
  roots: string[];
  /** The folders outputs may go into (default: defaultOutDir, when given). */
  writeRoots?: string[];
  /** The built renderer; when absent or missing, only /api/ is served. */
  staticDir?: string;
  /** Fixed token (tests); a fresh random one otherwise. */
  token?: string;
  sampleCohort?: string | null;
  /** The study named at start (read-only, like the sample), opened by the page at once. */
  startCohort?: string | null;
  defaultOutDir?: string | null;
  version?: string;
}

export interface WebServer {
  url: string;
  port: number;
  token: string;
  roots: string[];
  writeRoots: string[];
  close(): Promise<void>;
}

/** The cookie the first page load sets: the token, for the page's own requests only. */
export const TOKEN_COOKIE = 'loopwise-token';

/** The token of a request's cookie header, if any. */
function cookieToken(header: string | undefined): string | null {
  for (const part of (header ?? '').split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === TOKEN_COOKIE) return part.slice(eq + 1).trim();
  }
  return null;
}

/**
 * Why a request comes from somewhere else than the page this server served, or null: a foreign
 * Origin header, or the browser's own word (Sec-Fetch-Site) that another site (or another port of
 * this host) sent it.
 */
export function foreignRequest(headers: IncomingMessage['headers'], port: number): string | null {
  const origin = headers.origin;
  if (origin !== undefined && origin !== `http://127.0.0.1:${port}` && origin !== `http://localhost:${port}`)
    return `requests from ${origin} are not accepted`;
  const site = headers['sec-fetch-site'];
  if (site === 'cross-site' || site === 'same-site') return 'requests from another site are not accepted';
  return null;
}

/** The policy the page runs under: nothing from elsewhere, no eval, inline styles for Plotly only. */
export const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  "script-src 'self'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self' data:",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
  "frame-ancestors 'none'",
].join('; ');

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.json': 'application/json',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
};

const MAX_BODY = 1 << 20;

// The path checks live in service/confine.ts, shared with the Electron door.
export { insideRoots, realPathOf };

function sameToken(given: string | null | undefined, token: string): boolean {
  if (!given) return false;
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b);
}

function send(res: ServerResponse, status: number, body: unknown): void {
  const text = body === undefined ? '' : JSON.stringify(body);
  res.writeHead(status, {
    'content-type': 'application/json; charset=utf-8',
    'cache-control': 'no-store',
    'x-content-type-options': 'nosniff',
  });
  res.end(text);
}

function readBody(req: IncomingMessage): Promise<string> {
  return new Promise((ok, fail) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on('data', (c: Buffer) => {
      size += c.length;
      if (size > MAX_BODY) {
        fail(new BadRequest('request body too large'));
        req.destroy();
      } else chunks.push(c);
    });
    req.on('end', () => ok(Buffer.concat(chunks).toString('utf8')));
    req.on('error', fail);
  });
}

/** Starts browser mode over the given service. Resolves once listening on 127.0.0.1. */
export async function startWebServer(api: LoopwiseApi, options: WebServerOptions): Promise<WebServer> {
  const token = options.token ?? randomBytes(24).toString('base64url');
  const roots = options.roots.map((r) => resolve(r));
  for (const r of roots) {
    if (!existsSync(r) || !statSync(r).isDirectory()) throw new Error(`Folder not found: ${r}`);
  }
  const writeRoots = (options.writeRoots ?? (options.defaultOutDir ? [options.defaultOutDir] : [])).map((r) =>
    resolve(r),
  );
  for (const r of writeRoots) {
    if (!existsSync(r) || !statSync(r).isDirectory()) throw new Error(`Folder not found: ${r}`);
  }
  // Cohort folders are read-only: the sample, and every cohort a call of this session names.
  const cohorts = new Set<string>(
    [options.sampleCohort, options.startCohort].filter((c): c is string => !!c).map((c) => resolve(c)),
  );
  const staticDir = options.staticDir && existsSync(options.staticDir) ? resolve(options.staticDir) : null;
  const sseClients = new Set<ServerResponse>();
  let port = options.port;

  const unsubscribe = api.onProgress((e: ProgressEvent) => {
    const line = `data: ${JSON.stringify(e)}\n\n`;
    for (const c of sseClients) c.write(line);
  });
  const heartbeat = setInterval(() => {
    for (const c of sseClients) c.write(': keep-alive\n\n');
  }, 15_000);
  heartbeat.unref();

  const info = (): DoorInfo => ({
    mode: 'web',
    version: options.version ?? '0.0.0',
    sampleCohort: options.sampleCohort ?? null,
    startCohort: options.startCohort ? resolve(options.startCohort) : null,
    defaultOutDir: options.defaultOutDir ?? null,
    roots: [...new Set([...roots, ...writeRoots])],
  });

  async function handleApi(req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
    const foreign = foreignRequest(req.headers, port);
    if (foreign) return send(res, 403, { error: foreign });
    // The token travels in the cookie set by the first page load, or in a header: never in the URL.
    const given = (req.headers[TOKEN_HEADER] as string | undefined) ?? cookieToken(req.headers.cookie);
    if (!sameToken(given, token))
      return send(res, 401, { error: 'missing or wrong token: open the address printed by npm start' });
    const name = url.pathname.slice('/api/'.length);

    if (name === 'events') {
      if (req.method !== 'GET') return send(res, 405, { error: 'GET only' });
      res.writeHead(200, {
        'content-type': 'text/event-stream',
        'cache-control': 'no-store',
        connection: 'keep-alive',
      });
      res.write(': connected\n\n');
      sseClients.add(res);
      req.on('close', () => sseClients.delete(res));
      return;
    }
    if (req.method !== 'POST') return send(res, 405, { error: 'POST only' });
    let args: unknown;
    try {
      const body = await readBody(req);
      args = body === '' ? [] : JSON.parse(body);
    } catch (e) {
      return send(res, 400, { error: e instanceof BadRequest ? e.message : 'the body must be a JSON array' });
    }
    if (!Array.isArray(args)) return send(res, 400, { error: 'the body must be a JSON array of arguments' });
    if (name === 'info') return send(res, 200, info());
    if (!isApiMethod(name)) return send(res, 404, { error: `no such method: ${name}` });

    let checked;
    try {
      checked = checkCall(name, args);
    } catch (e) {
      const problems = e instanceof BadRequest ? e.problems : [];
      return send(res, 400, { error: (e as Error).message, ...(problems.length ? { problems } : {}) });
    }
    const refusal = checkDoorPaths(callPaths(name, checked), {
      read: roots,
      write: writeRoots,
      cohorts: [...cohorts],
    });
    if (refusal) return send(res, 403, { error: refusal });
    if (name === 'openCohort' || name === 'startRun') {
      const cohort =
        name === 'openCohort' ? checked.args[0] : (checked.args[0] as { cohort: unknown }).cohort;
      cohorts.add(realPathOf((cohort as OpenCohortRequest).dir));
    }
    try {
      const fn = api[name] as (...a: unknown[]) => Promise<unknown>;
      const result = await fn.apply(api, checked.args);
      return send(res, 200, result === undefined ? null : result);
    } catch (e) {
      // Settings the contract refuses once the cohort is open (e.g. an unknown column): a bad request.
      if (e instanceof ContractError) return send(res, 400, { error: e.message, problems: e.problems });
      // A results query naming a column the table lacks.
      if (e instanceof Error && e.name === 'ResultQueryError') return send(res, 400, { error: e.message });
      // A refusal to overwrite the user's files, or to export a run that did not finish, is a
      // conflict the user can resolve, not a server fault; so is a folder that cannot take the write (full disk: 507, read-only: 403).
      const kind = e instanceof Error ? e.name : '';
      const code = (e as { code?: string }).code;
      const status =
        kind === 'ComparisonError'
          ? 400
          : kind === 'OutDirError' || kind === 'RunStateError'
            ? 409
            : kind === 'WriteError'
              ? code === 'ENOSPC' || code === 'EDQUOT'
                ? 507
                : 403
              : 500;
      // A refusal's code (the output folder's rule) lets the app offer its way out.
      return send(res, status, {
        error: e instanceof Error ? e.message : String(e),
        ...(kind === 'OutDirError' && typeof code === 'string' ? { code } : {}),
      });
    }
  }

  async function handleStatic(req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
    if (req.method !== 'GET' && req.method !== 'HEAD') return send(res, 405, { error: 'GET only' });
    const offered = url.searchParams.get('token');
    if (offered !== null) {
      // The first load: the token becomes a cookie and leaves the address (and so the history).
      if (!sameToken(offered, token))
        return send(res, 401, { error: 'wrong token: open the address printed by npm start' });
      url.searchParams.delete('token');
      res.writeHead(303, {
        location: url.pathname + url.search,
        'set-cookie': `${TOKEN_COOKIE}=${token}; HttpOnly; SameSite=Strict; Path=/`,
        'cache-control': 'no-store',
        'referrer-policy': 'no-referrer',
      });
      res.end();
      return;
    }
    if (!staticDir) return send(res, 404, { error: 'the renderer is not built: run npm run build' });
    let rel: string;
    try {
      rel = decodeURIComponent(url.pathname);
    } catch {
      return send(res, 400, { error: 'bad path' });
    }
    if (rel === '/' || rel === '') rel = '/index.html';
    const file = resolve(staticDir, '.' + rel);
    if (!file.startsWith(staticDir + sep)) return send(res, 404, { error: 'not found' });
    let data: Buffer;
    try {
      data = await readFile(file);
    } catch {
      return send(res, 404, { error: 'not found' });
    }
    res.writeHead(200, {
      'content-type': TYPES[extname(file)] ?? 'application/octet-stream',
      'content-security-policy': CONTENT_SECURITY_POLICY,
      'x-content-type-options': 'nosniff',
      'referrer-policy': 'no-referrer',
      'cache-control': 'no-cache',
    });
    res.end(req.method === 'HEAD' ? undefined : data);
  }

  const server = createServer((req, res) => {
    // A page on another site cannot reach us through a rebound DNS name: only our own host names pass.
    const host = req.headers.host ?? '';
    if (host !== `127.0.0.1:${port}` && host !== `localhost:${port}`) {
      return send(res, 421, { error: 'wrong host' });
    }
    const url = new URL(req.url ?? '/', `http://${host}`);
    const done = url.pathname.startsWith('/api/') ? handleApi(req, res, url) : handleStatic(req, res, url);
    done.catch((e: unknown) => {
      if (!res.headersSent) send(res, 500, { error: e instanceof Error ? e.message : String(e) });
      else res.end();
    });
  });

  await new Promise<void>((ok, fail) => {
    server.once('error', fail);
    server.listen(options.port, '127.0.0.1', () => ok());
  });
  port = (server.address() as AddressInfo).port;

  return {
    url: `http://127.0.0.1:${port}/?token=${token}`,
    port,
    token,
    roots,
    writeRoots,
    close: async () => {
      unsubscribe();
      clearInterval(heartbeat);
      for (const c of sseClients) c.end();
      sseClients.clear();
      server.closeAllConnections();
      await new Promise<void>((ok) => server.close(() => ok()));
    },
  };
}
