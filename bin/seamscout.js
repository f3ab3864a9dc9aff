#!/usr/bin/env node
// The installed command (npm link, npm pack) and `npm run seamscout` start here. The compiled
// command line (dist/, made by `npm run build`, and by `npm pack` through its prepack script) starts
// in about a third of the time the TypeScript sources take through tsx, so it is run whenever it is
// at least as new as every source file it was made from; otherwise (a checkout never built, or a
// source edited since the build) the sources are run through tsx, so that no stale build is run.
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const built = join(root, 'dist', 'main', 'cli.js');
const sources = join(root, 'src');

/** The newest modification time of the TypeScript sources the build compiles (the page's are built apart). */
function newestSource(dir) {
  let newest = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const path = join(dir, e.name);
    if (e.isDirectory()) {
      if (path !== join(sources, 'renderer')) newest = Math.max(newest, newestSource(path));
    } else if (/\.[cm]?ts$/.test(e.name)) newest = Math.max(newest, statSync(path).mtimeMs);
  }
  return newest;
}

const hasBuild = existsSync(built);
// A package without its sources runs what it has.
const fresh = hasBuild && (!existsSync(sources) || newestSource(sources) <= statSync(built).mtimeMs);
if (fresh) {
  await import(pathToFileURL(built).href);
} else {
  let register;
  try {
    ({ register } = await import('tsx/esm/api'));
  } catch {
    register = null;
  }
  if (register) {
    register();
    await import(pathToFileURL(join(sources, 'main', 'cli.ts')).href);
  } else if (hasBuild) {
    // Installed without the development tools: the build is all there is.
    await import(pathToFileURL(built).href);
  } else {
    process.stderr.write('seamscout: no compiled command line in dist/ and no tsx to run the sources: run npm run build in the project folder\n');
    process.exitCode = 2;
  }
}
