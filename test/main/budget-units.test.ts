// Overlap is typed as a percentage wherever a person types it (options, settings file, app), and
// every budget message uses the name the person typed and their units; the report keeps shares 0..1.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { budgetFromTyped, pageBudget } from '../../src/core/sequence/budget.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { expectBudget } from '../../src/main/app-service.js';
import { loadStoredBudget, storeBudget } from '../../src/main/settings-store.js';
import { runCli, tempDir } from '../helpers/cli.js';

const option = (k: string): string => `--${k}`;

describe('one budget check in the user’s words and units', () => {
  it('takes overlaps in percent and keeps shares inside', () => {
    const b = budgetFromTyped({ values: { reshootOverlap: '15', weakOverlap: '35 %' }, name: option });
    expect([b.reshootOverlap, b.weakOverlap]).toEqual([0.15, 0.35]);
    expect(budgetFromTyped({ values: {}, name: option })).toEqual(defaultBudget);
  });

  it('refuses a share typed for a percentage, with the percentage it likely meant', () => {
    expect(() => budgetFromTyped({ values: { reshootOverlap: '0.2' }, name: () => '--reshoot-overlap' })).toThrow(
      'Expected a percentage from 0 to 100 for --reshoot-overlap but received 0.2 (did you mean 20?)',
    );
    expect(() => budgetFromTyped({ values: { weakOverlap: 0.3 }, name: (k) => k, where: 'settings file /s.json' })).toThrow(
      'Expected a percentage from 0 to 100 for weakOverlap but received 0.3 (did you mean 30?) (settings file /s.json)',
    );
    expect(() => budgetFromTyped({ values: { reshootOverlap: '35' }, name: (k) => `--${k === 'reshootOverlap' ? 'reshoot-overlap' : 'weak-overlap'}` })).toThrow(
      'Expected --reshoot-overlap (35 %) not above --weak-overlap (30 %, the default)',
    );
  });

  it('the app: the page sends shares, messages speak the panel’s words in percent', () => {
    expect(expectBudget({ ...defaultBudget }).weakOverlap).toBe(0.3);
    expect(() => expectBudget({ weakOverlap: 1.5 })).toThrow('Expected a percentage from 0 to 100 for the weak below overlap but received 150');
    expect(() => budgetFromTyped(pageBudget({ maxEvDiff: 'x' }))).toThrow('Expected a number from 0 to 20 for the largest EV step but received x');
  });

  it('the settings file the app saves holds percentages, and reads back as the same budget', async () => {
    process.env.SEAMSCOUT_CONFIG_DIR = join(tempDir(), 'config');
    const saved = await storeBudget({ ...defaultBudget, weakOverlap: 0.35 });
    expect(JSON.parse(readFileSync(join(process.env.SEAMSCOUT_CONFIG_DIR, 'settings.json'), 'utf8')).budget.weakOverlap).toBe(35);
    expect(await loadStoredBudget()).toEqual(saved);
  });
});

describe('the command', () => {
  const empty = tempDir();
  it('refuses --reshoot-overlap 0.2 with a hint, before anything is read', async () => {
    const r = await runCli(['check', empty, '--reshoot-overlap', '0.2']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('seamscout: Expected a percentage from 0 to 100 for --reshoot-overlap but received 0.2 (did you mean 20?)\n');
  });

  it('says which settings file it used and what in it differs from the defaults', async () => {
    const dir = tempDir();
    mkdirSync(join(dir, 'photos'));
    const settings = join(dir, 'settings.json');
    writeFileSync(settings, JSON.stringify({ budget: { weakOverlap: 35, reshootOverlap: 20, minInliers: 30 } }));
    const r = await runCli(['check', join(dir, 'photos'), '--settings', settings, '--json', join(dir, 'r.json')]);
    expect(r.stderr).toContain(`Settings from ${settings}: minInliers 30 (default 20), weakOverlap 35 % (default 30 %)\n`);
    const plain = await runCli(['check', join(dir, 'photos')]);
    expect(plain.stderr).not.toMatch(/Settings from/);
  });
});
