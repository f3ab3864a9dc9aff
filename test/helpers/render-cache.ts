/**
 * A disk cache for deterministic test renders, so that a second test file (and a second run) reuses
 * frames instead of rendering them again. Entries live under os.tmpdir()/seamscout-test-renders,
 * never in the repo, keyed by a hash of the render's spec and of the source files the renderer is
 * built from (found by following relative imports), so a changed renderer never serves old
 * pixels. Entries are written under a temporary name and renamed, so a test file running beside
 * another sees either no entry or a whole one. SEAMSCOUT_TEST_RENDER_CACHE=off turns it off.
 */
import { createHash, randomBytes } from 'node:crypto';
import { constants, existsSync, readFileSync, readdirSync, rmSync, statSync, utimesSync } from 'node:fs';
import { copyFile, mkdir, readFile, rename, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import type { DemoPlanOptions } from '../../src/core/demo/demo-plan.js';
import { defaultDemoPlanOptions, planDemoShoot } from '../../src/core/demo/demo-plan.js';
import { demoTruth, demoTruthFile } from '../../src/core/demo/demo-truth.js';
import type { DemoShootResult } from '../../src/main/demo-writer.js';
import { writeDemoShoot } from '../../src/main/demo-writer.js';
import { projectRoot } from './cli.js';

export const renderCacheRoot = join(tmpdir(), 'seamscout-test-renders');
const enabled = process.env.SEAMSCOUT_TEST_RENDER_CACHE !== 'off';

/** Every .ts file reachable from `entries` through relative imports (import ... from './x.js'). */
function sourceClosure(entries: readonly string[]): string[] {
  const seen = new Set<string>();
  const todo = entries.map((e) => resolve(projectRoot, e));
  while (todo.length > 0) {
    const file = todo.pop()!;
    if (seen.has(file) || !existsSync(file)) continue;
    seen.add(file);
    const text = readFileSync(file, 'utf8');
    for (const m of text.matchAll(/(?:from|import)\s*\(?\s*'(\.{1,2}\/[^']+)'/g)) todo.push(resolve(dirname(file), m[1].replace(/\.js$/, '.ts')));
  }
  return [...seen].sort();
}

/** Hash of the source files behind a renderer plus any data folders it reads. */
export function sourcesHash(entries: readonly string[], dataFolders: readonly string[] = []): string {
  const h = createHash('sha256');
  const files = sourceClosure(entries);
  for (const folder of dataFolders) {
    const abs = resolve(projectRoot, folder);
    for (const f of readdirSync(abs).sort()) files.push(join(abs, f));
  }
  for (const f of files) {
    h.update(f.slice(projectRoot.length));
    h.update(readFileSync(f));
  }
  return h.digest('hex').slice(0, 16);
}

/** Sources' folders untouched for this long are another renderer's and are removed. */
const staleMs = 3 * 24 * 3600 * 1000;
let pruned = false;
const touched = new Set<string>();

/** Removes the entries of renderers not used for staleMs (the cache would only grow otherwise). */
function pruneStale(): void {
  if (pruned) return;
  pruned = true;
  try {
    for (const d of readdirSync(renderCacheRoot)) {
      const path = join(renderCacheRoot, d);
      if (Date.now() - statSync(path).mtimeMs > staleMs) rmSync(path, { recursive: true, force: true });
    }
  } catch {
    // No cache yet, or another file pruned it first.
  }
}

/** The entry's key: the sources' hash, then a hash of the spec (JSON, keys in the order given). */
export function renderKey(sources: string, spec: unknown): string {
  pruneStale();
  if (!touched.has(sources)) {
    touched.add(sources);
    // Marks these sources' entries as in use, so that no other file prunes them.
    try {
      utimesSync(join(renderCacheRoot, sources), new Date(), new Date());
    } catch {
      // Not created yet.
    }
  }
  return join(sources, createHash('sha256').update(JSON.stringify(spec)).digest('hex').slice(0, 32));
}

/**
 * The bytes cached under `key`, else those `produce` returns, stored for next time. A failed write
 * (disk full, read-only tmp) leaves the render as it is: the cache only saves time.
 */
export async function cachedBytes(key: string, produce: () => Promise<Uint8Array> | Uint8Array): Promise<Uint8Array> {
  if (!enabled) return produce();
  const file = join(renderCacheRoot, `${key}.bin`);
  try {
    return new Uint8Array(await readFile(file));
  } catch {
    // Not cached yet.
  }
  const bytes = await produce();
  const temp = `${file}.${process.pid}-${randomBytes(4).toString('hex')}.tmp`;
  try {
    await mkdir(dirname(file), { recursive: true });
    await writeFile(temp, bytes);
    await rename(temp, file);
  } catch {
    await rm(temp, { force: true });
  }
  return bytes;
}

let demoSources: string | null = null;

/**
 * writeDemoShoot through the render cache: the first call for a set of options writes the shoot
 * into the cache (a folder renamed into place whole), every call copies its files into `folder`
 * (a fresh folder, as the tests give). The result is the writer's, for `folder`; elapsedMs is the
 * time this call took.
 */
export async function cachedDemoShoot(folder: string, options: Partial<DemoPlanOptions> = {}): Promise<DemoShootResult> {
  if (!enabled) return writeDemoShoot(folder, options);
  const started = performance.now();
  // The renderer's workers load their entry by URL, not by import: name it beside the writer.
  demoSources ??= sourcesHash(['src/main/demo-writer.ts', 'src/main/demo-render-worker.ts']);
  const plan = planDemoShoot(options);
  const entry = join(renderCacheRoot, renderKey(demoSources, { kind: 'demo-shoot', options: { ...defaultDemoPlanOptions, ...options } }));
  if (!existsSync(entry)) {
    const temp = `${entry}.${process.pid}-${randomBytes(4).toString('hex')}.tmp`;
    await writeDemoShoot(temp, options);
    try {
      await rename(temp, entry);
    } catch {
      // Another file wrote the same shoot meanwhile (or the cache cannot be written): use this copy.
      if (!existsSync(entry)) {
        const r = await writeDemoShoot(folder, options);
        await rm(temp, { recursive: true, force: true });
        return r;
      }
      await rm(temp, { recursive: true, force: true });
    }
  }
  await mkdir(folder, { recursive: true });
  for (const f of [...plan.frames.map((x) => x.file), demoTruthFile]) await copyFile(join(entry, f), join(folder, f), constants.COPYFILE_EXCL);
  return {
    folder,
    files: plan.frames.map((f) => f.file),
    truthFile: join(folder, demoTruthFile),
    truth: demoTruth(plan),
    plan,
    replaced: false,
    elapsedMs: performance.now() - started,
  };
}
