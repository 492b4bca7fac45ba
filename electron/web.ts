/**
 * Browser mode: the renderer built by Vite (dist/) and the service behind loopback HTTP.
 * Bound to 127.0.0.1 only; every /api/ request carries a random token (401 without it);
 * every path an argument names must lie inside the folders the user named at start (403 otherwise);
 * progress travels as server-sent events.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { existsSync, realpathSync, statSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { dirname, extname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import type { LoopwiseApi, ProgressEvent } from './api.ts';
import { ContractError } from './contract.ts';
import { BadRequest, checkCall, isApiMethod, TOKEN_HEADER, type DoorInfo } from './web-client.ts';

export interface WebServerOptions {
  /** 0 picks a free port. */
  port: number;
  /** The folders the server may read from or write to (cohort folders, output folders). */
  roots: string[];
  /** The built renderer; when absent or missing, only /api/ is served. */
  staticDir?: string;
  /** Fixed token (tests); a fresh random one otherwise. */
  token?: string;
  sampleCohort?: string | null;
  defaultOutDir?: string | null;
  version?: string;
}

export interface WebServer {
  url: string;
  port: number;
  token: string;
  roots: string[];
  close(): Promise<void>;
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

/** The real path of p, or of its nearest existing ancestor joined with the rest (for folders not yet made). */
export function realPathOf(p: string): string {
  let head = resolve(p);
  const tail: string[] = [];
  while (!existsSync(head)) {
    const up = dirname(head);
    if (up === head) break;
    tail.unshift(head.slice(up.length).replace(/^[\\/]+/, ''));
    head = up;
  }
  const real = existsSync(head) ? realpathSync(head) : head;
  return tail.length ? join(real, ...tail) : real;
}

/** True when p (after resolving symlinks and '..') is one of the roots or inside one. */
export function insideRoots(p: string, realRoots: string[]): boolean {
  if (!isAbsolute(p)) return false;
  const real = realPathOf(p);
  return realRoots.some((root) => {
    const rel = relative(root, real);
    return rel === '' || (!rel.startsWith('..') && !isAbsolute(rel) && !rel.startsWith(sep));
  });
}

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
  const realRoots = roots.map((r) => realpathSync(r));
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
    defaultOutDir: options.defaultOutDir ?? null,
    roots,
  });

  async function handleApi(req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
    const given = (req.headers[TOKEN_HEADER] as string | undefined) ?? url.searchParams.get('token');
    if (!sameToken(given, token)) return send(res, 401, { error: 'missing or wrong token' });
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
    for (const p of checked.paths) {
      if (!insideRoots(p, realRoots)) {
        return send(res, 403, {
          error: `${p} is outside the folders this session may use (${roots.join(', ')})`,
        });
      }
    }
    try {
      const fn = api[name] as (...a: unknown[]) => Promise<unknown>;
      const result = await fn.apply(api, checked.args);
      return send(res, 200, result === undefined ? null : result);
    } catch (e) {
      // Settings the contract refuses once the cohort is open (e.g. an unknown column): a bad request.
      if (e instanceof ContractError) return send(res, 400, { error: e.message, problems: e.problems });
      // A refusal to overwrite the user's files is a conflict the user can resolve, not a server fault.
      const conflict = e instanceof Error && e.name === 'OutDirError';
      return send(res, conflict ? 409 : 500, { error: e instanceof Error ? e.message : String(e) });
    }
  }

  async function handleStatic(req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
    if (req.method !== 'GET' && req.method !== 'HEAD') return send(res, 405, { error: 'GET only' });
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
