// Options of the sequence check on a small generated sequence (demo generator, clean, 6 stations):
// the feature cache (a re-check analyses only new or changed frames), --all-pairs screening, the
// settings file, and the tie-point export.
import { readFileSync, utimesSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parse as parseCsv } from 'csv-parse/sync';
import { beforeAll, describe, expect, it } from 'vitest';
import { sampleFeatures, screenPairs } from '../../src/core/pair/candidate-pairs.js';
import type { AnalysisPool } from '../../src/main/analysis-pool.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { runCheck } from '../../src/main/check.js';
import { createFeatureCache } from '../../src/main/feature-cache.js';
import { runCli, tempDir } from '../helpers/cli.js';
import { cachedDemoShoot } from '../helpers/render-cache.js';
import type { DemoShootResult } from '../../src/main/demo-writer.js';

let demo: DemoShootResult;
beforeAll(async () => {
  demo = await cachedDemoShoot(join(tempDir(), 'shoot'), { clean: true, stations: 6, width: 1200, height: 800, seed: 11 });
}, 120_000);

/** The in-thread pool, counting the frames it decodes. */
function countingPool(): AnalysisPool & { frames: number } {
  const inner = createAnalysisPool(0);
  const pool = {
    frames: 0,
    threads: 0,
    analyseFrame: (path: string, maxSide: number) => {
      pool.frames++;
      return inner.analyseFrame(path, maxSide);
    },
    analysePair: inner.analysePair,
    judgeThroughLens: inner.judgeThroughLens,
    liveThreads: () => 0,
    destroy: inner.destroy,
  };
  return pool;
}

describe('the feature cache', () => {
  it('analyses only new or changed frames on a re-check', async () => {
    const cache = createFeatureCache(join(tempDir(), 'cache'));
    const first = countingPool();
    const r1 = await runCheck(demo.folder, { pool: first, cache });
    expect(first.frames).toBe(demo.files.length);
    const second = countingPool();
    const r2 = await runCheck(demo.folder, { pool: second, cache });
    expect(second.frames).toBe(0);
    expect(r2.analysis.pairs.map((p) => p.homography)).toEqual(r1.analysis.pairs.map((p) => p.homography));
    // A reshot frame (new modification time) is analysed again, alone.
    const later = new Date(Date.now() + 60_000);
    utimesSync(join(demo.folder, demo.files[4]), later, later);
    const third = countingPool();
    await runCheck(demo.folder, { pool: third, cache });
    expect(third.frames).toBe(1);
  }, 120_000);
});

describe('--all-pairs screening', () => {
  it('keeps overlapping pairs and drops the rest before full matching', async () => {
    const pool = createAnalysisPool(0);
    const refs = demo.truth.stations.map((s) => s.reference);
    const analysed = await Promise.all(refs.map((f) => pool.analyseFrame(join(demo.folder, f), 1500)));
    const samples = analysed.map((a) => sampleFeatures(a.features));
    const all: [number, number][] = [];
    for (let i = 0; i < refs.length; i++) for (let j = i + 1; j < refs.length; j++) all.push([i, j]);
    const kept = new Set(screenPairs(samples, all).map(([i, j]) => `${refs[i]}|${refs[j]}`));
    for (const [i, j] of all) {
      const t = demo.truth.pairs.find((p) => p.a === refs[i] && p.b === refs[j]);
      const overlaps = (t?.overlap ?? 0) > 0.2;
      expect(kept.has(`${refs[i]}|${refs[j]}`), `${refs[i]} ${refs[j]} overlap ${t?.overlap ?? 0}`).toBe(overlaps);
    }
  }, 120_000);
});

describe('--all-pairs in the check', () => {
  it('adds exactly the other pairs that overlap', async () => {
    const r = await runCheck(demo.folder, { pool: createAnalysisPool(0), allPairs: true });
    const others = r.analysis.pairs.filter((p) => p.kind === 'other').map((p) => `${p.a}|${p.b}`);
    const refs = new Set(demo.truth.stations.map((s) => s.reference));
    const overlapping = demo.truth.pairs
      .filter((p) => refs.has(p.a) && refs.has(p.b) && p.kind === 'other' && p.overlap > 0.2)
      .map((p) => `${p.a}|${p.b}`);
    expect(others.sort()).toEqual(overlapping.sort());
    expect(r.analysis.pairs.filter((p) => p.kind === 'neighbour').length).toBe(demo.truth.stations.length - 1);
  }, 120_000);
});

describe('the command line', () => {
  it('reads the budget from a settings file', async () => {
    const settings = join(tempDir(), 'settings.json');
    writeFileSync(settings, JSON.stringify({ budget: { minInliers: 5000 } }));
    const strict = await runCli(['check', demo.folder, '--settings', settings, '--threads', '0', '--no-cache']);
    expect(strict.code).toBe(1);
    expect(strict.stdout).toMatch(/few-inliers/);
    writeFileSync(settings, '{ not json');
    const broken = await runCli(['check', demo.folder, '--settings', settings]);
    expect(broken.code).toBe(2);
    expect(broken.stderr).toMatch(/Expected JSON in the settings file/);
    writeFileSync(settings, JSON.stringify({ prefer: 'nef' }));
    const prefer = await runCli(['check', demo.folder, '--settings', settings]);
    expect(prefer.code).toBe(2);
    expect(prefer.stderr).toMatch(/Expected "jpeg" or "raw" for prefer/);
  }, 120_000);

  it('declares a full sphere from the command line or the settings file, and says how in its help', async () => {
    const json = join(tempDir(), 'sphere.json');
    const r = await runCli(['check', demo.folder, '--full-sphere', '--json', json, '--threads', '0']);
    const report = JSON.parse(readFileSync(json, 'utf8'));
    expect(report.budget.fullSphere).toBe(true);
    // A single sweep declared a full sphere: its open zenith and nadir are holes to reshoot.
    expect(report.holes.filter((h: { pole: string | null }) => h.pole).map((h: { pole: string }) => h.pole).sort()).toEqual(['nadir', 'zenith']);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/add a frame aimed straight up/);
    const settings = join(tempDir(), 'settings.json');
    writeFileSync(settings, JSON.stringify({ budget: { fullSphere: 'maybe' } }));
    const bad = await runCli(['check', demo.folder, '--settings', settings]);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/Expected true or false for fullSphere but received "maybe"/);
    expect((await runCli(['help'])).stdout).toMatch(/--full-sphere +the set is meant to cover the whole sphere/);
  }, 120_000);

  it('writes the inlier tie points at full resolution', async () => {
    const out = join(tempDir(), 'tie.csv');
    const r = await runCli(['check', demo.folder, '--tie-points', out, '--threads', '0', '--no-cache']);
    expect(r.code).toBe(0);
    const rows = parseCsv(readFileSync(out, 'utf8'), { columns: true }) as Record<string, string>[];
    expect(rows.length).toBeGreaterThan(500);
    for (const row of rows) {
      for (const k of ['xa', 'xb']) expect(Math.abs(Number(row[k]) - 600)).toBeLessThan(600);
      for (const k of ['ya', 'yb']) expect(Math.abs(Number(row[k]) - 400)).toBeLessThan(400);
    }
    // The tie points of a neighbour pair land where the truth homography puts them.
    const t = demo.truth.pairs.find((p) => p.kind === 'neighbour' && rows.some((q) => q.a === p.a && q.b === p.b));
    expect(t).toBeDefined();
    const h = t!.homography;
    const err = rows
      .filter((q) => q.a === t!.a && q.b === t!.b)
      .map((q) => {
        const x = Number(q.xa), y = Number(q.ya);
        const w = h[6] * x + h[7] * y + h[8];
        return Math.hypot((h[0] * x + h[1] * y + h[2]) / w - Number(q.xb), (h[3] * x + h[4] * y + h[5]) / w - Number(q.yb));
      })
      .sort((p, q) => p - q);
    expect(err.length).toBeGreaterThan(50);
    expect(err[err.length >> 1]).toBeLessThan(1);
  }, 120_000);
});
