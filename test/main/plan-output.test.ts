// The command's final block ends with the reshoot plan: on real photographs (the leuven pair,
// test/fixtures/external/SOURCES.md, taken from two positions, so its parallax is a weak finding),
// the last lines say what to do, then the verdict in one line, after the findings behind them.
import { copyFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';

let run: { code: number; stdout: string; stderr: string };
let report: { plan: { text: string; optional: boolean }[] };
beforeAll(async () => {
  const card = tempDir('seamscout-card-');
  for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(card, f));
  const json = join(tempDir('seamscout-out-'), 'report.json');
  run = await runCli(['check', card, '--json', json, '--threads', '0', '--no-progress']);
  report = JSON.parse(readFileSync(json, 'utf8'));
}, 120_000);

/** The final block: after the pair lines printed while the check ran, from the sequence's heading on. */
const finalBlock = (): string[] => {
  const lines = run.stdout.trimEnd().split('\n');
  return lines.slice(lines.findIndex((l) => l.startsWith('Seamscout check of ')));
};

describe('seamscout check output', () => {
  it('ends its final block with the reshoot plan, then the verdict in one line, after the findings', () => {
    const lines = finalBlock();
    const planAt = lines.findIndex((l) => l.startsWith('Reshoot plan for '));
    expect(lines[planAt]).toMatch(/^Reshoot plan for .*: nothing to reshoot\.$/);
    expect(lines[planAt + 1]).toBe('Worth a look:');
    // The verdict line is the last line printed: what stays on screen in a terminal.
    expect(lines.length - 1).toBe(planAt + 2 + report.plan.length);
    expect(lines.at(-1)).toBe(`Verdict: WEAK. ${report.plan.length} worth a look.`);
    // The findings behind the plan come before it.
    expect(lines.findIndex((l) => l.startsWith('Findings: '))).toBeLessThan(planAt);
  });

  it('prints the plan items the JSON report holds, in its order', () => {
    const lines = finalBlock();
    const planAt = lines.findIndex((l) => l.startsWith('Reshoot plan for '));
    expect(report.plan.length).toBeGreaterThan(0);
    expect(report.plan.every((i) => i.optional)).toBe(true);
    expect(lines.slice(planAt + 2, planAt + 2 + report.plan.length)).toEqual(report.plan.map((i) => `  - ${i.text}`));
    expect(report.plan[0].text).toMatch(/^Between stations 1 and 2 \(leuven. and leuven.\): .*\(near and far things do not line up/);
  });
});
