import { spawn } from 'node:child_process';
import { chmodSync } from 'node:fs';
import { join } from 'node:path';
import { projectRoot, tempDir } from '../../tools/paths.js';

// Shared with bench/, so kept in tools/; the tests keep importing them from here.
export { projectRoot, tempDir };

/**
 * Runs the command line as a user would (node with tsx on the sources), with its cache and settings
 * folders moved to temporary ones so tests never touch the user's; as another user when `uid` is
 * given (tests run as root, who may write anywhere).
 */
export function runCli(args: string[], env: Record<string, string> = {}, uid?: number): Promise<{ code: number; stdout: string; stderr: string }> {
  const home = tempDir('seamscout-home-');
  if (uid !== undefined) chmodSync(home, 0o777);
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--import', 'tsx', join(projectRoot, 'src/main/cli.ts'), ...args], {
      cwd: projectRoot,
      env: { ...process.env, SEAMSCOUT_CACHE_DIR: join(home, 'cache'), SEAMSCOUT_CONFIG_DIR: join(home, 'config'), ...env },
      stdio: ['ignore', 'pipe', 'pipe'],
      ...(uid !== undefined ? { uid, gid: uid } : {}),
    });
    let stdout = '', stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('error', reject);
    child.on('close', (code) => resolve({ code: code ?? -1, stdout, stderr }));
  });
}
