// The local host against a hostile neighbour on the same computer, and the desktop shell's own
// guards: one kind of attack or fault per test.
// - Cookies are kept per host, not per port (RFC 6265 section 8.5, memory): each run listens on a loopback
//   address of its own, checked with Chromium's own cookie jar (Debian's chromium via playwright-core).
// - A refused request is answered before its body is read and its connection closed; bodies are capped.
// - Frames are rendered a few at a time; the rest get 503 with Retry-After (RFC 9110 sections 15.6.4 and 10.2.3, memory).
// - Electron: every web contents hardened, and the fuses electron's security guide advises
//   (electron docs, tutorial/security and tutorial/fuses). No Electron binary can be had here, so
//   the fuses are checked in the configuration as electron-builder itself reads and validates it.
import { EventEmitter } from 'node:events';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import type { IncomingMessage, Server } from 'node:http';
import { createServer, request } from 'node:http';
import type { AddressInfo, Socket } from 'node:net';
import { connect } from 'node:net';
import { join } from 'node:path';
import { getConfig, validateConfiguration } from 'app-builder-lib/out/util/config/config.js';
import { DebugLogger } from 'builder-util';
import type { Browser } from 'playwright-core';
import { chromium } from 'playwright-core';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { AppService } from '../../src/main/app-service.js';
import type { BrowserHost } from '../../src/main/browser-host.js';
import { frameRenders, maxBodyBytes, startBrowserHost } from '../../src/main/browser-host.js';
import { createFrameGate } from '../../src/main/frame-gate.js';
import type { HardenableWebContents, NavigationEvent } from '../../src/main/window-options.js';
import { hardenEveryContents } from '../../src/main/window-options.js';
import { frameRetries, retryUrl, showFrame } from '../../src/renderer/frame-image.js';
import { projectRoot, tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';

const chromiumPath = '/usr/bin/chromium';
let assets: string;
let root: string;
const hosts: BrowserHost[] = [];

async function host(options: { address?: string } = {}): Promise<BrowserHost> {
  const h = await startBrowserHost({ assets, demoFolder: async () => root, version: 'test', threads: 0, ...options });
  hosts.push(h);
  return h;
}

beforeAll(() => {
  root = tempDir('seamscout-hardening-');
  assets = join(root, 'assets');
  mkdirSync(assets);
  writeFileSync(join(assets, 'index.html'), '<!doctype html><title>test page</title>');
  process.env.SEAMSCOUT_CONFIG_DIR = join(root, 'config');
  process.env.SEAMSCOUT_CACHE_DIR = join(root, 'cache');
});
afterAll(async () => {
  for (const h of hosts) await h.close();
});

/** A plain local server that notes the Cookie header of every request it gets. */
async function cookieRecorder(address: string): Promise<{ server: Server; port: number; cookies: (string | undefined)[] }> {
  const cookies: (string | undefined)[] = [];
  const server = createServer((req, res) => {
    cookies.push(req.headers.cookie);
    res.end('<!doctype html><title>another local server</title>');
  });
  await new Promise<void>((r) => server.listen(0, address, () => r()));
  return { server, port: (server.address() as AddressInfo).port, cookies };
}

interface RawExchange {
  /** What came back, as text. */
  readonly answer: string;
  /** Body bytes the client had written when the answer began and when the connection closed. */
  readonly sentAtAnswer: number;
  readonly sentAtClose: number;
}

/**
 * Sends `head`, then body bytes a chunk at a time (64 KiB every 5 ms, as a slow client would) until
 * the server closes the connection or `giveUpAt` bytes are out, and notes when the answer came.
 */
function slowUpload(h: BrowserHost, head: string, chunk: (bytes: Buffer) => Buffer = (b) => b, giveUpAt = 48 * 1024 * 1024): Promise<RawExchange> {
  return new Promise((resolve) => {
    const socket: Socket = connect(h.port, h.address);
    const piece = Buffer.alloc(64 * 1024, 0x41);
    let sent = 0;
    let answer = '';
    let sentAtAnswer = -1;
    let timer: NodeJS.Timeout | undefined;
    const finish = (): void => {
      clearInterval(timer);
      clearTimeout(timer);
      socket.destroy();
      resolve({ answer, sentAtAnswer, sentAtClose: sent });
    };
    socket.on('data', (d) => {
      if (sentAtAnswer < 0) sentAtAnswer = sent;
      answer += d.toString('latin1');
    });
    socket.on('close', finish);
    // A reset while writing is the server closing on us: the outcome this test looks for.
    socket.on('error', () => undefined);
    socket.write(head, () => {
      timer = setInterval(() => {
        if (socket.destroyed || socket.writableEnded) return;
        if (sent >= giveUpAt) {
          // All sent that will be: the answer and the close have a moment left to come.
          clearInterval(timer);
          timer = setTimeout(finish, 2000);
          return;
        }
        socket.write(chunk(piece));
        sent += piece.length;
      }, 5);
    });
  });
}

describe('a loopback address of its own per run', () => {
  it('listens on a random address of 127.0.0.0/8 other than 127.0.0.1, a different one each run', async () => {
    const a = await host();
    const b = await host();
    for (const h of [a, b]) {
      expect(h.address).toMatch(/^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/);
      expect(h.address).not.toBe('127.0.0.1');
      expect(h.sharedAddress).toBe(false);
      expect((h.server.address() as AddressInfo).address).toBe(h.address);
      expect(h.url.startsWith(`http://${h.address}:${h.port}/?t=`)).toBe(true);
    }
    // Two runs share an address with odds of one in about sixteen million.
    expect(a.address).not.toBe(b.address);
  });

  it('refuses its own port reached through 127.0.0.1 or localhost (Host and Origin)', async () => {
    const h = await host();
    const status = (headers: Record<string, string>): Promise<number> =>
      new Promise((resolve, reject) => {
        const req = request({ host: h.address, port: h.port, path: `/?t=${h.token}`, agent: false, headers }, (res) => {
          res.resume();
          resolve(res.statusCode ?? 0);
        });
        req.on('error', reject);
        req.end();
      });
    expect(await status({ host: `${h.address}:${h.port}` })).toBe(200);
    expect(await status({ host: `127.0.0.1:${h.port}` })).toBe(421);
    expect(await status({ host: `localhost:${h.port}` })).toBe(421);
    expect(await status({ host: `${h.address}:${h.port}`, origin: `http://127.0.0.1:${h.port}` })).toBe(403);
    expect(await status({ host: `${h.address}:${h.port}`, origin: `http://${h.address}:${h.port}` })).toBe(200);
  });

  it('falls back to 127.0.0.1, and says so, where its address cannot be bound', async () => {
    // 192.0.2.1 is reserved for documentation (RFC 5737, memory) and on no interface here: binding it fails
    // with EADDRNOTAVAIL, as binding 127.0.0.2 does on a Mac without an alias.
    const h = await host({ address: '192.0.2.1' });
    expect(h.address).toBe('127.0.0.1');
    expect(h.sharedAddress).toBe(true);
    expect(h.url.startsWith(`http://127.0.0.1:${h.port}/`)).toBe(true);
  });

  describe('in a real browser', () => {
    let browser: Browser;
    beforeAll(async () => {
      if (!existsSync(chromiumPath)) throw new Error(`These tests need Debian's Chromium at ${chromiumPath}: apt-get install chromium (.ci/run does)`);
      browser = await chromium.launch({ executablePath: chromiumPath, headless: true, args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--no-first-run'] });
    }, 60_000);
    afterAll(async () => {
      await browser?.close();
    });

    it('sends the token cookie back to its own run only, not to a server on 127.0.0.1 nor to another run', async () => {
      const first = await host();
      const second = await host();
      const seenBySecond: (string | undefined)[] = [];
      second.server.prependListener('request', (req: IncomingMessage) => seenBySecond.push(req.headers.cookie));
      const other = await cookieRecorder('127.0.0.1');
      const context = await browser.newContext();
      try {
        const page = await context.newPage();
        expect((await page.goto(first.url))?.status()).toBe(200);
        // The browser keeps the cookie and sends it back: the first run's page loads again without the token in the address.
        expect((await page.goto(`http://${first.address}:${first.port}/`))?.status()).toBe(200);
        expect((await context.cookies()).map((c) => c.domain)).toEqual([first.address]);
        await page.goto(`http://127.0.0.1:${other.port}/`);
        expect((await page.goto(`http://${second.address}:${second.port}/`))?.status()).toBe(401);
        // Every request each got (the page, and the browser's own ask for an icon) came without a cookie.
        expect(other.cookies.length).toBeGreaterThan(0);
        expect(other.cookies.filter((c) => c !== undefined)).toEqual([]);
        expect(seenBySecond.length).toBeGreaterThan(0);
        expect(seenBySecond.filter((c) => c !== undefined)).toEqual([]);
      } finally {
        await context.close();
        other.server.close();
      }
    }, 60_000);

    it('would leak the cookie to another local server when it shares 127.0.0.1 (the case the own address prevents)', async () => {
      // The control for the test above: the same browser, the host pinned to 127.0.0.1.
      const shared = await host({ address: '127.0.0.1' });
      const other = await cookieRecorder('127.0.0.1');
      const context = await browser.newContext();
      try {
        const page = await context.newPage();
        expect((await page.goto(shared.url))?.status()).toBe(200);
        await page.goto(`http://127.0.0.1:${other.port}/`);
        expect(other.cookies.some((c) => c?.includes(shared.token))).toBe(true);
      } finally {
        await context.close();
        other.server.close();
      }
    }, 60_000);
  });
});

describe('request bodies', () => {
  it('answers a 300 MB body without the token at once and closes the connection instead of reading it', async () => {
    const h = await host();
    const r = await slowUpload(h, `POST /api/saveBudget HTTP/1.1\r\nHost: ${h.address}:${h.port}\r\nContent-Type: application/json\r\nContent-Length: 300000000\r\n\r\n`);
    expect(r.answer).toMatch(/^HTTP\/1\.1 401 /);
    expect(r.answer).toMatch(/\r\nconnection: close\r\n/i);
    // Closed within a few of the 64 KiB chunks; before, the host read on until the client gave up (48 MiB here).
    expect(r.sentAtClose).toBeLessThan(4 * 1024 * 1024);
  });

  it('answers a declared body over the cap with the token 413 and closes before reading it', async () => {
    const h = await host();
    const r = await slowUpload(h, `POST /api/saveBudget HTTP/1.1\r\nHost: ${h.address}:${h.port}\r\nX-Seamscout-Token: ${h.token}\r\nContent-Type: application/json\r\nContent-Length: 300000000\r\n\r\n`);
    expect(r.answer).toMatch(/^HTTP\/1\.1 413 /);
    expect(r.sentAtClose).toBeLessThan(4 * 1024 * 1024);
  });

  it('stops reading a chunked body with the token once it passes the cap, and closes', async () => {
    const h = await host();
    const r = await slowUpload(
      h,
      `POST /api/saveBudget HTTP/1.1\r\nHost: ${h.address}:${h.port}\r\nX-Seamscout-Token: ${h.token}\r\nContent-Type: application/json\r\nTransfer-Encoding: chunked\r\n\r\n`,
      (b) => Buffer.concat([Buffer.from(`${b.length.toString(16)}\r\n`), b, Buffer.from('\r\n')]),
    );
    expect(r.answer).toMatch(/^HTTP\/1\.1 413 /);
    // The answer comes once the cap is passed, not at the end of the body.
    expect(r.sentAtAnswer).toBeGreaterThan(maxBodyBytes * 0.5);
    expect(r.sentAtClose).toBeLessThan(maxBodyBytes + 4 * 1024 * 1024);
  });

  it('does not invite a body it will refuse: no "100 Continue" without the token', async () => {
    const h = await host();
    const r = await slowUpload(h, `POST /api/saveBudget HTTP/1.1\r\nHost: ${h.address}:${h.port}\r\nExpect: 100-continue\r\nContent-Length: 300000000\r\n\r\n`, (b) => b, 0);
    expect(r.answer).toMatch(/^HTTP\/1\.1 401 /);
    expect(r.answer).not.toMatch(/100 Continue/);
  });

  it('refuses a body on a request that takes none (a GET of a frame with 300 MB behind it)', async () => {
    const h = await host();
    const r = await slowUpload(h, `GET /frame/1/a.jpg?t=${h.token} HTTP/1.1\r\nHost: ${h.address}:${h.port}\r\nContent-Length: 300000000\r\n\r\n`);
    expect(r.answer).toMatch(/^HTTP\/1\.1 413 /);
    expect(r.sentAtClose).toBeLessThan(4 * 1024 * 1024);
  });
});

describe('frame renders', () => {
  it('runs at most the bound of jobs at once, queues a few, and refuses the rest at once', async () => {
    const gate = createFrameGate(2, 3);
    let inFlight = 0, most = 0;
    const releases: (() => void)[] = [];
    const job = (): Promise<number> => {
      inFlight++;
      most = Math.max(most, inFlight);
      return new Promise<number>((r) => releases.push(() => r(inFlight--)));
    };
    const taken = Array.from({ length: 8 }, () => gate.run(job));
    expect(taken.map((t) => t !== null)).toEqual([true, true, true, true, true, false, false, false]);
    expect([gate.active, gate.queued]).toEqual([2, 3]);
    // Each finished job lets one waiting job start, never more than two at once.
    while (releases.length) {
      releases.shift()!();
      await new Promise((r) => setTimeout(r, 0));
    }
    await Promise.all(taken.filter((t) => t !== null));
    expect(most).toBe(2);
    expect([gate.active, gate.queued]).toEqual([0, 0]);
    expect(gate.run(async () => 1)).not.toBeNull();
  });

  it('answers many concurrent frame requests with valid JPEGs or 503 and Retry-After, never rendering more than the bound at once', async () => {
    const h = await host();
    const card = tempDir('seamscout-frames-');
    // Large frames (3000 px wide) so that rendering one takes a while.
    for (const [name, file] of [['a.jpg', 'leuvenA.jpg'], ['b.jpg', 'leuvenB.jpg']]) {
      await sharp(externalFixture(file)).resize(3000).jpeg({ quality: 90 }).toFile(join(card, name));
    }
    const headers = { host: `${h.address}:${h.port}`, 'x-seamscout-token': h.token, 'content-type': 'application/json' };
    const get = (path: string, extra: Record<string, string> = {}, method = 'GET', body?: string): Promise<{ status: number; body: Buffer; headers: IncomingMessage['headers'] }> =>
      new Promise((resolve, reject) => {
        const req = request({ host: h.address, port: h.port, path, method, agent: false, headers: { host: headers.host, ...extra } }, (res) => {
          const parts: Buffer[] = [];
          res.on('data', (d: Buffer) => parts.push(d));
          res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(parts), headers: res.headers }));
        });
        req.on('error', reject);
        req.end(body);
      });
    const id = JSON.parse((await get('/api/startCheck', headers, 'POST', JSON.stringify([{ folder: card }]))).body.toString()).ok as number;
    let ready = 0;
    for (let i = 0; i < 300 && ready !== 200; i++) {
      await new Promise((r) => setTimeout(r, 100));
      ready = (await get(`/frame/${id}/a.jpg?max=64&t=${h.token}`)).status;
    }
    expect(ready).toBe(200);

    let inFlight = 0, most = 0;
    const original = AppService.prototype.frameImage;
    const spy = vi.spyOn(AppService.prototype, 'frameImage').mockImplementation(async function (this: AppService, ...args) {
      inFlight++;
      most = Math.max(most, inFlight);
      try {
        return await original.apply(this, args);
      } finally {
        inFlight--;
      }
    });
    try {
      // Each request a different size, so that none is served from the cache.
      const answers = await Promise.all(Array.from({ length: 60 }, (_, i) => get(`/frame/${id}/${i % 2 ? 'b' : 'a'}.jpg?max=${2000 + i}&t=${h.token}`)));
      const ok = answers.filter((a) => a.status === 200);
      const busy = answers.filter((a) => a.status === 503);
      expect(ok.length + busy.length).toBe(answers.length);
      expect(busy.length).toBeGreaterThan(0);
      expect(ok.length).toBeGreaterThanOrEqual(frameRenders.running + frameRenders.waiting);
      for (const b of busy) expect(b.headers['retry-after']).toBe('1');
      expect(most).toBeLessThanOrEqual(frameRenders.running);
      for (const a of ok) {
        const meta = await sharp(a.body).metadata();
        expect(meta.format).toBe('jpeg');
        expect(Math.max(meta.width!, meta.height!)).toBeGreaterThan(1900);
      }
    } finally {
      spy.mockRestore();
    }
  }, 120_000);

  it('asks again for a frame that failed (a busy host), after a growing wait, a few times', () => {
    class FakeImage extends EventTarget {
      readonly values: string[] = [];
      setAttribute(name: string, value: string): void {
        expect(name).toBe('href');
        this.values.push(value);
      }
    }
    const image = new FakeImage();
    const waits: number[] = [];
    const pending: (() => void)[] = [];
    showFrame(image as unknown as Element, 'href', '/frame/3/a.jpg?max=320&t=x', (run, ms) => {
      waits.push(ms);
      pending.push(run);
    });
    for (let i = 0; i < frameRetries.attempts + 2; i++) {
      image.dispatchEvent(new Event('error'));
      pending.shift()?.();
    }
    expect(image.values).toEqual(['/frame/3/a.jpg?max=320&t=x', ...Array.from({ length: frameRetries.attempts }, (_, i) => retryUrl('/frame/3/a.jpg?max=320&t=x', i + 1))]);
    expect(image.values[1]).toBe('/frame/3/a.jpg?max=320&t=x&retry=1');
    expect(waits).toEqual([500, 1000, 2000, 4000, 8000, 8000]);
  });
});

describe('desktop shell hardening (no Electron binary: the handlers with stand-ins)', () => {
  /** A stand-in web contents and its session, noting what was set on them. */
  function fakeContents(): HardenableWebContents & { listeners: Map<string, ((e: NavigationEvent, url?: string) => void)[]>; open?: (d: { url: string }) => { action: string }; request?: (wc: unknown, p: string, cb: (g: boolean) => void) => void; check?: (...a: unknown[]) => boolean } {
    const fake = {
      listeners: new Map<string, ((e: NavigationEvent, url?: string) => void)[]>(),
      open: undefined as ((d: { url: string }) => { action: string }) | undefined,
      request: undefined as ((wc: unknown, p: string, cb: (g: boolean) => void) => void) | undefined,
      check: undefined as ((...a: unknown[]) => boolean) | undefined,
      setWindowOpenHandler(h: (d: { url: string }) => { action: 'deny' } | { action: 'allow' }) {
        fake.open = h;
      },
      on(event: string, l: (e: NavigationEvent, url?: string) => void) {
        fake.listeners.set(event, [...(fake.listeners.get(event) ?? []), l]);
        return fake;
      },
      session: {
        setPermissionRequestHandler(h: (wc: unknown, p: string, cb: (g: boolean) => void) => void) {
          fake.request = h;
        },
        setPermissionCheckHandler(h: (...a: unknown[]) => boolean) {
          fake.check = h;
        },
      },
    };
    return fake;
  }
  const prevented = (c: ReturnType<typeof fakeContents>, event: string, details: { url?: string }, url?: string): boolean => {
    let stopped = false;
    const listeners = c.listeners.get(event) ?? [];
    expect(listeners.length, event).toBeGreaterThan(0);
    for (const l of listeners) l({ preventDefault: () => (stopped = true), ...details }, url);
    return stopped;
  };

  it('hardens every web contents the app creates, not only the first window', () => {
    const app = new EventEmitter();
    hardenEveryContents(app as unknown as Parameters<typeof hardenEveryContents>[0]);
    const window = fakeContents();
    const later = fakeContents();
    app.emit('web-contents-created', {}, window);
    app.emit('web-contents-created', {}, later);
    for (const c of [window, later]) {
      expect(c.open?.({ url: 'https://example.com/' })).toEqual({ action: 'deny' });
      expect(prevented(c, 'will-navigate', { url: 'https://example.com/' })).toBe(true);
      expect(prevented(c, 'will-redirect', { url: 'http://127.0.0.1:9/' })).toBe(true);
      expect(prevented(c, 'will-navigate', { url: 'seamscout-app://app/index.html' })).toBe(false);
      expect(prevented(c, 'will-attach-webview', {})).toBe(true);
      const granted: boolean[] = [];
      for (const p of ['media', 'geolocation', 'notifications', 'clipboard-read', 'openExternal']) c.request?.(null, p, (g) => granted.push(g));
      expect(granted).toEqual([false, false, false, false, false]);
      expect(c.check?.()).toBe(false);
    }
  });

  it('keeps a frame inside the page from navigating away (will-frame-navigate), by the url on the event', () => {
    const app = new EventEmitter();
    hardenEveryContents(app as unknown as Parameters<typeof hardenEveryContents>[0]);
    const c = fakeContents();
    app.emit('web-contents-created', {}, c);
    expect(prevented(c, 'will-frame-navigate', { url: 'file:///etc/passwd' })).toBe(true);
    expect(prevented(c, 'will-frame-navigate', { url: 'seamscout-app://evil/' })).toBe(true);
    expect(prevented(c, 'will-frame-navigate', {})).toBe(true);
    expect(prevented(c, 'will-frame-navigate', { url: 'seamscout-app://app/index.html' })).toBe(false);
  });

  it('sets every fuse the security guide advises, in a configuration electron-builder reads and accepts', async () => {
    // electron-builder's own loader and schema: a misspelt fuse fails validation instead of being ignored.
    const config = await getConfig(projectRoot, null, null);
    await validateConfiguration(config, new DebugLogger(false));
    expect(config.electronFuses).toEqual({
      runAsNode: false,
      enableNodeOptionsEnvironmentVariable: false,
      enableNodeCliInspectArguments: false,
      enableEmbeddedAsarIntegrityValidation: true,
      onlyLoadAppFromAsar: true,
      enableCookieEncryption: true,
      grantFileProtocolExtraPrivileges: false,
    });
  });
});
