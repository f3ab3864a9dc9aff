// The command's output leads with the reshoot plan: on real photographs (the leuven pair,
// test/fixtures/external/SOURCES.md, taken from two positions, so its parallax is a weak finding),
// the first lines say what to do, then the verdict in one line, before any table.
import { copyFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli, tempDir } from './helpers/cli.js';
import { externalFixture } from './helpers/images.js';

let run: { code: number; stdout: string; stderr: string };
let report: { plan: { text: string; optional: boolean }[] };
beforeAll(async () => {
  const card = tempDir('seamscout-card-');
  for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(card, f));
  const json = join(tempDir('seamscout-out-'), 'report.json');
  run = await runCli(['check', card, '--json', json, '--threads', '0', '--no-progress']);
  report = JSON.parse(readFileSync(json, 'utf8'));
}, 120_000);

describe('seamscout check output', () => {
  it('starts its final block with the reshoot plan, then the verdict in one line', () => {
    // The pair lines printed while the check ran come first; the final block follows them.
    const lines = run.stdout.split('\n').slice(run.stdout.split('\n').findIndex((l) => l.startsWith('Reshoot plan for ')));
    expect(lines[0]).toMatch(/^Reshoot plan for .*: nothing to reshoot\.$/);
    expect(lines[1]).toBe('Worth a look:');
    const verdictAt = lines.findIndex((l) => l.startsWith('Verdict: '));
    expect(verdictAt).toBe(2 + report.plan.length);
    expect(lines[verdictAt]).toBe(`Verdict: WEAK. ${report.plan.length} worth a look.`);
    // Before anything else: the pair table comes after the plan.
    expect(lines.findIndex((l) => /\bneighbour\b/.test(l))).toBeGreaterThan(verdictAt);
  });

  it('prints the plan items the JSON report holds, in its order', () => {
    const lines = run.stdout.split('\n').slice(run.stdout.split('\n').findIndex((l) => l.startsWith('Reshoot plan for ')));
    expect(report.plan.length).toBeGreaterThan(0);
    expect(report.plan.every((i) => i.optional)).toBe(true);
    expect(lines.slice(2, 2 + report.plan.length)).toEqual(report.plan.map((i) => `  - ${i.text}`));
    expect(report.plan[0].text).toMatch(/^Between stations 1 and 2 \(leuven. and leuven.\): .*\(near and far things do not line up/);
  });
});
