#!/usr/bin/env node
// Runs the compiled command line when the project has been built (npm run build), and the
// TypeScript sources through tsx in a checkout.
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';

const built = fileURLToPath(new URL('../dist/main/cli.js', import.meta.url));
if (existsSync(built)) {
  await import(pathToFileURL(built).href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import(new URL('../src/main/cli.ts', import.meta.url).href);
}
