// `seamscout pair` measures two frames as the check measures a pair between stations, and judges it
// against the same budget: the same inliers and the same verdict as the check of those two frames.
import { copyFileSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { expect, it } from 'vitest';
import type { Report } from '../src/core/report.js';
import { externalFixture } from './helpers/images.js';
import { runCli, tempDir } from './helpers/cli.js';

it('gives the check’s inliers and verdict for the same frames', async () => {
  const dir = tempDir();
  const photos = join(dir, 'photos');
  mkdirSync(photos);
  // Two views of one facade (reference data, test/fixtures/external/SOURCES.md).
  for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(photos, f));
  const json = join(dir, 'r.json');
  const check = await runCli(['check', photos, '--threads', '0', '--no-cache', '--json', json]);
  expect(check.code).toBeLessThan(2);
  const p = (JSON.parse(readFileSync(json, 'utf8')) as Report).pairs[0];
  const pair = await runCli(['pair', join(photos, p.a), join(photos, p.b)]);
  expect(Number(/inliers +(\d+)/.exec(pair.stdout)?.[1])).toBe(p.inliers);
  expect(p.inliers).toBeGreaterThan(0);
  expect(pair.stdout).toContain(`verdict     ${p.verdict}${p.reasons.length ? ` (${p.reasons.join(', ')})` : ''}`);
  expect(pair.code).toBe(p.verdict === 'ok' ? 0 : 1);
}, 60_000);
