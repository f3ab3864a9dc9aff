import { randomBytes, timingSafeEqual } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import type { IncomingMessage, Server, ServerResponse } from 'node:http';
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { extname, isAbsolute, join, normalize, relative, sep } from 'node:path';
import type { MatchBudget } from '../core/report.js';
import type { CheckDoneEvent, CheckPartialEvent, CheckProgressEvent } from './app-api.js';
import { expectExportFormat } from './app-api.js';
import { AppService } from './app-service.js';
import { loadStoredBudget, loadStoredPreference, storeBudget, storePreference } from './settings-store.js';
import { readRecentFolders } from './recent-folders.js';

export const contentSecurityPolicy =
  "default-src 'self'; img-src 'self' data: blob:; style-src 'self'; script-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'";

const types: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.json': 'application/json',
  '.woff2': 'font/woff2',
};

export interface BrowserHost {
  readonly url: string;
  readonly port: number;
  readonly token: string;
  readonly server: Server;
  close(): Promise<void>;
}

export interface BrowserHostOptions {
  /** Folder of the built page (index.html and its assets). */
  readonly assets: string;
  readonly demoFolder: () => Promise<string>;
  readonly version: string;
  readonly threads?: number;
  /** What the page opens first. */
  readonly initialTarget?: { folder: string } | { demo: true } | null;
  /** Fixed port for tests; 0 (default) lets the system choose. */
  readonly port?: number;
}

function sameSecret(a: string | null | undefined, b: string): boolean {
  if (!a) return false;
  const x = Buffer.from(a), y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

function cookieToken(req: IncomingMessage, name: string): string | null {
  for (const part of (req.headers.cookie ?? '').split(';')) {
    const [k, ...v] = part.trim().split('=');
    if (k === name) return v.join('=');
  }
  return null;
}

async function readJsonBody(req: IncomingMessage, limit = 1_000_000): Promise<unknown> {
  let size = 0;
  const chunks: Buffer[] = [];
  for await (const chunk of req) {
    size += (chunk as Buffer).length;
    if (size > limit) throw new Error('request too large');
    chunks.push(chunk as Buffer);
  }
  return chunks.length ? JSON.parse(Buffer.concat(chunks).toString('utf8')) : [];
}

/**
 * The same page as the desktop window, served on 127.0.0.1 only, for machines without the Electron
 * binary. Every request must name this run's secret token (query `t`, header, or the cookie the
 * first page load sets) and carry our own Host (and Origin, when sent), which shuts out other sites
 * and DNS rebinding. It serves its own assets, the API, and frames of the check in progress only.
 */
export async function startBrowserHost(options: BrowserHostOptions): Promise<BrowserHost> {
  const token = randomBytes(24).toString('base64url');
  const events = new Set<ServerResponse>();
  const broadcast = (type: string, data: CheckProgressEvent | CheckDoneEvent | CheckPartialEvent): void => {
    const line = `event: ${type}\ndata: ${JSON.stringify(data)}\n\n`;
    for (const res of events) res.write(line);
  };
  const service = new AppService({
    demoFolder: options.demoFolder,
    threads: options.threads,
    onProgress: (e) => broadcast('progress', e),
    onDone: (e) => broadcast('done', e),
    onPartial: (e) => broadcast('partial', e),
  });
  let port = 0;
  const cookieName = (): string => `seamscout-${port}`;

  const api: Record<string, (args: unknown[]) => Promise<unknown> | unknown> = {
    hostInfo: () => ({ shell: 'browser', version: options.version, initialTarget: options.initialTarget ?? null }),
    chooseFolder: () => null,
    recentFolders: () => readRecentFolders(),
    startCheck: ([target]) => {
      const t = target as { folder?: unknown; demo?: unknown };
      if (t && t.demo === true) return service.startCheck({ demo: true });
      if (t && typeof t.folder === 'string' && isAbsolute(t.folder)) return service.startCheck({ folder: t.folder });
      throw new TypeError('Expected { folder: <absolute path> } or { demo: true } for startCheck');
    },
    cancelCheck: ([id]) => service.cancelCheck(Number(id)),
    loadBudget: () => loadStoredBudget(),
    saveBudget: ([b]) => storeBudget((b ?? {}) as Record<string, unknown>),
    loadShotPreference: () => loadStoredPreference(),
    saveShotPreference: ([p]) => storePreference(p),
    exportContent: ([id, format, budget]) => {
      return service.exportReport(Number(id), expectExportFormat(format), budget as MatchBudget);
    },
    tiePoints: ([id, a, b]) => service.tiePoints(Number(id), String(a), String(b)),
  };

  const send = (res: ServerResponse, status: number, body: string | Buffer, type = 'text/plain; charset=utf-8', extra: Record<string, string> = {}): void => {
    res.writeHead(status, {
      'Content-Type': type,
      'Content-Security-Policy': contentSecurityPolicy,
      'X-Content-Type-Options': 'nosniff',
      'Referrer-Policy': 'no-referrer',
      'Cache-Control': 'no-store',
      ...extra,
    });
    res.end(body);
  };

  const handle = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    const allowedHosts = [`127.0.0.1:${port}`, `localhost:${port}`];
    if (!allowedHosts.includes(req.headers.host ?? '')) return send(res, 421, 'wrong host');
    const origin = req.headers.origin;
    if (origin !== undefined && !allowedHosts.some((h) => origin === `http://${h}`)) return send(res, 403, 'foreign origin');
    const url = new URL(req.url ?? '/', `http://127.0.0.1:${port}`);
    const queryToken = url.searchParams.get('t');
    const headerToken = req.headers['x-seamscout-token'];
    const authorised =
      sameSecret(queryToken, token) || sameSecret(typeof headerToken === 'string' ? headerToken : null, token) || sameSecret(cookieToken(req, cookieName()), token);
    if (!authorised) return send(res, 401, 'missing or wrong token');

    if (url.pathname.startsWith('/api/')) {
      const method = url.pathname.slice(5);
      if (method === 'events' && req.method === 'GET') {
        res.writeHead(200, { 'Content-Type': 'text/event-stream', 'Cache-Control': 'no-store', Connection: 'keep-alive' });
        res.write(': connected\n\n');
        events.add(res);
        req.on('close', () => events.delete(res));
        return;
      }
      // State-changing calls need the header (a page of ours sets it; a form elsewhere cannot).
      if (req.method !== 'POST' || !sameSecret(typeof headerToken === 'string' ? headerToken : null, token)) return send(res, 403, 'API calls are POST with the token header');
      const fn = Object.hasOwn(api, method) ? api[method] : undefined;
      if (!fn) return send(res, 404, 'no such call');
      try {
        const args = await readJsonBody(req);
        const result = await fn(Array.isArray(args) ? args : [args]);
        return send(res, 200, JSON.stringify({ ok: result ?? null }), 'application/json');
      } catch (err) {
        return send(res, 200, JSON.stringify({ error: (err as Error).message }), 'application/json');
      }
    }

    if (url.pathname.startsWith('/frame/') && req.method === 'GET') {
      const [, , id, ...rest] = url.pathname.split('/');
      let file: string;
      try {
        file = decodeURIComponent(rest.join('/'));
      } catch {
        return send(res, 400, 'bad name');
      }
      const image = await service.frameImage(Number(id), file, Number(url.searchParams.get('max') ?? 320)).catch(() => null);
      if (!image) return send(res, 404, 'no such frame');
      return send(res, 200, image, 'image/jpeg');
    }

    if (req.method !== 'GET') return send(res, 405, 'method not allowed');
    const path = url.pathname === '/' ? 'index.html' : decodeURIComponent(url.pathname.slice(1));
    const target = normalize(join(options.assets, path));
    const rel = relative(options.assets, target);
    if (rel.startsWith('..') || isAbsolute(rel) || rel.split(sep).some((p) => p.startsWith('.'))) return send(res, 404, 'not found');
    let body: Buffer;
    try {
      body = await readFile(target);
    } catch {
      return send(res, 404, 'not found');
    }
    const extra: Record<string, string> =
      path === 'index.html' ? { 'Set-Cookie': `${cookieName()}=${token}; HttpOnly; SameSite=Strict; Path=/` } : {};
    return send(res, 200, body, types[extname(target)] ?? 'application/octet-stream', extra);
  };

  const server = createServer((req, res) => {
    handle(req, res).catch((err) => {
      if (!res.headersSent) send(res, 500, (err as Error).message);
      else res.end();
    });
  });
  await new Promise<void>((resolveListen, reject) => {
    server.once('error', reject);
    server.listen(options.port ?? 0, '127.0.0.1', () => resolveListen());
  });
  port = (server.address() as AddressInfo).port;
  return {
    url: `http://127.0.0.1:${port}/?t=${token}`,
    port,
    token,
    server,
    close: async () => {
      for (const res of events) res.end();
      await service.close();
      await new Promise<void>((r) => {
        server.close(() => r());
        server.closeAllConnections();
      });
    },
  };
}
