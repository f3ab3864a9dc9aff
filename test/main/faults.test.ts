// Faults under load: a cancelled check stops at once and leaves no worker thread; a
// worker that dies mid-frame is replaced, its file reported, and the check completes; every EXIF
// orientation (CIPA DC-008, tag 274, values 1 to 8) gives the upright frame and the right geometry.
import { copyFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { runCheck } from '../../src/main/check.js';
import type { DemoShootResult } from '../../src/main/demo-writer.js';
import { tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';
import { snapshot } from '../helpers/snapshot.js';
import { cachedDemoShoot } from '../helpers/render-cache.js';

let demo: DemoShootResult;
beforeAll(async () => {
  demo = await cachedDemoShoot(join(tempDir(), 'shoot'), { clean: true, stations: 8, width: 1800, height: 1200, seed: 5 });
}, 120_000);

describe('cancelling', () => {
  // Cancelling is measured in work, not time (speed is never asserted in a unit test): once the
  // signal is raised, only frames already in flight may still finish, no pair is judged after it,
  // and the rest of the sequence is never read.
  it('stops at once, judges nothing more, and leaves no worker running', async () => {
    const pool = createAnalysisPool(0);
    const before = snapshot(demo.folder);
    const controller = new AbortController();
    let framesAtAbort = -1;
    let lastFrames = 0;
    let pairsAfterAbort = 0;
    let total = 0;
    const run = runCheck(demo.folder, {
      pool,
      signal: controller.signal,
      onProgress: (p) => {
        if (p.phase === 'frames') {
          lastFrames = Math.max(lastFrames, p.done);
          total = p.total;
        }
        if (p.phase === 'pairs' && framesAtAbort >= 0) pairsAfterAbort++;
        if (p.phase === 'frames' && p.done === 3 && framesAtAbort < 0) {
          framesAtAbort = p.done;
          controller.abort();
        }
      },
    });
    await expect(run).rejects.toThrow();
    expect(framesAtAbort).toBe(3);
    // In flight at most: the frames the analysis lanes had already started (a few, never the sequence).
    expect(lastFrames - framesAtAbort).toBeLessThanOrEqual(4);
    expect(lastFrames).toBeLessThan(total / 2);
    expect(pairsAfterAbort).toBe(0);
    await pool.destroy();
    expect(pool.liveThreads()).toBe(0);
    expect(snapshot(demo.folder)).toEqual(before);
  }, 120_000);
});

describe('a worker that dies', () => {
  it('is replaced, its file reported, and the check completes', async () => {
    const folder = tempDir();
    const jpegs = readdirSync(demo.folder).filter((n) => n.endsWith('.JPG')).sort();
    for (const f of jpegs.slice(0, 9)) copyFileSync(join(demo.folder, f), join(folder, f));
    // A frame of the same shoot (a file of another camera or size would be left out before decoding).
    copyFileSync(join(demo.folder, jpegs[9]), join(folder, 'SSC_0005-crash.jpg'));
    const pool = createAnalysisPool(2, { filename: new URL('../helpers/crashing-worker.ts', import.meta.url).href });
    try {
      const r = judge((await runCheck(folder, { pool })).analysis, defaultBudget);
      expect(r.skipped.map((s) => s.file)).toEqual(['SSC_0005-crash.jpg']);
      expect(r.skipped[0].code).toBe('unreadable');
      expect(r.frames.length).toBe(9);
      expect(r.stations.length).toBe(3);
      expect(r.pairs.filter((p) => p.kind === 'neighbour').every((p) => p.homography !== null)).toBe(true);
    } finally {
      await pool.destroy();
    }
  }, 120_000);
});

describe('EXIF orientation', () => {
  it('gives the upright frame for every orientation 1 to 8', async () => {
    const folder = tempDir();
    const source = externalFixture('leuvenA.jpg');
    // Store the photograph as a camera would for each orientation: the pixels turned so that
    // applying the tag brings them back upright (the inverse of each tag's transform).
    // Steps run one pipeline each: sharp orders operations within one pipeline its own way.
    type Step = (s: ReturnType<typeof sharp>) => ReturnType<typeof sharp>;
    const rot = (d: number): Step => (s) => s.rotate(d);
    const flop: Step = (s) => s.flop();
    const flip: Step = (s) => s.flip();
    const stored: Record<number, Step[]> = { 1: [], 2: [flop], 3: [rot(180)], 4: [flip], 5: [rot(90), flop], 6: [rot(-90)], 7: [rot(-90), flop], 8: [rot(90)] };
    for (let o = 1; o <= 8; o++) {
      let buf = await sharp(source).toBuffer();
      for (const step of stored[o]) buf = await step(sharp(buf)).toBuffer();
      await sharp(buf).withMetadata({ orientation: o }).jpeg({ quality: 95 }).toFile(join(folder, `o${o}.jpg`));
    }
    const pool = createAnalysisPool(0);
    const upright = await pool.analyseFrame(join(folder, 'o1.jpg'), 1500);
    for (let o = 2; o <= 8; o++) {
      const f = await pool.analyseFrame(join(folder, `o${o}.jpg`), 1500);
      expect([f.fullWidth, f.fullHeight], `orientation ${o}`).toEqual([751, 563]);
      const p = await pool.analysePair(upright, f);
      // Upright again: the same view, so the homography is the identity.
      expect(p.homography, `orientation ${o}`).not.toBeNull();
      const h = p.homography!;
      for (const [x, y] of [[0, 0], [750, 0], [750, 562], [0, 562]]) {
        const w = h[6] * x + h[7] * y + h[8];
        expect(Math.hypot((h[0] * x + h[1] * y + h[2]) / w - x, (h[3] * x + h[4] * y + h[5]) / w - y), `orientation ${o}`).toBeLessThan(1);
      }
    }
  }, 120_000);
});
