// Writing a demo shoot: the JPEG frames' EXIF read back with exifr (tags of CIPA DC-008, Exif 2.3x:
// DateTimeOriginal "YYYY:MM:DD HH:MM:SS" with SubSecTimeOriginal, ExposureTime, FNumber,
// ISOSpeedRatings, ExposureBiasValue (exifr calls it ExposureCompensation), FocalLength,
// FocalLengthIn35mmFilm, WhiteBalance, Orientation, Make, Model), the truth file beside them
// (docs/demo-truth.md), determinism, and the folder rules (GUIDE section 7: never overwrite what is
// not ours). Everything is written to temporary folders and removed.
import { createHash } from 'node:crypto';
import { mkdir, mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import exifr from 'exifr';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { DemoTruth } from '../../src/core/demo/demo-truth.js';
import { demoTruthFile, demoTruthSchema } from '../../src/core/demo/demo-truth.js';
import { demoCommand } from '../../src/main/demo-command.js';
import type { DemoShootResult } from '../../src/main/demo-writer.js';
import { DemoFolderError, exifRational, writeDemoShoot } from '../../src/main/demo-writer.js';

const size = { width: 600, height: 400 };
let root = '';
let first: DemoShootResult;

async function hashes(folder: string): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  for (const f of (await readdir(folder)).sort()) out.set(f, createHash('sha256').update(await readFile(join(folder, f))).digest('hex'));
  return out;
}

beforeAll(async () => {
  root = await mkdtemp(join(tmpdir(), 'seamscout-demo-test-'));
  first = await writeDemoShoot(join(root, 'a'), { ...size, workers: 0 });
});

afterAll(async () => {
  if (root) await rm(root, { recursive: true, force: true });
});

describe('demo shoot files', () => {
  it('writes one JPEG per planned frame and the truth file, and nothing else', async () => {
    const names = (await readdir(first.folder)).sort();
    expect(names).toEqual([...first.plan.frames.map((f) => f.file), demoTruthFile].sort());
    const meta = await sharp(join(first.folder, 'SSC_0001.JPG')).metadata();
    expect(meta).toMatchObject({ format: 'jpeg', width: 600, height: 400, channels: 3 });
  });

  it('writes EXIF that reads back with exifr: camera, exposure, bias, focal length, time with sub-seconds, orientation', async () => {
    for (const f of first.plan.frames) {
      const path = join(first.folder, f.file);
      const raw = await exifr.parse(path, { reviveValues: false, translateValues: false });
      expect(raw.Make).toBe('Seamscout');
      expect(raw.Model).toBe('Virtual Survey Camera');
      expect(raw.Orientation).toBe(1);
      expect(raw.ExposureTime / f.exposureTime).toBeCloseTo(1, 6);
      expect(raw.FNumber).toBe(8);
      expect(raw.ISO).toBe(100);
      expect(raw.ExposureCompensation).toBe(f.evBias);
      expect(raw.FocalLength).toBe(35);
      expect(raw.FocalLengthIn35mmFormat).toBe(35);
      expect(raw.WhiteBalance).toBe(1);
      const [date, time] = f.captureTime.split('T');
      expect(raw.DateTimeOriginal).toBe(`${date.replaceAll('-', ':')} ${time.slice(0, 8)}`);
      expect(raw.SubSecTimeOriginal).toBe(time.slice(9, 12));
      // Revived, exifr gives the date as local time (no zone is written).
      const revived = await exifr.parse(path, ['DateTimeOriginal']);
      const [y, mo, d] = date.split('-').map(Number);
      const [h, mi, s] = time.slice(0, 8).split(':').map(Number);
      expect((revived.DateTimeOriginal as Date).getTime()).toBe(new Date(y, mo - 1, d, h, mi, s).getTime());
    }
    // The exposure jump shows in the EXIF exposure times: 2^1.3 times those of the other stations.
    const jump = first.plan.problems.find((p) => p.code === 'exposure-jump')!;
    const jumped = await exifr.parse(join(first.folder, first.plan.stations[jump.stations[0]].reference), ['ExposureTime']);
    expect(jumped.ExposureTime * 250).toBeCloseTo(Math.pow(2, 1.3), 5);
  });

  it('writes rationals the way EXIF stores them', () => {
    expect(exifRational(1 / 250)).toBe('1/250');
    expect(exifRational(4 / 250)).toBe('2/125');
    expect(exifRational(-2)).toBe('-2/1');
    expect(exifRational(8)).toBe('8/1');
    const [n, d] = exifRational(Math.pow(2, 1.3) / 250).split('/').map(Number);
    expect(n / d / (Math.pow(2, 1.3) / 250)).toBeCloseTo(1, 9);
  });

  it('writes the documented truth file beside the images', async () => {
    const truth = JSON.parse(await readFile(join(first.folder, demoTruthFile), 'utf8')) as DemoTruth;
    expect(truth).toEqual(JSON.parse(JSON.stringify(first.truth)));
    expect(truth.schema).toBe(demoTruthSchema);
    expect(Object.keys(truth)).toEqual(['schema', 'seed', 'clean', 'fullTurn', 'camera', 'frames', 'stations', 'pairs', 'problems']);
    expect(Object.keys(truth.camera).sort()).toEqual(['focalLengthMm', 'height', 'make', 'model', 'sensorHeightMm', 'sensorWidthMm', 'width']);
    for (const key of ['file', 'station', 'bracketIndex', 'evBias', 'yawDeg', 'pitchDeg', 'rollDeg', 'focalLengthMm', 'exposureTime', 'fNumber', 'iso', 'captureTime', 'blurPx']) {
      expect(truth.frames[0]).toHaveProperty(key);
    }
    expect(Object.keys(truth.pairs[0])).toEqual(['a', 'b', 'kind', 'homography', 'overlap', 'evDiff']);
    expect(Object.keys(truth.problems[0])).toEqual(['code', 'frames', 'stations', 'detail']);
  });

  it('writes the same bytes for the same seed, on worker threads or not', async () => {
    const again = await writeDemoShoot(join(root, 'b'), { ...size, workers: 2 });
    expect(again.files).toEqual(first.files);
    expect(await hashes(again.folder)).toEqual(await hashes(first.folder));
  });

  it('writes a different scene for a different seed', async () => {
    const other = await writeDemoShoot(join(root, 'c'), { ...size, seed: 2, clean: true, stations: 8, workers: 0 });
    const mine = await hashes(first.folder), theirs = await hashes(other.folder);
    for (const f of other.files) expect(theirs.get(f)).not.toBe(mine.get(f));
    expect(other.truth.frames[0].yawDeg).not.toBe(first.truth.frames[0].yawDeg);
  });
});

describe('demo shoot folders', () => {
  it('refuses a folder holding anything but a previous demo shoot, and leaves it as it was', async () => {
    const folder = join(root, 'photos');
    await mkdir(folder);
    await writeFile(join(folder, 'IMG_0001.JPG'), 'not ours');
    await expect(writeDemoShoot(folder, { ...size, workers: 0 })).rejects.toThrow(DemoFolderError);
    expect(await readdir(folder)).toEqual(['IMG_0001.JPG']);
    // A truth file does not make a folder ours if other files sit beside it.
    await writeFile(join(folder, demoTruthFile), JSON.stringify({ schema: demoTruthSchema, frames: [] }));
    await expect(writeDemoShoot(folder, { ...size, workers: 0 })).rejects.toThrow('IMG_0001.JPG');
  });

  it('replaces a previous demo shoot, removing frames the new one does not have', async () => {
    const folder = join(root, 'replace');
    await writeDemoShoot(folder, { ...size, workers: 0 });
    const r = await writeDemoShoot(folder, { ...size, stations: 4, clean: true, workers: 0 });
    expect(r.replaced).toBe(true);
    expect((await readdir(folder)).sort()).toEqual([...r.files, demoTruthFile].sort());
  });
});

describe('seamscout demo', () => {
  const run = async (args: string[]): Promise<{ code: number; out: string; err: string }> => {
    let out = '', err = '';
    const o = vi.spyOn(process.stdout, 'write').mockImplementation((s) => ((out += String(s)), true));
    const e = vi.spyOn(process.stderr, 'write').mockImplementation((s) => ((err += String(s)), true));
    try {
      return { code: await demoCommand(args), out, err };
    } finally {
      o.mockRestore();
      e.mockRestore();
    }
  };

  it('creates the folder, writes the shoot and says what it wrote', async () => {
    const folder = join(root, 'cli', 'new');
    const r = await run([folder, '--frames', '8', '--size', '320x240', '--seed', '3']);
    expect(r.code).toBe(0);
    expect(r.out).toContain('Wrote 23 frames');
    for (const code of ['low-overlap', 'exposure-jump', 'blurred', 'incomplete-bracket', 'bracket-drift']) expect(r.out).toContain(code);
    const truth = JSON.parse(await readFile(join(folder, demoTruthFile), 'utf8')) as DemoTruth;
    expect(truth).toMatchObject({ seed: 3, clean: false, camera: { width: 320, height: 240 } });
    const clean = await run([join(root, 'cli', 'clean'), '--clean', '--frames', '3', '--size', '320x240']);
    expect(clean.code).toBe(0);
    expect(clean.out).toContain('none planted');
  });

  it('exits with 2 and a plain message for bad arguments or a folder that is not a demo shoot', async () => {
    for (const [args, message] of [
      [[], 'Expected one folder for demo but received 0'],
      [[join(root, 'x'), '--frames', '3'], 'Expected a whole number from 8 to 200 for --frames but received 3'],
      [[join(root, 'x'), '--size', 'big'], 'for --size but received big'],
      [[join(root, 'x'), '--seed', '-4'], 'for --seed but received -4'],
      [[join(root, 'x'), '--colour'], 'Expected one of --frames, --size, --seed, --clean for option but received --colour'],
      [[join(root, 'photos')], 'Expected an empty folder or a previous demo shoot'],
    ] as [string[], string][]) {
      const r = await run(args);
      expect(r.code).toBe(2);
      expect(r.err).toContain(message);
    }
  });
});
