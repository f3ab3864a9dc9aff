// End to end: the app served by the local browser host, driven in Debian's Chromium with
// playwright-core (no browser download). Opens the demo shoot, waits for the analysis, finds each
// planted problem flagged (the demo's own truth file says which), opens a flagged pair, changes the
// minimum overlap and watches the verdict change, and exports GraphML to a file. Screenshots go to
// test-results/.
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { chromium } from 'playwright-core';
import { build } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DemoTruth } from '../src/core/demo-truth.js';
import { defaultBudget } from '../src/core/report.js';
import { judge } from '../src/core/verdicts.js';
import type { BrowserHost } from '../src/main/browser-host.js';
import { startBrowserHost } from '../src/main/browser-host.js';
import { writeDemoShoot } from '../src/main/demo-writer.js';
import { cardAnalysis } from './helpers/card-analysis.js';
import { projectRoot, tempDir } from './helpers/cli.js';

const chromiumPath = '/usr/bin/chromium';
const shots = join(projectRoot, 'test-results');

let host: BrowserHost;
let browser: Browser;
let page: Page;
let truth: DemoTruth;
let downloads: string;

beforeAll(async () => {
  if (!existsSync(chromiumPath)) throw new Error(`End-to-end tests need Debian's Chromium at ${chromiumPath}: apt-get install chromium (.ci/run does)`);
  mkdirSync(shots, { recursive: true });
  const root = tempDir('seamscout-e2e-');
  process.env.SEAMSCOUT_CONFIG_DIR = join(root, 'config');
  process.env.SEAMSCOUT_CACHE_DIR = join(root, 'cache');
  downloads = join(root, 'downloads');
  const assets = join(root, 'page');
  await build({ configFile: join(projectRoot, 'vite.renderer.config.ts'), build: { outDir: assets, emptyOutDir: true }, logLevel: 'error' });
  const demo = await writeDemoShoot(join(root, 'demo'), { width: 2400, height: 1600 });
  truth = demo.truth;
  host = await startBrowserHost({ assets, demoFolder: async () => demo.folder, version: 'e2e', threads: 2 });
  browser = await chromium.launch({
    executablePath: chromiumPath,
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  });
  const context = await browser.newContext({ viewport: { width: 1600, height: 1000 }, acceptDownloads: true, deviceScaleFactor: 1 });
  page = await context.newPage();
  page.on('pageerror', (err) => console.error('page error:', err.message));
}, 240_000);

afterAll(async () => {
  await browser?.close();
  await host?.close();
});

describe('the app in a real browser', () => {
  it('opens the demo shoot and flags every planted problem', async () => {
    await page.goto(host.url);
    await page.getByRole('button', { name: 'Try the demo shoot' }).click();
    await expect.poll(() => page.locator('[role="progressbar"]').count(), { timeout: 20_000 }).toBeGreaterThan(0);
    await page.screenshot({ path: join(shots, 'progress.png') });
    // Results appear while pairs are still being matched; the progress goes when the check is done.
    await page.locator('[data-summary]').waitFor({ timeout: 180_000 });
    await page.screenshot({ path: join(shots, 'arriving.png') });
    await page.locator('[role="progressbar"]').waitFor({ state: 'detached', timeout: 180_000 });
    await page.waitForLoadState('networkidle');
    // The thumbnails come through the host's frame route (token, folder checks and all); they load
    // lazily, so those in view have loaded and none is broken.
    const states = await page.locator('[data-frame] img').evaluateAll((imgs) => imgs.map((i) => ({ done: (i as HTMLImageElement).complete, width: (i as HTMLImageElement).naturalWidth })));
    expect(states.length).toBe(truth.frames.length);
    expect(states.filter((s) => s.width > 0).length).toBeGreaterThanOrEqual(3);
    await page.screenshot({ path: join(shots, 'strip.png'), fullPage: true });
    expect(await page.locator('[data-summary] [data-verdict]').first().getAttribute('data-verdict')).toBe('reshoot');

    for (const problem of truth.problems) {
      if (problem.code === 'low-overlap') {
        const [a, b] = problem.frames;
        const link = page.locator(`[data-pair="${a}|${b}"]`);
        expect(await link.getAttribute('data-verdict')).toBe('reshoot');
        expect(await link.innerText()).toMatch(/low.overlap|overlap/i);
      } else if (problem.code === 'exposure-jump') {
        // The jumped station's reference frame: its links to both neighbours say so.
        const jumped = problem.frames.find((f) => truth.stations.some((s) => s.reference === f))!;
        const links = page.locator(`[data-pair$="|${jumped}"][data-kind="neighbour"]`);
        expect(await links.count()).toBe(1);
        expect(await links.first().innerText()).toMatch(/exposure/i);
        expect(['weak', 'reshoot']).toContain(await links.first().getAttribute('data-verdict'));
      } else {
        // Frame problems show on the frame tiles, in words.
        const words = ({ blurred: /blurred/i, 'incomplete-bracket': /incomplete/i, 'bracket-drift': /drift|moved/i } as Record<string, RegExp>)[problem.code]!;
        const flagged = problem.code === 'bracket-drift' ? problem.frames.slice(0, 1) : problem.frames;
        for (const file of flagged) {
          const tile = page.locator(`[data-frame="${file}"]`);
          expect(await tile.getAttribute('data-verdict'), `${problem.code} on ${file}`).not.toBe('ok');
          expect(await tile.innerText()).toMatch(words);
        }
      }
    }
  }, 240_000);

  it('opens a flagged pair and reads its numbers', async () => {
    const gap = truth.problems.find((p) => p.code === 'low-overlap')!;
    const [a, b] = gap.frames;
    await page.locator(`[data-pair="${a}|${b}"]`).click();
    const detail = page.locator('[data-detail]');
    await detail.waitFor();
    expect(await detail.getAttribute('data-pair')).toBe(`${a}|${b}`);
    const overlap = await detail.locator('[data-measure="overlap"]').innerText();
    const truthOverlap = truth.pairs.find((p) => p.a === a && p.b === b)!.overlap;
    const shown = Number(/(\d+(?:\.\d+)?)\s*%/.exec(overlap)![1]) / 100;
    expect(Math.abs(shown - truthOverlap)).toBeLessThan(0.03);
    expect(await detail.locator('[data-measure="inliers"]').innerText()).toMatch(/\d/);
    await page.waitForLoadState('networkidle');
    await page.screenshot({ path: join(shots, 'detail.png') });
    await page.keyboard.press('Escape');
    await page.locator('[data-summary]').waitFor();
  }, 60_000);

  it('shows a flagged pair\'s measures without scrolling at 1366x768, its small overlap as a sliver, and says what its tie points are', async () => {
    const gap = truth.problems.find((p) => p.code === 'low-overlap')!;
    const [a, b] = gap.frames;
    await page.setViewportSize({ width: 1366, height: 768 });
    try {
      await page.locator(`[data-pair="${a}|${b}"]`).click();
      const detail = page.locator('[data-detail]');
      await detail.locator('[data-tie-note="ready"]').waitFor({ timeout: 20_000 });
      await page.waitForLoadState('networkidle');
      // The numbers a verdict rests on lie inside the window as the detail opens: nothing scrolled by the test.
      const inView = await page.evaluate(() =>
        ['overlap', 'inliers', 'evDiff', 'verdict', 'reasons'].map((m) => {
          const r = document.querySelector(`[data-detail] [data-measure="${m}"]`)!.getBoundingClientRect();
          return { m, top: Math.round(r.top), bottom: Math.round(r.bottom), ok: r.height > 0 && r.top >= 0 && r.bottom <= window.innerHeight };
        }),
      );
      expect(inView.filter((x) => !x.ok), JSON.stringify(inView)).toEqual([]);
      // Both frames placed in one view: the demo's 6 % overlap is a thin sliver of it, and in sight too.
      const placed = await page.evaluate(() => {
        const view = document.querySelector('[data-detail] svg.placed-canvas')!.getBoundingClientRect();
        const sliver = document.querySelector('[data-detail] [data-placed-overlap]')!.getBoundingClientRect();
        return { share: sliver.width / view.width, top: sliver.top, bottom: sliver.bottom, height: window.innerHeight };
      });
      expect(placed.share).toBeGreaterThan(0.01);
      expect(placed.share).toBeLessThan(0.1);
      expect(placed.top).toBeGreaterThanOrEqual(0);
      expect(placed.bottom).toBeLessThanOrEqual(placed.height);
      // The tie points drawn are counted, and the note says how they stand to the inlier count.
      const note = detail.locator('[data-tie-note]');
      const drawn = Number(await note.getAttribute('data-tie-count'));
      expect(await detail.locator('[data-tie]').count()).toBe(drawn);
      const inliers = Number(await detail.locator('[data-measure="inliers"] .numeral').innerText());
      expect(await note.innerText()).toContain(drawn === inliers ? `${drawn} tie points drawn, as many as the inliers` : `${drawn} tie points drawn: the points the homography is finally fitted to`);
      if (drawn !== inliers) expect(await note.innerText()).toContain(`not the ${inliers} inliers`);
      await page.screenshot({ path: join(shots, 'detail-1366x768.png') });
      await page.keyboard.press('Escape');
      await page.locator('[data-summary]').waitFor();
    } finally {
      await page.setViewportSize({ width: 1600, height: 1000 });
    }
  }, 60_000);

  it('marks the low-overlap link on the coverage map, and nothing else', async () => {
    const gaps = truth.problems.filter((p) => p.code === 'low-overlap').map((p) => `${p.frames[0]}|${p.frames[1]}`);
    await page.setViewportSize({ width: 1366, height: 768 });
    try {
      const coverage = page.locator('.coverage');
      await coverage.scrollIntoViewIfNeeded();
      const marked = await coverage.locator('svg line.link-mark').evaluateAll((n) => [...new Set(n.map((x) => x.getAttribute('data-link')))]);
      expect(marked.sort()).toEqual(gaps.sort());
      expect(await coverage.locator('svg line.link-mark').first().getAttribute('stroke-dasharray')).toBeTruthy();
      expect(await coverage.locator('svg').first().textContent()).toContain('link with too little overlap');
      expect(await coverage.locator(`[data-mark="link"][data-link="${gaps[0]}"]`).innerText()).toMatch(/share only \d+ %/);
      await coverage.screenshot({ path: join(shots, 'coverage-1366x768.png') });
    } finally {
      await page.setViewportSize({ width: 1600, height: 1000 });
    }
  }, 60_000);

  it('re-judges at once when the minimum overlap changes', async () => {
    // Pick a neighbour link that is ok now; require more overlap than it has.
    const links = page.locator('[data-kind="neighbour"][data-verdict="ok"]');
    const first = links.first();
    const pairName = (await first.getAttribute('data-pair'))!;
    const input = page.locator('input[name="reshootOverlap"]');
    await page.locator('input[name="weakOverlap"]').fill('90');
    await input.fill('80');
    await input.press('Tab');
    await expect.poll(() => page.locator(`[data-pair="${pairName}"]`).getAttribute('data-verdict'), { timeout: 5000 }).toBe('reshoot');
    await page.screenshot({ path: join(shots, 'budget.png') });
    await input.fill('20');
    await page.locator('input[name="weakOverlap"]').fill('30');
    await page.locator('input[name="weakOverlap"]').press('Tab');
    await expect.poll(() => page.locator(`[data-pair="${pairName}"]`).getAttribute('data-verdict'), { timeout: 5000 }).toBe('ok');
  }, 60_000);

  it('exports GraphML and the file is written', async () => {
    const download = page.waitForEvent('download');
    await page.locator('[data-export="graphml"]').click();
    const d = await download;
    const path = join(downloads, d.suggestedFilename());
    await d.saveAs(path);
    const xml = readFileSync(path, 'utf8');
    expect(xml).toMatch(/^<\?xml/);
    expect(xml).toContain('<graphml xmlns="http://graphml.graphdrawing.org/xmlns"');
    expect((xml.match(/<node /g) ?? []).length).toBe(truth.frames.length);
    await expect.poll(() => page.locator('[data-export-result]').innerText()).toMatch(/graphml/i);
  }, 60_000);
});

// No check splits a card into sequences yet: this case gives the page the same built assets but a
// stand-in API (put where the desktop bridge puts it) that hands over a hand-made card of three
// sequences, to see the list laid out by a real browser at the smallest screen we support.
describe('a card of several sequences in a real browser', () => {
  it('opens on the list, opens a sequence from the keyboard, and fits 1366x768 without scrolling sideways', async () => {
    const report = judge(cardAnalysis, defaultBudget);
    const standIn = `window.seamscout = (() => {
      const done = [];
      const report = ${JSON.stringify(report)};
      const thumb = (file) => 'data:image/svg+xml,' + encodeURIComponent('<svg xmlns="http://www.w3.org/2000/svg" width="300" height="200"><rect width="300" height="200" fill="#8a9aa8"/><text x="10" y="30" font-size="24">' + file + '</text></svg>');
      return {
        hostInfo: async () => ({ shell: 'desktop', version: 'e2e', initialTarget: { demo: true } }),
        chooseFolder: async () => null, recentFolders: async () => [], cancelCheck: async () => undefined,
        startCheck: async () => { setTimeout(() => done.forEach((l) => l({ checkId: 1, report, error: null, cancelled: false })), 20); return 1; },
        loadBudget: async () => report.budget, saveBudget: async (b) => b,
        loadShotPreference: async () => 'jpeg', saveShotPreference: async (p) => p,
        exportReport: async () => null, tiePoints: async () => [],
        frameUrl: (id, file) => thumb(file),
        onProgress: () => () => undefined, onPartial: () => () => undefined,
        onDone: (l) => { done.push(l); return () => undefined; },
      };
    })();`;
    const context = await browser.newContext({ viewport: { width: 1366, height: 768 }, deviceScaleFactor: 1 });
    const p = await context.newPage();
    p.on('pageerror', (err) => console.error('page error:', err.message));
    await p.addInitScript({ content: standIn });
    await p.goto(host.url);
    await p.locator('[data-sequence="3"]').waitFor({ timeout: 20_000 });
    const sideways = (): Promise<number> => p.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(await p.locator('[data-sequence]').evaluateAll((n) => n.map((x) => x.getAttribute('data-verdict')))).toEqual(['reshoot', 'ok', 'weak']);
    expect(await sideways()).toBe(0);
    await p.screenshot({ path: join(shots, 'card-list.png'), fullPage: true });
    await p.keyboard.press('ArrowDown');
    await p.keyboard.press('ArrowDown');
    await p.keyboard.press('Enter');
    await p.locator('[data-back-to-list]').waitFor();
    expect((await p.locator('[data-pair]').evaluateAll((n) => n.map((x) => x.getAttribute('data-pair')))).sort()).toEqual(['S2_01.jpg|S2_02.jpg', 'S2_01.jpg|S2_03.jpg', 'S2_01.jpg|S2_04.jpg', 'S2_04.jpg|S2_05.jpg', 'S2_04.jpg|S2_06.jpg']);
    expect(await sideways()).toBe(0);
    await p.screenshot({ path: join(shots, 'card-sequence.png') });
    await p.keyboard.press('Escape');
    await p.locator('[data-sequence="2"]:focus').waitFor();
    await context.close();
  }, 60_000);
});
