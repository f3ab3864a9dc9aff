// The desktop bridge as the build makes it (vite.preload.config.ts): one CommonJS file that
// requires only 'electron', with the contract's channel names bundled in. Electron cannot run here,
// so the bundle runs in a VM context against a recording stand-in for the electron module.
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { runInNewContext } from 'node:vm';
import { build } from 'vite';
import type { Rolldown } from 'vite';
import { beforeAll, describe, expect, it } from 'vitest';
import type { SeamscoutApi } from '../../src/common/api.js';
import { callChannels, eventChannels, frameProtocol } from '../../src/common/api.js';
import { projectRoot } from '../helpers/cli.js';

let code: string;
const required: string[] = [];
const invoked: { channel: string; args: unknown[] }[] = [];
const listened: string[] = [];
let exposed: { name: string; api: SeamscoutApi } | null = null;

beforeAll(async () => {
  const out = (await build({ configFile: join(projectRoot, 'vite.preload.config.ts'), logLevel: 'silent', build: { write: false } })) as Rolldown.RolldownOutput[];
  const chunks = out.flatMap((o) => o.output).filter((c) => c.type === 'chunk');
  expect(chunks.map((c) => c.fileName)).toEqual(['preload.cjs']);
  code = chunks[0]!.code;
  const electron = {
    ipcRenderer: {
      invoke: async (channel: string, ...args: unknown[]) => void invoked.push({ channel, args }),
      on: (channel: string) => void listened.push(channel),
      removeListener: () => {},
    },
    contextBridge: { exposeInMainWorld: (name: string, api: SeamscoutApi) => void (exposed = { name, api }) },
    webUtils: { getPathForFile: () => '' },
  };
  const module = { exports: {} };
  runInNewContext(code, {
    module,
    exports: module.exports,
    require: (name: string) => {
      required.push(name);
      if (name === 'electron') return electron;
      throw new Error(`a sandboxed preload cannot require ${name}`);
    },
  });
}, 60_000);

describe('the bundled desktop bridge', () => {
  it('requires only electron and exposes one object to the page', () => {
    expect(required).toEqual(['electron']);
    expect(exposed?.name).toBe('seamscout');
  });

  it('calls each method of the contract on the channel the contract names for it, with its arguments', async () => {
    const api = exposed!.api as unknown as Record<string, (...args: unknown[]) => Promise<unknown>>;
    for (const [name, channel] of Object.entries(callChannels)) {
      invoked.length = 0;
      await api[name]!(1, 'b', 'c');
      expect(invoked.map((c) => c.channel), name).toEqual([channel]);
    }
    invoked.length = 0;
    await exposed!.api.tiePoints(4, 'a.jpg', 'b.jpg');
    expect(invoked).toEqual([{ channel: callChannels.tiePoints, args: [4, 'a.jpg', 'b.jpg'] }]);
  });

  it('listens for the contract\'s events on its channels, and names frames by the contract\'s scheme', () => {
    exposed!.api.onProgress(() => {});
    exposed!.api.onDone(() => {});
    exposed!.api.onPartial(() => {});
    expect(listened).toEqual([eventChannels.progress, eventChannels.done, eventChannels.partial]);
    expect(exposed!.api.frameUrl(3, 'IMG 1.jpg', 320.4)).toBe(`${frameProtocol}://frames/3/IMG%201.jpg?max=320`);
  });

  it('holds no channel name of its own in the source: the names come from the contract', async () => {
    const source = await readFile(join(projectRoot, 'src/main/preload.cts'), 'utf8');
    expect(source).not.toMatch(/seamscout:/);
    expect(code).toContain(callChannels.exportReport);
  });
});
