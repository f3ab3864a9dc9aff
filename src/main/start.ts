// npm start: the desktop window where the Electron binary exists, else the same page from the local
// browser host. Without a folder argument it opens on the demo shoot.
import { spawn } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startBrowserHost } from './browser-host.js';
import { ensureDemoShoot } from './demo-shoot.js';
import { findElectronBinary } from './electron-binary.js';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const version = (JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { version: string }).version;

function openInBrowser(url: string): void {
  const [cmd, args] = process.platform === 'darwin' ? ['open', [url]] : process.platform === 'win32' ? ['cmd', ['/c', 'start', '', url]] : ['xdg-open', [url]];
  try {
    const child = spawn(cmd, args as string[], { stdio: 'ignore', detached: true });
    child.on('error', () => process.stderr.write(`Open ${url} in a browser.\n`));
    child.unref();
  } catch {
    process.stderr.write(`Open ${url} in a browser.\n`);
  }
}

async function main(): Promise<void> {
  const args = process.argv.slice(2);
  const folder = args.find((a) => !a.startsWith('-'));
  const forceBrowser = args.includes('--browser') || process.env.SEAMSCOUT_SHELL === 'browser';
  const electron = forceBrowser ? null : findElectronBinary();
  const built = join(root, 'dist', 'main', 'electron-main.js');
  if (electron && existsSync(built)) {
    const child = spawn(electron, [root, ...(folder ? [resolve(folder)] : [])], { stdio: 'inherit' });
    child.on('exit', (code) => process.exit(code ?? 0));
    return;
  }
  if (!forceBrowser) process.stdout.write('The Electron binary is not installed here: serving the app to your browser instead.\n');
  const host = await startBrowserHost({ assets: join(root, 'dist', 'renderer'), demoFolder: ensureDemoShoot, version, initialTarget: folder ? { folder: resolve(folder) } : { demo: true } });
  process.stdout.write(`Seamscout is at ${host.url}\n(only this computer can reach it; press Ctrl+C to stop)\n`);
  if (host.sharedAddress) {
    process.stdout.write('Note: no loopback address of its own could be had here, so it shares 127.0.0.1 with other local servers; close the page when done.\n');
  }
  if (!args.includes('--no-open') && !process.env.SEAMSCOUT_NO_BROWSER) openInBrowser(host.url);
  const stop = (): void => {
    void host.close().finally(() => process.exit(0));
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((err) => {
  process.stderr.write(`seamscout: ${(err as Error).message}\n`);
  process.exit(2);
});
