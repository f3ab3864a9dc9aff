import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { IncomingMessage, Server, ServerResponse } from 'node:http';
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { isIPv4 } from 'node:net';
import type { CheckDoneEvent, CheckPartialEvent, CheckProgressEvent, HostCallName } from '../common/api.js';
import { createHandlers, frameAnswer } from './api-handlers.js';
import { AppService } from './app-service.js';
import type { DemoWriting } from './demo-shoot.js';
import { createFrameGate } from './frame-gate.js';
import { buildContentSecurityPolicy, readAsset } from './page-assets.js';

const contentSecurityPolicy = buildContentSecurityPolicy();

export interface BrowserHost {
  readonly url: string;
  /** The loopback address this run listens on (random in 127.0.0.0/8 unless binding there failed). */
  readonly address: string;
  /** True when no address of its own could be bound and the host shares 127.0.0.1 with every other local server. */
  readonly sharedAddress: boolean;
  readonly port: number;
  readonly token: string;
  readonly server: Server;
  close(): Promise<void>;
}

export interface BrowserHostOptions {
  /** Folder of the built page (index.html and its assets). */
  readonly assets: string;
  readonly demoFolder: (writing?: DemoWriting) => Promise<string>;
  readonly version: string;
  readonly threads?: number;
  /** What the page opens first. */
  readonly initialTarget?: { folder: string } | { demo: true } | null;
  /** Fixed port for tests; 0 (default) lets the system choose. */
  readonly port?: number;
  /** The loopback address to try first (tests); by default a random one of 127.0.0.0/8. */
  readonly address?: string;
}

/** Largest request body taken with the token: the API's arguments are a few small JSON values. */
export const maxBodyBytes = 1_000_000;
/** Frames rendered at once, and requests that may wait for a turn; more are answered 503. */
export const frameRenders = { running: 3, waiting: 8 };

/**
 * A random address of the loopback network 127.0.0.0/8 (RFC 1122 section 3.2.1.3, memory: all of
 * it loops back; Linux and Windows route all of it to the loopback interface, macOS only 127.0.0.1
 * unless aliased). Cookies are kept per host, not per port (RFC 6265 section 8.5, memory), so a
 * cookie set on 127.0.0.1 goes to every server there; on an address of its own, the run's cookie
 * reaches only this run. Leaves out 127.0.0.0/16's first two blocks (127.0.0.1, and 127.0.1.1
 * which Debian gives the host name) and host parts 0 and 255.
 */
export function randomLoopbackAddress(): string {
  for (;;) {
    const [a, b, c] = randomBytes(3);
    if (a === 0 && b! <= 1) continue;
    if (c === 0 || c === 255) continue;
    return `127.${a}.${b}.${c}`;
  }
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

class TooLarge extends Error {}

/** Whether the request says a body follows (a length above zero, or chunks). */
function hasBody(req: IncomingMessage): boolean {
  return Number(req.headers['content-length'] ?? 0) > 0 || req.headers['transfer-encoding'] !== undefined;
}

async function readJsonBody(req: IncomingMessage, res: ServerResponse, limit: number): Promise<unknown> {
  // A client that asked before sending its body is told to go on only now that it may.
  if (/100-continue/i.test(req.headers.expect ?? '')) res.writeContinue();
  let size = 0;
  const chunks: Buffer[] = [];
  for await (const chunk of req) {
    size += (chunk as Buffer).length;
    if (size > limit) throw new TooLarge('request too large');
    chunks.push(chunk as Buffer);
  }
  return chunks.length ? JSON.parse(Buffer.concat(chunks).toString('utf8')) : [];
}

async function listenOn(server: Server, port: number, address: string): Promise<void> {
  await new Promise<void>((resolveListen, reject) => {
    const failed = (err: Error): void => reject(err);
    server.once('error', failed);
    server.listen(port, address, () => {
      server.off('error', failed);
      resolveListen();
    });
  });
}

/** One run of the host: what every request is checked against and served from. */
interface HostRun {
  readonly token: string;
  /** Where the run listens: the port is known once the server is bound, and the address may fall back to 127.0.0.1. */
  readonly at: { address: string; port: number };
  readonly assets: string;
  readonly service: AppService;
  readonly api: ReturnType<typeof createHandlers>;
  /** The open event streams (server-sent events) of the pages. */
  readonly events: Set<ServerResponse>;
  readonly frameGate: ReturnType<typeof createFrameGate>;
}

const cookieName = (run: HostRun): string => `seamscout-${run.at.port}`;

function headerToken(req: IncomingMessage): string | null {
  const value = req.headers['x-seamscout-token'];
  return typeof value === 'string' ? value : null;
}

function send(res: ServerResponse, status: number, body: string | Buffer, type = 'text/plain; charset=utf-8', extra: Record<string, string> = {}): void {
  res.writeHead(status, {
    'Content-Type': type,
    'Content-Security-Policy': contentSecurityPolicy,
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'no-referrer',
    'Cache-Control': 'no-store',
    ...extra,
  });
  res.end(body);
}

/**
 * Refuses without reading the body: `Connection: close` makes Node close the socket once the
 * answer is out, instead of reading whatever body the client still sends to keep the connection.
 */
function refuse(res: ServerResponse, status: number, body: string, extra: Record<string, string> = {}): void {
  send(res, status, body, 'text/plain; charset=utf-8', { Connection: 'close', ...extra });
}

/**
 * The request's URL when it passes every check made before a body is read (our Host, our Origin
 * when sent, the token, a body only on an API call and not too large); null when it was refused.
 */
function admitted(run: HostRun, req: IncomingMessage, res: ServerResponse): URL | null {
  const { address, port } = run.at;
  // localhost names 127.0.0.1, so it is ours only where we share that address.
  const allowedHosts = address === '127.0.0.1' ? [`127.0.0.1:${port}`, `localhost:${port}`] : [`${address}:${port}`];
  if (!allowedHosts.includes(req.headers.host ?? '')) return refused(res, 421, 'wrong host');
  const origin = req.headers.origin;
  if (origin !== undefined && !allowedHosts.some((h) => origin === `http://${h}`)) return refused(res, 403, 'foreign origin');
  const url = new URL(req.url ?? '/', `http://${address}:${port}`);
  const queryToken = url.searchParams.get('t');
  const authorised =
    sameSecret(queryToken, run.token) || sameSecret(headerToken(req), run.token) || sameSecret(cookieToken(req, cookieName(run)), run.token);
  if (!authorised) return refused(res, 401, 'missing or wrong token');
  const apiCall = url.pathname.startsWith('/api/') && req.method === 'POST';
  if (hasBody(req) && !apiCall) return refused(res, 413, 'no body expected');
  if (Number(req.headers['content-length'] ?? 0) > maxBodyBytes) return refused(res, 413, 'request too large');
  return url;
}

function refused(res: ServerResponse, status: number, body: string): null {
  refuse(res, status, body);
  return null;
}

/** `/api/<method>`: the event stream (GET), or one call of the API (POST with the token header). */
async function serveApi(run: HostRun, req: IncomingMessage, res: ServerResponse, method: string): Promise<void> {
  if (method === 'events' && req.method === 'GET') {
    res.writeHead(200, { 'Content-Type': 'text/event-stream', 'Cache-Control': 'no-store', Connection: 'keep-alive' });
    res.write(': connected\n\n');
    run.events.add(res);
    req.on('close', () => run.events.delete(res));
    return;
  }
  // State-changing calls need the header (a page of ours sets it; a form elsewhere cannot).
  if (req.method !== 'POST' || !sameSecret(headerToken(req), run.token)) return refuse(res, 403, 'API calls are POST with the token header');
  const fn = Object.hasOwn(run.api, method) ? (run.api[method as HostCallName] as (args: readonly unknown[]) => Promise<unknown>) : undefined;
  if (!fn) return refuse(res, 404, 'no such call');
  let args: unknown;
  try {
    args = await readJsonBody(req, res, maxBodyBytes);
  } catch (err) {
    if (err instanceof TooLarge) return refuse(res, 413, 'request too large');
    return refuse(res, 400, 'the body is not JSON');
  }
  try {
    const result = await fn(Array.isArray(args) ? args : [args]);
    return send(res, 200, JSON.stringify({ ok: result ?? null }), 'application/json');
  } catch (err) {
    return send(res, 200, JSON.stringify({ error: (err as Error).message }), 'application/json');
  }
}

/** `GET /frame/<path>`: a frame of the check in progress, as JPEG. */
async function serveFrame(run: HostRun, req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
  // A frame holds tens of megabytes while it is decoded and scaled: a few at a time, a few more
  // waiting, the rest asked to come back (the page retries).
  const answer = await frameAnswer(run.service, { path: url.pathname.slice('/frame/'.length), max: url.searchParams.get('max') }, (render) =>
    run.frameGate.run(() => (req.socket.destroyed ? Promise.resolve(null) : render())),
  );
  if (answer.status === 200) return send(res, 200, answer.image, 'image/jpeg');
  return send(res, answer.status, answer.text, 'text/plain; charset=utf-8', answer.status === 503 ? { 'Retry-After': '1' } : {});
}

/** One of the page's own files; the page itself sets the run's cookie. */
async function serveAsset(run: HostRun, res: ServerResponse, pathname: string): Promise<void> {
  const asset = await readAsset(run.assets, pathname);
  if (!asset) return send(res, 404, 'not found');
  const extra: Record<string, string> =
    asset.name === 'index.html' ? { 'Set-Cookie': `${cookieName(run)}=${run.token}; HttpOnly; SameSite=Strict; Path=/` } : {};
  return send(res, 200, asset.body, asset.type, extra);
}

async function handle(run: HostRun, req: IncomingMessage, res: ServerResponse): Promise<void> {
  const url = admitted(run, req, res);
  if (!url) return;
  if (url.pathname.startsWith('/api/')) return serveApi(run, req, res, url.pathname.slice(5));
  if (url.pathname.startsWith('/frame/') && req.method === 'GET') return serveFrame(run, req, res, url);
  if (req.method !== 'GET') return refuse(res, 405, 'method not allowed');
  return serveAsset(run, res, url.pathname);
}

function hostServer(run: HostRun): Server {
  const onRequest = (req: IncomingMessage, res: ServerResponse): void => {
    handle(run, req, res).catch((err) => {
      if (!res.headersSent) send(res, 500, (err as Error).message);
      else res.end();
    });
  };
  const server = createServer(onRequest);
  // Without this Node answers "100 Continue" itself, inviting the body before anything is checked.
  server.on('checkContinue', onRequest);
  // A slow client may not hold a connection open with a request that never ends.
  server.headersTimeout = 10_000;
  server.requestTimeout = 30_000;
  return server;
}

/** Binds the server on `at.address`, or on 127.0.0.1 where that address is not there; true when it fell back (a shared address). */
async function listenOnLoopback(server: Server, port: number, at: HostRun['at']): Promise<boolean> {
  try {
    await listenOn(server, port, at.address);
    return false;
  } catch (err) {
    // macOS routes only 127.0.0.1 to its loopback interface unless more addresses are aliased.
    if ((err as NodeJS.ErrnoException).code !== 'EADDRNOTAVAIL' || at.address === '127.0.0.1') throw err;
    at.address = '127.0.0.1';
    await listenOn(server, port, at.address);
    return true;
  }
}

/**
 * The same page as the desktop window, served on a loopback address of its own (random per run) for
 * machines without the Electron binary. Every request must name this run's secret token (query `t`,
 * header, or the cookie the first page load sets) and carry our own Host (and Origin, when sent),
 * which shuts out other sites and DNS rebinding. A request refused is answered before its body is
 * read, and its connection closed; a body with the token is capped. Frames are rendered a few at a
 * time. It serves its own assets, the API, and frames of the check in progress only.
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
  const at = { address: options.address ?? randomLoopbackAddress(), port: 0 };
  if (!isIPv4(at.address) || at.address === '0.0.0.0') throw new TypeError(`Expected one IPv4 address for address but received ${at.address}`);
  const frameGate = createFrameGate(frameRenders.running, frameRenders.waiting);
  const api = createHandlers(service, {
    shell: 'browser',
    version: options.version,
    initialTarget: options.initialTarget ?? null,
    chooseFolder: async () => null,
  });
  const run: HostRun = { token, at, assets: options.assets, service, api, events, frameGate };

  const server = hostServer(run);
  const sharedAddress = await listenOnLoopback(server, options.port ?? 0, at);
  at.port = (server.address() as AddressInfo).port;
  const { address, port } = at;
  return {
    url: `http://${address}:${port}/?t=${token}`,
    address,
    sharedAddress,
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
