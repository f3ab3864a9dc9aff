// First use of the demo shoot: the command says it is writing it and how long that should take,
// only when it must be written; the estimate comes from the frame count and size.
import { existsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { defaultDemoPlanOptions, planDemoShoot } from '../../src/core/demo/demo-plan.js';
import { demoTruthFile } from '../../src/core/demo/demo-truth.js';
import { demoWriteSeconds } from '../../src/main/demo-shoot.js';
import { runCli, tempDir } from '../helpers/cli.js';

describe('writing the demo shoot on first use', () => {
  it('is said with its estimate, piped without a progress line, and not said again once cached', async () => {
    const dir = tempDir();
    const cache = join(dir, 'cache');
    // An output that exists already stops the check before any analysis, once the demo is there.
    const taken = join(dir, 'taken.json');
    writeFileSync(taken, '{}');
    const env = { SEAMSCOUT_CACHE_DIR: cache, SEAMSCOUT_TEST_DEMO_SIZE: '480x320' };
    const frames = planDemoShoot({ ...defaultDemoPlanOptions, width: 480, height: 320 }).frames.length;
    const first = await runCli(['check', '--json', taken], env);
    expect(first.code).toBe(2);
    expect(first.stderr).toContain(`writing the demo shoot (about ${demoWriteSeconds(frames, 480, 320)} s): ${frames} frames, on first use only\n`);
    expect(first.stderr).toMatch(/wrote the demo shoot in \d+ s\n/);
    // Piped, there is no progress line: no carriage return, no terminal control.
    expect(first.stderr.includes('\r') || first.stderr.includes('\u001b')).toBe(false);
    expect(existsSync(join(cache, 'demo-shoot-2-480x320', demoTruthFile))).toBe(true);
    const again = await runCli(['check', '--json', taken], env);
    expect(again.code).toBe(2);
    expect(again.stderr).toContain('No folder given: checking the demo shoot.');
    expect(again.stderr).not.toMatch(/writing the demo shoot|wrote the demo shoot/);
  }, 120_000);

  it('estimates from frame count and size: more pixels or frames take longer, more cores less', () => {
    const full = demoWriteSeconds(35, 3000, 2000, 2);
    // The measured runs behind the estimate (demo-shoot.ts): 21.6 s and 33 s for 35 frames at 3000x2000 on 2 cores.
    expect(full).toBeGreaterThanOrEqual(20);
    expect(full).toBeLessThanOrEqual(35);
    expect(demoWriteSeconds(70, 3000, 2000, 2)).toBeGreaterThan(full);
    expect(demoWriteSeconds(35, 1200, 800, 2)).toBeLessThan(full);
    expect(demoWriteSeconds(35, 3000, 2000, 8)).toBeLessThan(full);
    expect(demoWriteSeconds(1, 64, 64, 2)).toBe(1);
  });
});
