/**
 * Writes a demo shoot to a folder: the frames as JPEG with EXIF (CIPA DC-008 tags, written through
 * sharp) and the truth file beside them (docs/demo-truth.md).
 */
import { mkdir, readdir, readFile, rename, rm, stat, writeFile } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import sharp from 'sharp';
import type { DemoCamera, DemoPlan, DemoPlanOptions, PlannedFrame } from '../core/demo/demo-plan.js';
import { defaultDemoPlanOptions, planDemoShoot } from '../core/demo/demo-plan.js';
import type { RenderJob } from '../core/demo/demo-station.js';
import { renderJobs } from '../core/demo/demo-station.js';
import type { DemoTruth } from '../core/demo/demo-truth.js';
import { demoTruth, demoTruthFile, demoTruthSchema } from '../core/demo/demo-truth.js';
import { focalLength35mm } from '../core/demo/camera.js';
import type { FrameRenderer } from './demo-render-pool.js';
import { inThreadRenderer, workerRenderer } from './demo-render-pool.js';

export const demoJpegQuality = 92;
/** Prefix of files being written, renamed into place when complete. */
const tempPrefix = '.seamscout-tmp-';

/** A rational as EXIF wants it, "numerator/denominator", closest with a denominator up to maxDen (continued fractions). */
export function exifRational(v: number, maxDen = 1_000_000): string {
  if (!Number.isFinite(v)) throw new RangeError(`Expected a finite number for v but received ${v}`);
  const sign = v < 0 ? '-' : '';
  const x = Math.abs(v);
  if (Number.isInteger(x)) return `${sign}${x}/1`;
  const inv = 1 / x;
  if (Math.abs(inv - Math.round(inv)) < 1e-9 * inv) return `${sign}1/${Math.round(inv)}`;
  let h0 = 0, h1 = 1, k0 = 1, k1 = 0, r = x;
  for (let i = 0; i < 64; i++) {
    const a = Math.floor(r);
    const h2 = a * h1 + h0, k2 = a * k1 + k0;
    if (k2 > maxDen) break;
    h0 = h1; h1 = h2; k0 = k1; k1 = k2;
    if (r - a < 1e-12) break;
    r = 1 / (r - a);
  }
  return `${sign}${h1}/${k1}`;
}

/** The EXIF tags of one frame (CIPA DC-008), as the strings sharp's withExif takes (IFD0: the image, IFD2: the Exif sub-IFD). */
export function demoExif(frame: PlannedFrame, camera: DemoCamera): { IFD0: Record<string, string>; IFD2: Record<string, string> } {
  const [date, time] = frame.captureTime.split('T');
  const dateTime = `${date.replaceAll('-', ':')} ${time.slice(0, 8)}`;
  const subSec = time.slice(9, 12);
  // What the camera claims: the true focal length unless the shoot overrides it.
  const claimedMm = camera.exifFocalLengthMm ?? frame.focalLengthMm;
  const f35 = focalLength35mm({ ...camera, focalLengthMm: claimedMm });
  return {
    IFD0: { Make: camera.make, Model: camera.model, Software: 'Seamscout demo shoot', DateTime: dateTime },
    IFD2: {
      ExposureTime: exifRational(frame.exposureTime),
      FNumber: exifRational(frame.fNumber),
      ISOSpeedRatings: String(frame.iso),
      ExposureBiasValue: exifRational(frame.evBias),
      FocalLength: exifRational(claimedMm),
      FocalLengthIn35mmFilm: String(Math.round(f35)),
      // Manual white balance, locked for the sweep (common practice; CIPA DC-008: 1 = manual).
      WhiteBalance: '1',
      DateTimeOriginal: dateTime,
      SubSecTimeOriginal: subSec,
    },
  };
}

/**
 * Encodes one frame: JPEG quality 92 without mozjpeg, EXIF from the plan. withExif replaces the
 * Orientation tag, so Orientation 1 (upright) is set through withMetadata.
 */
export function encodeDemoFrame(pixels: Uint8Array, frame: PlannedFrame, camera: DemoCamera): Promise<Buffer> {
  const input = Buffer.from(pixels.buffer, pixels.byteOffset, pixels.byteLength);
  return sharp(input, { raw: { width: camera.width, height: camera.height, channels: 3 } })
    .withExif(demoExif(frame, camera))
    .withMetadata({ orientation: 1 })
    .jpeg({ quality: demoJpegQuality, mozjpeg: false })
    .toBuffer();
}

export type FolderState =
  | { readonly kind: 'missing' }
  | { readonly kind: 'empty' }
  /** A previous demo shoot: its truth file, the frames it lists and leftovers of an interrupted write. */
  | { readonly kind: 'demo'; readonly files: readonly string[] }
  | { readonly kind: 'other'; readonly reason: string };

/** Thrown when the folder is not one a demo shoot may be written into. */
export class DemoFolderError extends Error {}

/**
 * What is in the folder: nothing, a previous demo shoot (only its truth file, the frames it names
 * and our temporary files), or anything else, which a demo must never overwrite.
 */
export async function inspectShootFolder(folder: string): Promise<FolderState> {
  let entries: string[];
  try {
    const st = await stat(folder);
    if (!st.isDirectory()) return { kind: 'other', reason: 'it is a file, not a folder' };
    entries = await readdir(folder);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return { kind: 'missing' };
    throw err;
  }
  if (entries.length === 0) return { kind: 'empty' };
  if (!entries.includes(demoTruthFile)) return { kind: 'other', reason: `it holds ${entries.length} entries and no ${demoTruthFile}` };
  let listed: Set<string>;
  try {
    const truth = JSON.parse(await readFile(join(folder, demoTruthFile), 'utf8')) as Partial<DemoTruth>;
    if (truth.schema !== demoTruthSchema || !Array.isArray(truth.frames)) return { kind: 'other', reason: `its ${demoTruthFile} is not a ${demoTruthSchema} file` };
    listed = new Set(truth.frames.map((f) => f.file));
  } catch {
    return { kind: 'other', reason: `its ${demoTruthFile} cannot be read as JSON` };
  }
  const strangers = entries.filter((e) => e !== demoTruthFile && !listed.has(e) && !e.startsWith(tempPrefix));
  if (strangers.length > 0) return { kind: 'other', reason: `it holds files that are not part of a demo shoot (${strangers.slice(0, 3).join(', ')}${strangers.length > 3 ? ', ...' : ''})` };
  return { kind: 'demo', files: entries };
}

export interface WriteDemoOptions extends DemoPlanOptions {
  /** Worker threads for rendering: 0 renders in this thread; default: one per core, at most one per render job. */
  readonly workers: number;
  /** Called once the folder is found fit to write, before the first frame is rendered. */
  readonly onStart: (plan: DemoPlan) => void;
  /** Called after each frame is written. */
  readonly onFrame: (file: string, done: number, total: number) => void;
}

export interface DemoShootResult {
  readonly folder: string;
  readonly files: readonly string[];
  readonly truthFile: string;
  readonly truth: DemoTruth;
  readonly plan: DemoPlan;
  /** True when a previous demo shoot in the folder was replaced. */
  readonly replaced: boolean;
  readonly elapsedMs: number;
}

async function writeAtomically(folder: string, name: string, data: Buffer | string): Promise<void> {
  const temp = join(folder, `${tempPrefix}${process.pid}-${name}`);
  await writeFile(temp, data);
  await rename(temp, join(folder, name));
}

/**
 * Plans, renders and writes a demo shoot into `folder` (created if missing). Refuses, with a
 * DemoFolderError, a folder holding anything but a previous demo shoot, which it replaces. Files
 * are written under a temporary name and renamed; the truth file comes last; on failure the files
 * of this run are removed again.
 */
export async function writeDemoShoot(folder: string, options: Partial<WriteDemoOptions> = {}): Promise<DemoShootResult> {
  const started = performance.now();
  const o = { ...defaultDemoPlanOptions, ...options };
  const plan = planDemoShoot(o);
  const truth = demoTruth(plan);
  const state = await inspectShootFolder(folder);
  if (state.kind === 'other') throw new DemoFolderError(`Expected an empty folder or a previous demo shoot for ${folder} but received a folder that is neither: ${state.reason}`);
  await mkdir(folder, { recursive: true });
  if (state.kind === 'demo') for (const f of state.files) await rm(join(folder, f), { force: true });
  o.onStart?.(plan);

  const jobs = renderJobs(plan);
  const workers = o.workers ?? Math.min(jobs.length, availableParallelism());
  const renderer: FrameRenderer = workers > 0 ? workerRenderer(plan.seed, o.width, o.height, workers) : inThreadRenderer(plan.seed, o.width, o.height);
  const byFile = new Map(plan.frames.map((f) => [f.file, f]));
  const written: string[] = [];
  let done = 0;
  const writeJob = async (job: RenderJob): Promise<void> => {
    const frames = await renderer.render(job);
    await Promise.all(frames.map(async (r) => {
      const frame = byFile.get(r.file)!;
      await writeAtomically(folder, r.file, await encodeDemoFrame(r.pixels, frame, plan.camera));
      written.push(r.file);
      done++;
      o.onFrame?.(r.file, done, plan.frames.length);
    }));
  };
  // A few jobs in flight: each worker busy while this thread encodes (in-thread: one renders while
  // sharp encodes the last one on its own threads), and never more frames held than that.
  let next = 0;
  const lane = async (): Promise<void> => {
    while (next < jobs.length) await writeJob(jobs[next++]);
  };
  try {
    await Promise.all(Array.from({ length: Math.min(jobs.length, workers > 0 ? workers + 1 : 2) }, lane));
    await writeAtomically(folder, demoTruthFile, JSON.stringify(truth, null, 2) + '\n');
  } catch (err) {
    await Promise.all([...written, demoTruthFile].map((f) => rm(join(folder, f), { force: true })));
    for (const e of await readdir(folder).catch(() => [] as string[])) if (e.startsWith(`${tempPrefix}${process.pid}-`)) await rm(join(folder, e), { force: true });
    throw err;
  } finally {
    await renderer.close();
  }
  return {
    folder,
    files: plan.frames.map((f) => f.file),
    truthFile: join(folder, demoTruthFile),
    truth,
    plan,
    replaced: state.kind === 'demo',
    elapsedMs: performance.now() - started,
  };
}
