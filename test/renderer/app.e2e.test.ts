// End to end: the app served by the local browser host, driven in Debian's Chromium with
// playwright-core (no browser download). Opens the demo shoot, waits for the analysis, finds each
// planted problem flagged (the demo's own truth file says which), opens a flagged pair, changes the
// minimum overlap and watches the verdict change, and exports GraphML to a file. Screenshots go to
// test-results/.
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { chromium } from 'playwright-core';
import { build } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DemoTruth } from '../../src/core/demo/demo-truth.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import type { BrowserHost } from '../../src/main/browser-host.js';
import { startBrowserHost } from '../../src/main/browser-host.js';
import { writeDemoShoot } from '../../src/main/demo-writer.js';
import { cardAnalysis } from '../helpers/card-analysis.js';
import { projectRoot, tempDir } from '../helpers/cli.js';

const chromiumPath = '/usr/bin/chromium';
const shots = join(projectRoot, 'test-results');
// The screenshots the README and docs/ui.md show, taken afresh by every run.
const docShots = join(projectRoot, 'docs', 'screenshots');

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

/**
 * Fails naming each card or cell of the page (strip stations, links, frames, bracket chips,
 * overview cells, plan items, numbers) whose text or child boxes reach outside its own box, or that
 * clips its content (overflow hidden or clip, with more to scroll than it shows).
 */
async function expectNoOverflow(where: string): Promise<void> {
  expect(await findOverflow(), `${where}: text outside its box`).toEqual([]);
}

async function findOverflow(): Promise<string[]> {
  return page.evaluate(() => {
    const cards = [...document.querySelectorAll<HTMLElement>('.station, .link, .frame, .bracket-link, .ov, .plan-item, .stat, .summary, .advice, .sequence')];
    const name = (n: Element): string => {
      const hook = ['data-pair', 'data-frame', 'data-station', 'data-overview-station', 'data-overview-pair', 'data-stat', 'data-plan-item'].find((a) => n.hasAttribute(a));
      return `${n.tagName.toLowerCase()}.${[...n.classList].join('.')}${hook ? `[${hook}="${n.getAttribute(hook)}"]` : ''} "${(n.textContent ?? '').replace(/\s+/g, ' ').trim().slice(0, 50)}"`;
    };
    const shown = (r: DOMRect): boolean => r.width > 0 && r.height > 0;
    const problems: string[] = [];
    for (const card of cards) {
      const box = card.getBoundingClientRect();
      if (!shown(box)) continue;
      const out = (r: DOMRect): boolean => shown(r) && (r.left < box.left - 1 || r.top < box.top - 1 || r.right > box.right + 1 || r.bottom > box.bottom + 1);
      for (const n of [card, ...card.querySelectorAll<HTMLElement>('*')]) {
        if (n.closest('.visually-hidden')) continue;
        const style = getComputedStyle(n);
        const clips = /hidden|clip/.test(`${style.overflowX} ${style.overflowY}`);
        if (clips && (n.scrollWidth > n.clientWidth + 1 || n.scrollHeight > n.clientHeight + 1)) problems.push(`${name(n)} clips its text (${n.scrollWidth}x${n.scrollHeight} in ${n.clientWidth}x${n.clientHeight}) in ${name(card)}`);
        if (n !== card && out(n.getBoundingClientRect())) problems.push(`${name(n)} reaches outside ${name(card)}`);
      }
      // Text itself, which can run out of a box that stays inside its card (white-space: nowrap).
      const walker = document.createTreeWalker(card, NodeFilter.SHOW_TEXT);
      const range = document.createRange();
      for (let t = walker.nextNode(); t; t = walker.nextNode()) {
        if (!t.textContent?.trim() || t.parentElement?.closest('.visually-hidden')) continue;
        range.selectNodeContents(t);
        if (out(range.getBoundingClientRect())) problems.push(`text "${t.textContent.trim().slice(0, 30)}" runs out of ${name(card)}`);
      }
    }
    return [...new Set(problems)];
  });
}

afterAll(async () => {
  await browser?.close();
  await host?.close();
});

/** A page of the host at 1366x768 whose API is the given stand-in script (window.seamscout). */
async function standInPage(standIn: string): Promise<{ context: BrowserContext; p: Page }> {
  const context = await browser.newContext({ viewport: { width: 1366, height: 768 }, deviceScaleFactor: 1 });
  const p = await context.newPage();
  p.on('pageerror', (err) => console.error('page error:', err.message));
  await p.addInitScript({ content: standIn });
  await p.goto(host.url);
  return { context, p };
}

describe('the app in a real browser', () => {
  it('loads the start screen with its icon and nothing missing, and a reload starts no check', async () => {
    const failed: string[] = [];
    const onResponse = (r: { status(): number; url(): string }): void => {
      if (r.status() >= 400) failed.push(`${r.status()} ${r.url()}`);
    };
    const consoleErrors: string[] = [];
    const onConsole = (m: { type(): string; text(): string }): void => {
      if (m.type() === 'error') consoleErrors.push(m.text());
    };
    const starts: string[] = [];
    const onRequest = (r: { url(): string }): void => {
      if (r.url().includes('/api/startCheck')) starts.push(r.url());
    };
    page.on('response', onResponse);
    page.on('console', onConsole);
    page.on('request', onRequest);
    try {
      await page.setViewportSize({ width: 1366, height: 768 });
      await page.goto(host.url);
      await page.locator('[data-start]').waitFor();
      const icon = await page.locator('link[rel="icon"]').getAttribute('href');
      const res = await page.request.get(new URL(icon!, page.url()).toString());
      expect(res.status()).toBe(200);
      expect(res.headers()['content-type']).toBe('image/svg+xml');
      expect((await page.request.get(new URL('/favicon.ico', page.url()).toString())).status()).toBe(200);
      // The browser shell has no folder dialog: the path field comes up, with a neutral example.
      await page.locator('[data-choose-folder]').click();
      expect(await page.locator('input[name="folder"]').getAttribute('placeholder')).toBe('/media/card/DCIM/100CAMERA');
      await page.waitForLoadState('networkidle');
      await page.screenshot({ path: join(shots, 'start-1366.png') });
      await page.reload();
      await page.locator('[data-start]').waitFor();
      await page.waitForLoadState('networkidle');
      expect(await page.locator('[role="progressbar"]').count()).toBe(0);
      expect(starts).toEqual([]);
      expect(failed).toEqual([]);
      expect(consoleErrors).toEqual([]);
    } finally {
      page.off('response', onResponse);
      page.off('console', onConsole);
      page.off('request', onRequest);
      await page.setViewportSize({ width: 1600, height: 1000 });
    }
  }, 60_000);

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
    await expect.poll(() => page.locator('[data-export-result]').innerText()).toMatch(/^Downloaded as .*\.graphml: look in your browser's downloads folder\.$/);
  }, 60_000);

  // The first screen of a laptop (1366x768) and of a desktop (1920x1080), light and dark: the plan
  // on top, every station and link in the overview row, each flagged place visible without
  // scrolling, the numbers agreeing with the plan, and no text outside its box. The screenshots
  // are the ones the README and docs/ui.md show.
  it('shows the plan, every station and link and each flagged one on the first screen, at 1366x768 and 1920x1080, light and dark', async () => {
    mkdirSync(docShots, { recursive: true });
    const plan = await page.locator('[data-plan] ol > [data-plan-item]').count();
    expect(plan).toBeGreaterThan(0);
    for (const [width, height] of [[1366, 768], [1920, 1080]] as const) {
      for (const colorScheme of ['light', 'dark'] as const) {
        const where = `${width}x${height} ${colorScheme}`;
        await page.setViewportSize({ width, height });
        // The theme as a person switches it: the toggle in the top bar (style.css's page colour of each theme).
        const background = colorScheme === 'dark' ? 'rgb(15, 17, 19)' : 'rgb(255, 255, 255)';
        const bodyColour = (): Promise<string> => page.evaluate(() => getComputedStyle(document.body).backgroundColor);
        if ((await bodyColour()) !== background) await page.locator('[data-theme-toggle]').click();
        expect(await bodyColour(), where).toBe(background);
        await page.evaluate(() => window.scrollTo(0, 0));
        await page.waitForLoadState('networkidle');
        // Fully inside the first screen: the plan's items with their buttons, every overview cell.
        const outside = await page.evaluate(() => {
          const w = document.documentElement.clientWidth, h = document.documentElement.clientHeight;
          const boxes = [...document.querySelectorAll<HTMLElement>('[data-plan-item], [data-plan] button, [data-overview-station], [data-overview-pair], [data-stat]')];
          return boxes.filter((b) => {
            const r = b.getBoundingClientRect();
            return r.top < 0 || r.left < 0 || r.bottom > h || r.right > w;
          }).map((b) => b.getAttribute('data-overview-station') ?? b.getAttribute('data-overview-pair') ?? b.getAttribute('data-stat') ?? b.textContent?.slice(0, 40));
        });
        expect(outside, `${where}: not on the first screen`).toEqual([]);
        expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth), where).toBe(0);
        // Every station and every link (the closure too) has its cell; every flagged one says so in icon and word.
        expect(await page.locator('[data-overview-station]').count()).toBe(truth.stations.length);
        expect(await page.locator('[data-overview-pair]').count()).toBe(await page.locator('.strip > [data-pair], .strip > .link-missing').count());
        const flagged = await page.locator('[data-overview-verdict]:not([data-overview-verdict="ok"])').evaluateAll((cells) => cells.map((c) => ({ v: c.getAttribute('data-overview-verdict'), icon: c.querySelector('[data-icon]')?.getAttribute('data-icon'), word: c.querySelector('.ov-word')?.textContent })));
        expect(flagged.length).toBeGreaterThan(0);
        for (const f of flagged) expect(f, where).toEqual({ v: f.v, icon: f.v, word: f.v });
        // Each planted problem is flagged in the overview row: the link across a gap or a jump, the station of a frame problem.
        const stationOf = new Map(truth.stations.flatMap((st, i) => st.frames.map((file) => [file, i])));
        for (const problem of truth.problems) {
          const cell = problem.code === 'low-overlap'
            ? page.locator(`[data-overview-pair="${problem.frames[0]}|${problem.frames[1]}"]`)
            : page.locator(`[data-overview-station="${stationOf.get(problem.frames[0])}"]`);
          expect(await cell.getAttribute('data-overview-verdict'), `${where}: ${problem.code} on ${problem.frames.join(', ')}`).not.toBe('ok');
        }
        // One count: what is to reshoot is the plan's items, never the count of flagged pairs and frames.
        expect(await page.locator('[data-stat="to-reshoot"] dd').innerText()).toBe(String(plan));
        expect(await page.locator('[data-stat="reshoot"]').count()).toBe(0);
        await expectNoOverflow(where);
        await page.screenshot({ path: join(docShots, `app-${width}x${height}-${colorScheme}.png`) });
      }
    }
    await page.locator('[data-theme-toggle]').click();
    expect(await page.evaluate(() => getComputedStyle(document.body).backgroundColor)).toBe('rgb(255, 255, 255)');
    await page.setViewportSize({ width: 1600, height: 1000 });
  }, 90_000);

  it('finds text that runs out of its card, and names the card', async () => {
    // The check itself, on a planted fault: overlap numerals far too large for their link cards.
    const ok = (await page.locator('.strip > [data-pair][data-verdict="ok"]').first().getAttribute('data-pair'))!;
    // (Through element.style: the page's Content-Security-Policy refuses a style sheet from the test.)
    const numeral = page.locator(`.strip > [data-pair="${ok}"] .link-overlap`);
    await numeral.evaluate((n) => ((n as HTMLElement).style.fontSize = '6rem'));
    const found = await findOverflow();
    await numeral.evaluate((n) => ((n as HTMLElement).style.fontSize = ''));
    expect(found.some((f) => f.includes(`[data-pair="${ok}"]`) && /reaches outside|runs out of/.test(f))).toBe(true);
    expect(await findOverflow()).toEqual([]);
  }, 30_000);

  it('leads from a plan item to its pair, from another to its frame, and from the overview to a station', async () => {
    await page.setViewportSize({ width: 1366, height: 768 });
    await page.evaluate(() => window.scrollTo(0, 0));
    const first = page.locator('[data-plan] [data-open-pair]').first();
    const key = (await first.getAttribute('data-open-pair'))!;
    await first.click();
    await page.locator(`[data-detail][data-pair="${key}"]`).waitFor();
    await page.keyboard.press('Escape');
    await page.locator('.strip').waitFor();
    // A frame or a station comes into view in the strip and takes the focus.
    const target = page.locator('[data-plan] [data-show-frame], [data-plan] [data-show-station]').first();
    const file = await target.getAttribute('data-show-frame');
    const index = await target.getAttribute('data-show-station');
    await target.click();
    const focused = page.locator(file !== null ? `.strip [data-frame="${file}"]` : `.strip [data-station="${index}"]`);
    await expect.poll(() => focused.evaluate((n) => n === document.activeElement)).toBe(true);
    const inView = (): Promise<boolean> => focused.evaluate((n) => {
      const r = n.getBoundingClientRect();
      return r.right > 0 && r.left < document.documentElement.clientWidth && r.bottom > 0 && r.top < document.documentElement.clientHeight;
    });
    expect(await inView()).toBe(true);
    const last = truth.stations.length - 1;
    await page.evaluate(() => window.scrollTo(0, 0));
    await page.locator(`[data-overview-station="${last}"]`).click();
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('data-station'))).toBe(String(last));
    const station = page.locator(`.strip [data-station="${last}"]`);
    expect(await station.evaluate((n) => n.getBoundingClientRect().right <= document.documentElement.clientWidth)).toBe(true);
    await page.evaluate(() => window.scrollTo(0, 0));
    await page.setViewportSize({ width: 1600, height: 1000 });
  }, 60_000);

  it('says where a saved budget went, offers the RAW+JPEG choice beside it, and a reload shows the same results without checking again', async () => {
    const inliers = page.locator('input[name="minInliers"]');
    await inliers.fill('25');
    await expect.poll(() => page.locator('[data-budget-status]').innerText(), { timeout: 5000 }).toBe(
      `Saved in ${join(process.env.SEAMSCOUT_CONFIG_DIR!, 'settings.json')}: the command (seamscout check) uses these values from now on too.`,
    );
    await inliers.fill('20');
    // Saved shortly after the edit: the reload below must find it saved.
    const stored = (): unknown => JSON.parse(readFileSync(join(process.env.SEAMSCOUT_CONFIG_DIR!, 'settings.json'), 'utf8')).budget.minInliers;
    await expect.poll(stored, { timeout: 5000 }).toBe(20);
    expect(await page.locator('[data-budget] [data-panel-shot-preference] input:checked').getAttribute('value')).toBe('jpeg');
    await page.locator('.results-side').screenshot({ path: join(shots, 'budget-panel.png') });
    const verdicts = (): Promise<(string | null)[]> => page.locator('[data-pair]').evaluateAll((n) => n.map((x) => x.getAttribute('data-verdict')));
    const before = await verdicts();
    const starts: string[] = [];
    const onRequest = (r: { url(): string }): void => {
      if (r.url().includes('/api/startCheck')) starts.push(r.url());
    };
    page.on('request', onRequest);
    try {
      await page.reload();
      await page.locator('[data-summary]').waitFor({ timeout: 20_000 });
      await page.waitForLoadState('networkidle');
      expect(starts).toEqual([]);
      expect(await page.locator('[role="progressbar"]').count()).toBe(0);
      expect(await verdicts()).toEqual(before);
    } finally {
      page.off('request', onRequest);
    }
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
        loadBudget: async () => report.budget, saveBudget: async (b) => b, settingsInfo: async () => ({ path: '/home/me/.config/seamscout/settings.json', note: null }),
        loadShotPreference: async () => 'jpeg', saveShotPreference: async (p) => p,
        exportReport: async () => null, tiePoints: async () => [],
        frameUrl: (id, file) => thumb(file),
        onProgress: () => () => undefined, onPartial: () => () => undefined,
        onDone: (l) => { done.push(l); return () => undefined; },
      };
    })();`;
    const { context, p } = await standInPage(standIn);
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

// The demo shoot's first writing takes half a minute: a stand-in API (as above) tells it as the host
// does, to see the start screen say so at the smallest screen we support.
describe('the demo shoot written on first use, in a real browser', () => {
  it('shows the writing and its estimate on the start screen, inside 1366x768', async () => {
    const standIn = `window.seamscout = (() => {
      const progress = [];
      return {
        hostInfo: async () => ({ shell: 'browser', version: 'e2e', initialTarget: { demo: true }, latest: null }),
        chooseFolder: async () => null, recentFolders: async () => ['/media/card/DCIM/100CAMERA'], cancelCheck: async () => undefined,
        startCheck: async () => { setTimeout(() => progress.forEach((l) => { l({ checkId: 1, phase: 'demo', done: 0, total: 35, secondsLeft: 27 }); l({ checkId: 1, phase: 'demo', done: 12, total: 35, secondsLeft: 18, file: 'SSC_0012.jpg' }); }), 20); return 1; },
        loadBudget: async () => (${JSON.stringify(defaultBudget)}), saveBudget: async (b) => b, settingsInfo: async () => ({ path: '/home/me/.config/seamscout/settings.json', note: null }),
        loadShotPreference: async () => 'jpeg', saveShotPreference: async (p) => p,
        exportReport: async () => null, tiePoints: async () => [], frameUrl: () => '',
        onProgress: (l) => { progress.push(l); return () => undefined; }, onPartial: () => () => undefined, onDone: () => () => undefined,
      };
    })();`;
    const { context, p } = await standInPage(standIn);
    const block = p.locator('[data-demo-writing]');
    await expect.poll(() => block.innerText(), { timeout: 20_000 }).toMatch(/12 of 35 frames/);
    expect(await block.locator('.phase').innerText()).toBe('Writing the demo shoot (about 27 s)');
    expect(await p.locator('[data-demo]').isDisabled()).toBe(true);
    const box = await block.boundingBox();
    expect(box!.y + box!.height).toBeLessThanOrEqual(768);
    expect(await p.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBe(0);
    await p.screenshot({ path: join(shots, 'demo-writing.png') });
    await context.close();
  }, 60_000);
});
