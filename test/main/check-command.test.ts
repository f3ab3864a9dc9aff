// The command line on real photographs (the leuven pair, test/fixtures/external/SOURCES.md): exit
// statuses of the report contract, the JSON report validated against the published schema
// (schema/report.schema.json, JSON Schema 2020-12 via ajv), outputs never overwritten unasked.
import { copyFileSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli, tempDir, projectRoot } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';

let card: string;
let out: string;
beforeAll(() => {
  card = tempDir('seamscout-card-');
  for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(card, f));
  out = tempDir('seamscout-out-');
});

describe('seamscout check', () => {
  it('checks a real pair, flags its parallax, and writes a report that validates against the schema', async () => {
    const json = join(out, 'report.json');
    const r = await runCli(['check', card, '--json', json, '--threads', '1']);
    expect(r.stderr).not.toMatch(/seamscout:/);
    // The leuven pair was photographed from two positions (test/fixtures/external/SOURCES.md): near
    // and far parts of the street cannot line up under one homography, which is parallax (exit 1).
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/parallax/);
    expect(r.stdout).toMatch(/leuven.\.jpg -> leuven.\.jpg\s+neighbour/);
    const report = JSON.parse(readFileSync(json, 'utf8'));
    const schema = JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8'));
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(schema);
    expect(validate(report), JSON.stringify(validate.errors)).toBe(true);
    expect(report.frames.map((f: { file: string }) => f.file).sort()).toEqual(['leuvenA.jpg', 'leuvenB.jpg']);
    expect(report.frames[0].width).toBe(751);
    expect(report.pairs[0].homography).toHaveLength(9);
  });

  it('exits 1 when something is flagged', async () => {
    // A budget no real pair meets.
    const r = await runCli(['check', card, '--min-inliers', '5000', '--threads', '0']);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/few-inliers/);
  });

  it('exits 2 on a usage error or a folder that cannot be read', async () => {
    expect((await runCli(['check', join(card, 'missing')])).code).toBe(2);
    expect((await runCli(['check', card, '--weak-overlap', 'lots'])).code).toBe(2);
    expect((await runCli(['check', card, '--frobnicate'])).code).toBe(2);
    expect((await runCli(['check', card, '--prefer', 'tiff'])).code).toBe(2);
    const map = await runCli(['check', card, '--coverage-map', join(out, 'map.jpg')]);
    expect(map.code).toBe(2);
    expect(map.stderr).toMatch(/Expected a file name ending in \.svg or \.png for --coverage-map/);
    expect((await runCli(['launch'])).code).toBe(2);
  });

  it('never overwrites an output without --force, and writes nothing into the card', async () => {
    const csv = join(out, 'pairs.csv');
    writeFileSync(csv, 'keep me');
    const r = await runCli(['check', card, '--csv', csv, '--threads', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/exists \(use --force to overwrite\)/);
    expect(readFileSync(csv, 'utf8')).toBe('keep me');
    const forced = await runCli(['check', card, '--csv', csv, '--force', '--threads', '0']);
    expect(forced.code).toBe(1);
    expect(readFileSync(csv, 'utf8')).toMatch(/^a,b,kind/);
    expect(existsSync(join(card, 'pairs.csv'))).toBe(false);
  });
});
