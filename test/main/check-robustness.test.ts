// The check on cards as people bring them: run from a terminal (stderr a TTY, where the progress bar
// is drawn), with a hand-held pan whose auto exposure jumped, with stray and duplicate files. The
// sequences come from the demo generator (a camera turning about its centre, exact truth) and from
// files made here from its frames; what a frame "is" follows CIPA DC-008 (ExposureTime,
// ExposureBiasValue, ExposureMode, DateTimeOriginal, Make, Model).
import { execFile } from 'node:child_process';
import { copyFileSync, mkdirSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DemoTruth } from '../../src/core/demo/demo-truth.js';
import { planDemoShoot } from '../../src/core/demo/demo-plan.js';
import type { Analysis, Report } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { createAnalysisPool } from '../../src/main/analysis-pool.js';
import { runCheck } from '../../src/main/check.js';
import { demoExif } from '../../src/main/demo-writer.js';
import { progressLine } from '../../src/main/summary.js';
import { projectRoot, tempDir } from '../helpers/cli.js';
import { cachedDemoShoot } from '../helpers/render-cache.js';

const pool = createAnalysisPool(0);
afterAll(() => pool.destroy());

/** The command under a pseudo-terminal (util-linux `script -qec`, GUIDE section 10), with temporary cache and settings folders. */
function runCliOnTerminal(args: string[]): Promise<{ code: number; output: string }> {
  const home = tempDir('seamscout-home-');
  const quoted = ['node', '--import', 'tsx', join(projectRoot, 'src/main/cli.ts'), ...args].map((a) => `'${a.replaceAll("'", "'\\''")}'`).join(' ');
  return new Promise((resolve, reject) => {
    execFile('script', ['-qec', `${quoted}; exit $?`, '/dev/null'], {
      cwd: projectRoot,
      env: { ...process.env, SEAMSCOUT_CACHE_DIR: join(home, 'cache'), SEAMSCOUT_CONFIG_DIR: join(home, 'config') },
      maxBuffer: 16 << 20,
    }, (err, stdout) => {
      if (err && typeof err.code !== 'number') reject(err);
      else resolve({ code: err ? (err.code as number) : 0, output: String(stdout) });
    });
  });
}

const turnOptions = { clean: true, width: 900, height: 600, seed: 5 } as const;
let turn: { folder: string; truth: DemoTruth };
beforeAll(async () => {
  turn = await cachedDemoShoot(join(tempDir(), 'turn'), turnOptions);
}, 120_000);

const flagsOf = (r: Report): string[] => [
  ...r.pairs.filter((p) => p.reasons.length).map((p) => `${p.a}->${p.b}: ${p.reasons}`),
  ...r.frames.filter((f) => f.flags.length).map((f) => `${f.file}: ${f.flags}`),
];

describe('from a terminal', () => {
  it('draws the progress bar whatever the counts (a total may be passed by pairs planned late)', () => {
    expect(progressLine('pairs', 37, 36, 10)).toBe('\rpairs   [##########] 37/36');
    expect(progressLine('pairs', 0, 0, 10)).toBe('\rpairs   [..........] 0/0');
    expect(progressLine('frames', 3, 12, 8)).toBe('\rframes  [##......] 3/12');
  });

  it('checks a closing turn and a two-row set with default options and answers (exit 0 or 1, never 2)', async () => {
    const rows = await cachedDemoShoot(join(tempDir(), 'rows'), { clean: true, width: 900, height: 600, seed: 9, stations: 12, rows: [-12, 8] });
    for (const folder of [turn.folder, rows.folder]) {
      const { code, output } = await runCliOnTerminal(['check', folder, '--no-cache']);
      expect(output, folder).not.toMatch(/seamscout: /);
      expect([0, 1], `${folder}: ${output.slice(-600)}`).toContain(code);
      // The progress bar was drawn (stderr is a terminal here), and the summary followed it.
      expect(output).toMatch(/pairs +\[#+\]/);
      expect(output).toMatch(/^Verdict: /m);
    }
  }, 120_000);
});

/** Re-encodes a demo frame `ev` brighter in linear light (IEC 61966-2-1 transfer), with the EXIF given. */
async function brighten(from: string, to: string, ev: number, exif: { IFD0: Record<string, string>; IFD2: Record<string, string> }): Promise<void> {
  const { data, info } = await sharp(from).raw().toBuffer({ resolveWithObject: true });
  const gain = 2 ** ev;
  const lut = new Uint8Array(256);
  for (let v = 0; v < 256; v++) {
    const c = v / 255;
    const lin = Math.min(1, gain * (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
    lut[v] = Math.round(255 * (lin <= 0.0031308 ? 12.92 * lin : 1.055 * lin ** (1 / 2.4) - 0.055));
  }
  for (let k = 0; k < data.length; k++) data[k] = lut[data[k]];
  await sharp(data, { raw: { width: info.width, height: info.height, channels: info.channels } }).withExif(exif).withMetadata({ orientation: 1 }).jpeg({ quality: 92, mozjpeg: false }).toFile(to);
}

describe('a hand-held pan with auto exposure, one frame 1.3 EV brighter (no bias, 2 s after the previous frame)', () => {
  // The 0 EV frames of the clean turn: one frame per station, 44 % overlap between neighbours.
  // Station 5's frame is re-encoded brighter, its ExposureTime 1.3 EV longer and its
  // DateTimeOriginal 2 s after station 4's frame. Once with no ExposureMode (the issue's case),
  // once with ExposureMode 2 (auto bracket) on it: then EXIF says bracket and the content must
  // say otherwise (33 % overlap is no bracket).
  const odd = 5;
  const reports: Report[] = [];
  let names: string[] = [];
  beforeAll(async () => {
    const plan = planDemoShoot(turnOptions);
    const refs = plan.stations.map((s) => plan.frames.find((f) => f.file === s.reference)!);
    names = refs.map((f) => f.file);
    for (const mode of [null, '2']) {
      const dir = join(tempDir(), `pan-${mode ?? 'plain'}`);
      mkdirSync(dir);
      for (const f of refs) if (f.station !== odd) copyFileSync(join(turn.folder, f.file), join(dir, f.file));
      const f = refs[odd];
      const captureTime = new Date(Date.parse(`${refs[odd - 1].captureTime}Z`) + 2000).toISOString().slice(0, 23);
      const exif = demoExif({ ...f, exposureTime: f.exposureTime * 2 ** 1.3, captureTime }, plan.camera);
      if (mode) exif.IFD2.ExposureMode = mode;
      await brighten(join(turn.folder, f.file), join(dir, f.file), 1.3, exif);
      reports.push(judge((await runCheck(dir, { pool })).analysis, defaultBudget));
    }
  }, 120_000);

  it('gives the frame its own station and matches the neighbour pairs either side of it', () => {
    for (const r of reports) {
      expect(r.stations.map((s) => s.frames)).toEqual(names.map((f) => [f]));
      expect(r.pairs.filter((p) => p.kind === 'bracket')).toEqual([]);
      const chain = r.pairs.filter((p) => p.kind === 'neighbour' || p.kind === 'closure');
      expect(chain).toHaveLength(names.length);
      for (const p of chain) expect(p.homography, `${p.a} -> ${p.b}`).not.toBeNull();
      expect(r.geometry?.closure?.closes).toBe(true);
    }
  });

  it('reports the exposure jump into it, and nothing that is not that jump', () => {
    for (const r of reports) {
      const into = r.pairs.find((p) => p.b === names[odd])!;
      expect(into.a).toBe(names[odd - 1]);
      expect(into.reasons).toContain('exposure-jump');
      expect(Math.abs(into.evDiff! - 1.3)).toBeLessThan(0.2);
      // A lone bright frame is a jump back out of it too; its shutter time is the setting behind
      // the jump. Nothing else anywhere: no bracket drift, no failed match.
      const allowed = new Set([`${names[odd - 1]}->${names[odd]}: exposure-jump`, `${names[odd]}->${names[odd + 1]}: exposure-jump`, `${names[odd]}: settings-drift`, `${names[odd]}: exposure-jump`, `${names[odd]}: exposure-jump,settings-drift`, `${names[odd]}: settings-drift,exposure-jump`]);
      for (const flag of flagsOf(r)) expect(allowed.has(flag), flag).toBe(true);
    }
  });
});

describe('stray and duplicate files on the card', () => {
  let card: string;
  let runs: Analysis[] = [];
  beforeAll(async () => {
    card = join(tempDir(), 'card');
    mkdirSync(card);
    for (const f of readdirSync(turn.folder)) if (f.endsWith('.JPG')) copyFileSync(join(turn.folder, f), join(card, f));
    // A 1x1 image without EXIF, and a phone shot of the frames' size in the middle of the shoot.
    await sharp({ create: { width: 1, height: 1, channels: 3, background: '#808080' } }).png().toFile(join(card, 'dot.png'));
    const middle = turn.truth.frames[16];
    const [date, time] = middle.captureTime.split('T');
    await sharp({ create: { width: 900, height: 600, channels: 3, background: '#806040', noise: { type: 'gaussian', mean: 128, sigma: 40 } } })
      .withExif({ IFD0: { Make: 'Phone Co', Model: 'P9' }, IFD2: { ExposureTime: '1/60', DateTimeOriginal: `${date.replaceAll('-', ':')} ${time.slice(0, 8)}`, ExposureBiasValue: '0/1' } })
      .jpeg({ quality: 85 }).toFile(join(card, 'PHONE_0001.JPG'));
    // Byte-identical copies: of a bracket frame and of a station's reference frame.
    copyFileSync(join(turn.folder, 'SSC_0007.JPG'), join(card, 'SSC_0007_copy.JPG'));
    copyFileSync(join(turn.folder, 'SSC_0011.JPG'), join(card, 'A_SSC_0011.JPG'));
    // Twice, on two threads and without a cache, so that decodes finish in any order.
    runs = [(await runCheck(card, { pool })).analysis, (await runCheck(card, { pool })).analysis];
  }, 120_000);

  it('leaves out the stray files as not part of the sequence, with the closing turn intact', () => {
    const r = judge(runs[0], defaultBudget);
    const skip = (file: string) => r.skipped.find((s) => s.file === file);
    expect(skip('dot.png')?.code).toBe('not-in-sequence');
    expect(skip('dot.png')?.reason).toMatch(/^1x1 px/);
    expect(skip('PHONE_0001.JPG')?.code).toBe('not-in-sequence');
    expect(skip('PHONE_0001.JPG')?.reason).toMatch(/Phone Co P9/);
    // The copy first by name stands for SSC_0011.JPG (see below).
    expect(r.stations.map((s) => s.frames)).toEqual(turn.truth.stations.map((s) => s.frames.map((f) => (f === 'SSC_0011.JPG' ? 'A_SSC_0011.JPG' : f))));
    expect(r.geometry?.closure?.closes).toBe(true);
    expect(r.pairs.filter((p) => p.kind === 'closure')).toHaveLength(1);
    expect(flagsOf(r)).toEqual([]);
    // The new skip code is part of the published report contract (JSON Schema 2020-12, via ajv).
    const validate = new Ajv2020.default({ allErrors: true, strict: false }).compile(JSON.parse(readFileSync(join(projectRoot, 'schema/report.schema.json'), 'utf8')));
    expect(validate(JSON.parse(JSON.stringify(r))), JSON.stringify(validate.errors)).toBe(true);
  });

  it('keeps the first copy in shooting order, then by name, and gives the same report twice', () => {
    const dup = (file: string) => runs[0].skipped.find((s) => s.file === file);
    // Same capture time: by name, "SSC_0007.JPG" before "SSC_0007_copy.JPG", "A_SSC_0011.JPG" before "SSC_0011.JPG".
    expect(dup('SSC_0007_copy.JPG')).toMatchObject({ code: 'duplicate', reason: 'the same picture as SSC_0007.JPG: left out' });
    expect(dup('SSC_0011.JPG')).toMatchObject({ code: 'duplicate', reason: 'the same picture as A_SSC_0011.JPG: left out' });
    expect(runs[0].stations.find((s) => s.frames.includes('A_SSC_0011.JPG'))?.frames).toHaveLength(3);
    expect(runs[1]).toEqual(runs[0]);
  });
});
