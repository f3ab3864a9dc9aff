// `seamscout pair` measures two frames as the check measures a pair between stations, and judges it
// against the same budget: the same inliers and the same verdict as the check of those two frames.
// And `--tie-points` writes what its help says: the points each homography is finally fitted to.
import { copyFileSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parse as parseCsv } from 'csv-parse/sync';
import { beforeAll, expect, it } from 'vitest';
import { project } from '../../src/core/geometry/homography.js';
import type { Report } from '../../src/core/sequence/report.js';
import { externalFixture } from '../helpers/images.js';
import { runCli, tempDir } from '../helpers/cli.js';

const dir = tempDir();
const photos = join(dir, 'photos');
let report: Report;
beforeAll(async () => {
  mkdirSync(photos);
  // Two views of one facade (reference data, test/fixtures/external/SOURCES.md).
  for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(photos, f));
  const check = await runCli(['check', photos, '--threads', '0', '--no-cache', '--json', join(dir, 'r.json'), '--tie-points', join(dir, 'tie.csv')]);
  expect(check.code).toBeLessThan(2);
  report = JSON.parse(readFileSync(join(dir, 'r.json'), 'utf8')) as Report;
}, 60_000);

it('pair gives the check’s inliers and verdict for the same frames', async () => {
  const p = report.pairs[0];
  const pair = await runCli(['pair', join(photos, p.a), join(photos, p.b)]);
  expect(Number(/inliers +(\d+)/.exec(pair.stdout)?.[1])).toBe(p.inliers);
  expect(p.inliers).toBeGreaterThan(0);
  expect(pair.stdout).toContain(`verdict     ${p.verdict}${p.reasons.length ? ` (${p.reasons.join(', ')})` : ''}`);
  expect(pair.code).toBe(p.verdict === 'ok' ? 0 : 1);
}, 60_000);

it('--tie-points writes the points the homography is fitted to (at most 300 a pair), as its help says', async () => {
  const p = report.pairs[0];
  const rows = parseCsv(readFileSync(join(dir, 'tie.csv'), 'utf8'), { columns: true }) as Record<string, string>[];
  expect(rows.length).toBeGreaterThan(0);
  expect(rows.length).toBeLessThanOrEqual(300);
  const off = rows.map((r) => {
    const [u, v] = project(p.homography!, Number(r.xa), Number(r.ya));
    return Math.hypot(u - Number(r.xb), v - Number(r.yb));
  }).sort((x, y) => x - y);
  // Full-resolution px; the report's RMS error is of the same fit.
  expect(off[Math.floor(off.length / 2)]).toBeLessThan(Math.max(1.5, 2 * (p.rmsError ?? 0)));
  expect((await runCli(['help', 'check'])).stdout).toMatch(/--tie-points FILE +write each pair's tie points[^]*Not the matches the\s+inlier count reports/);
});
