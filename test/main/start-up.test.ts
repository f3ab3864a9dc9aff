// Start-up: bin/seamscout.js (the installed command, and `npm run seamscout`) runs the compiled
// command line when the build is at least as new as the sources, and the TypeScript sources through
// tsx otherwise. Tried on a project folder of its own: the real bin file beside a stand-in build and
// stand-in sources that each say which one ran, so that no build of the whole project is needed.
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, readFileSync, rmSync, symlinkSync, utimesSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { projectRoot, tempDir } from '../helpers/cli.js';

function project(): { root: string; run: (...args: string[]) => { code: number | null; stdout: string; stderr: string }; age: (path: string, secondsAgo: number) => void } {
  const root = tempDir('seamscout-bin-');
  for (const d of ['bin', 'dist/main', 'src/main', 'src/core', 'src/renderer']) mkdirSync(join(root, d), { recursive: true });
  copyFileSync(join(projectRoot, 'bin/seamscout.js'), join(root, 'bin/seamscout.js'));
  writeFileSync(join(root, 'package.json'), JSON.stringify({ type: 'module' }));
  // tsx is found from the bin file's folder, as in a checkout.
  symlinkSync(join(projectRoot, 'node_modules'), join(root, 'node_modules'));
  writeFileSync(join(root, 'dist/main/cli.js'), "process.stdout.write('compiled ' + process.argv.slice(2).join(' '));\n");
  // A type annotation: only tsx runs this file.
  writeFileSync(join(root, 'src/main/cli.ts'), "const args: string[] = process.argv.slice(2);\nprocess.stdout.write('sources ' + args.join(' '));\n");
  writeFileSync(join(root, 'src/core/harris.ts'), 'export const k: number = 0.04;\n');
  writeFileSync(join(root, 'src/renderer/app.ts'), 'export const page: string = "";\n');
  const now = Date.now() / 1000;
  const age = (path: string, secondsAgo: number): void => utimesSync(join(root, path), now - secondsAgo, now - secondsAgo);
  for (const f of ['src/main/cli.ts', 'src/core/harris.ts', 'src/renderer/app.ts']) age(f, 120);
  age('dist/main/cli.js', 60);
  const run = (...args: string[]) => {
    const r = spawnSync(process.execPath, [join(root, 'bin/seamscout.js'), ...args], { encoding: 'utf8', timeout: 60_000 });
    return { code: r.status, stdout: r.stdout, stderr: r.stderr };
  };
  return { root, run, age };
}

describe('bin/seamscout.js', () => {
  it('runs the build when it is newer than every source, with the arguments given', () => {
    const p = project();
    expect(p.run('help', 'check')).toMatchObject({ code: 0, stdout: 'compiled help check' });
    // A page source edited since is not part of the command line's build.
    p.age('src/renderer/app.ts', 0);
    expect(p.run('help').stdout).toBe('compiled help');
    // Installed without its sources (a package with only the build): the build.
    rmSync(join(p.root, 'src'), { recursive: true });
    expect(p.run('help').stdout).toBe('compiled help');
  });

  it('runs the sources through tsx when a source is newer than the build, or there is no build', () => {
    const p = project();
    p.age('src/core/harris.ts', 0);
    expect(p.run('help')).toMatchObject({ code: 0, stdout: 'sources help' });
    rmSync(join(p.root, 'dist'), { recursive: true });
    expect(p.run('check').stdout).toBe('sources check');
  });

  it('is what `npm run seamscout` runs, and `npm pack` builds first', () => {
    const scripts = (JSON.parse(readFileSync(join(projectRoot, 'package.json'), 'utf8')) as { scripts: Record<string, string> }).scripts;
    expect(scripts.seamscout).toBe('node bin/seamscout.js');
    expect(scripts.prepack).toBe('npm run --silent build');
    expect(scripts.build).toMatch(/^tsc -p tsconfig\.build\.json/);
  });
});
