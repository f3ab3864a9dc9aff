// Answers as they come: the command prints each pair's line as soon as it is measured, in the order
// of the final table, with the progress line kept at the bottom of a terminal, and JSON events for
// tools. On a small clean demo shoot (the generator's exact turn, 4 stations of 3 bracket frames)
// and on the leuven pair (test/fixtures/external/SOURCES.md).
import { execFile, spawn } from 'node:child_process';
import { copyFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { FrameMeasure, PairMeasure, Report, Verdict } from '../../src/core/sequence/report.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { createCheckStream, provisionalPair } from '../../src/main/check-stream.js';
import { writeDemoShoot } from '../../src/main/demo-writer.js';
import type { ShownPair } from '../../src/main/summary.js';
import { formatSummary, pairKey, pairRow } from '../../src/main/summary.js';
import { projectRoot, tempDir } from '../helpers/cli.js';
import { externalFixture } from '../helpers/images.js';

const cliArgs = (args: string[]): string[] => ['--import', 'tsx', join(projectRoot, 'src/main/cli.ts'), ...args];
const homeEnv = (): Record<string, string> => {
  const home = tempDir('seamscout-home-');
  return { SEAMSCOUT_CACHE_DIR: join(home, 'cache'), SEAMSCOUT_CONFIG_DIR: join(home, 'config') };
};

/** The command with stdout and stderr piped, each chunk of stdout with the time it arrived. */
function runPiped(args: string[]): Promise<{ code: number; chunks: { at: number; text: string }[]; stdout: string; stderr: string; startedAt: number }> {
  return new Promise((resolve, reject) => {
    const startedAt = performance.now();
    const child = spawn(process.execPath, cliArgs(args), { cwd: projectRoot, env: { ...process.env, ...homeEnv() }, stdio: ['ignore', 'pipe', 'pipe'] });
    const chunks: { at: number; text: string }[] = [];
    let stderr = '';
    child.stdout.on('data', (d) => chunks.push({ at: performance.now(), text: String(d) }));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('error', reject);
    child.on('close', (code) => resolve({ code: code ?? -1, chunks, stdout: chunks.map((c) => c.text).join(''), stderr, startedAt }));
  });
}

/** The command under a pseudo-terminal (util-linux `script -qec`), its raw output with the escapes. */
function runOnTerminal(args: string[]): Promise<string> {
  const quoted = [process.execPath, ...cliArgs(args)].map((a) => `'${a.replaceAll("'", "'\\''")}'`).join(' ');
  return new Promise((resolve, reject) => {
    execFile('script', ['-qec', quoted, '/dev/null'], { cwd: projectRoot, env: { ...process.env, ...homeEnv() }, maxBuffer: 16 << 20 }, (err, stdout) => {
      if (err && typeof err.code !== 'number') reject(err);
      else resolve(String(stdout));
    });
  });
}

const pairLine = /^[ ~!] (\S+) -> (\S+) +(bracket|neighbour|closure|other) /;

describe('a pair judged on its own while the check runs', () => {
  const frame = (file: string): FrameMeasure => ({
    file, width: 1200, height: 800, captureTime: null, sharpness: 1, keypoints: 500, fingerprint: file,
    settings: { make: null, model: null, exposureTime: null, fNumber: null, iso: null, evBias: null, focalLength: null, focalLength35: null, whiteBalance: null, lens: null },
  } as unknown as FrameMeasure);
  const pair = (overlap: number, inliers: number): PairMeasure => ({
    a: 'a.jpg', b: 'b.jpg', kind: 'neighbour', matches: 200, inliers, matchesInOverlap: 150, overlap, homography: [1, 0, 800, 0, 1, 0, 0, 0, 1], evDiff: 0.1, rmsError: 0.5,
    shiftPx: null, moved: [], misfit: 0, parallax: false, sharpnessRatio: 1, sharpnessByDirection: null, sharpnessBlocks: null,
  } as unknown as PairMeasure);
  const streamed = (p: PairMeasure) => ({ pair: p, frames: [frame('a.jpg'), frame('b.jpg')] as const, nameWidth: 8, run: 1 });

  it('applies the budget to the pair alone: overlap under the reshoot overlap is to reshoot, a clean pair is ok', () => {
    // defaultBudget: reshoot under 20 % overlap, weak under 30 %, at least 20 inliers (src/core/sequence/report.ts).
    expect(provisionalPair(streamed(pair(0.1, 80)), defaultBudget)).toMatchObject({ verdict: 'reshoot', reasons: ['low-overlap'] });
    expect(provisionalPair(streamed(pair(0.4, 80)), defaultBudget)).toMatchObject({ verdict: 'ok', reasons: [] });
  });

  it('keeps the progress line under the pair lines on a terminal: cleared, line written, drawn again', () => {
    let out = '';
    const s = createCheckStream({ budget: defaultBudget, folder: '/x', out: { write: (t: string) => (out += t) }, bar: true, events: null });
    s.onProgress({ phase: 'frames', done: 1, total: 2 });
    out = '';
    s.onPair(streamed(pair(0.4, 80)));
    expect(out.startsWith('\r\x1b[K')).toBe(true);
    expect(out).toMatch(/a\.jpg -> b\.jpg +neighbour .*ok\n\rframes +\[#+\.*\] 1\/2$/);
  });
});

describe('the command, piped and on a terminal', () => {
  let demo: string;
  let piped: Awaited<ReturnType<typeof runPiped>>;
  let report: { verdict: string; pairs: { a: string; b: string; kind: string; verdict: string }[] };
  beforeAll(async () => {
    demo = (await writeDemoShoot(join(tempDir(), 'turn'), { clean: true, stations: 4, width: 900, height: 600, seed: 3, workers: 0 })).folder;
    const json = join(tempDir('seamscout-out-'), 'report.json');
    piped = await runPiped(['check', demo, '--threads', '0', '--no-cache', '--json', json, '--progress', 'json']);
    report = JSON.parse(readFileSync(json, 'utf8'));
  }, 180_000);

  it('prints every pair line before the final block, in the order of the report; the final block does not repeat them and ends with the plan and the verdict', () => {
    expect([0, 1]).toContain(piped.code);
    const lines = piped.stdout.trimEnd().split('\n');
    const finalAt = lines.findIndex((l) => l.startsWith('Seamscout check of '));
    const streamed = lines.slice(0, finalAt).flatMap((l) => {
      const m = pairLine.exec(l);
      return m ? [`${m[1]} ${m[2]} ${m[3]}`] : [];
    });
    expect(streamed).toEqual(report.pairs.map((p) => `${p.a} ${p.b} ${p.kind}`));
    expect(lines[0]).toMatch(/^Pairs as they are judged/);
    expect(lines[finalAt - 1]).toBe('');
    // Only pairs the whole sequence judged otherwise come again, under their own heading.
    const again = lines.slice(finalAt).filter((l) => pairLine.test(l));
    const judgedOtherwise = lines.indexOf('Judged otherwise once the whole sequence was checked:');
    if (again.length) expect(judgedOtherwise).toBeGreaterThan(finalAt);
    expect(again.length).toBeLessThan(report.pairs.length);
    // The plan and the verdict line are the last thing printed.
    const planAt = lines.findIndex((l) => l.startsWith('Reshoot plan for '));
    expect(planAt).toBeGreaterThan(finalAt);
    expect(lines.at(-1)).toMatch(/^Verdict: /);
    expect(lines.slice(planAt).filter((l) => l.startsWith('Verdict: '))).toHaveLength(1);
  });

  it('writes the first pair line before the check ends (time reported, not asserted)', () => {
    const first = piped.chunks.find((c) => c.text.split('\n').some((l) => pairLine.test(l)))!;
    const final = piped.chunks.find((c) => c.text.includes('Seamscout check of '))!;
    console.log(`check-stream: first pair line after ${Math.round(first.at - piped.startedAt)} ms, final block after ${Math.round(final.at - piped.startedAt)} ms (4 stations of 3 frames, 900 x 600)`);
    expect(first.at).toBeLessThan(final.at);
  });

  it('writes no progress line and no escape code when piped', () => {
    // eslint-disable-next-line no-control-regex -- the escape codes are what this looks for
    expect(piped.stdout).not.toMatch(/\x1b|\r/);
    expect(piped.stdout).not.toMatch(/\[#*\.*\] \d+\/\d+/);
  });

  it('writes one JSON event a line on stderr: start, frames, pairs in order, sequence, end', () => {
    // Messages (an output written, an error) stay plain lines; an event is a line that is a JSON object.
    const events = piped.stderr.trim().split('\n').filter((l) => l.startsWith('{')).map((l) => JSON.parse(l) as { event: string; ms: number; a?: string; b?: string; kind?: string; verdict?: string });
    expect(events[0].event).toBe('start');
    expect(events.at(-1)!.event).toBe('end');
    expect(events.at(-1)!.verdict).toBe(report.verdict);
    expect(events.filter((e) => e.event === 'frame')).toHaveLength(12);
    expect(events.filter((e) => e.event === 'pair').map((e) => `${e.a} ${e.b} ${e.kind}`)).toEqual(report.pairs.map((p) => `${p.a} ${p.b} ${p.kind}`));
    expect(events.filter((e) => e.event === 'sequence')).toHaveLength(1);
    const ms = events.map((e) => e.ms);
    expect(ms).toEqual([...ms].sort((x, y) => x - y));
  });

  it('on a terminal, redraws the progress line under each pair line and clears it before the final block', async () => {
    const raw = await runOnTerminal(['check', demo, '--threads', '0', '--no-cache']);
    // The terminal turns \n into \r\n; undo that to read the writes as the command made them.
    const out = raw.replaceAll('\r\n', '\n');
    const segments = out.split('\n');
    // What a segment leaves on screen: the text after its last carriage return and line clear.
    // eslint-disable-next-line no-control-regex -- the escape codes are what this looks for
    const visible = (s: string): string => s.slice(s.lastIndexOf('\r') + 1).replace(/^\x1b\[K/, '');
    const pairs = segments.map((s, k) => ({ s, k })).filter(({ s }) => pairLine.test(visible(s)));
    const beforePlan = segments.findIndex((s) => s.includes('Seamscout check of '));
    const streamed = pairs.filter(({ k }) => k < beforePlan);
    expect(streamed.length).toBe(report.pairs.length);
    for (const { k } of streamed) {
      // The line after each pair line begins with the progress line drawn again.
      expect(segments[k + 1], JSON.stringify(segments[k + 1])).toMatch(/^\r(frames|pairs) +\[/);
    }
    // The progress line is cleared before the final block: nothing of it is left on screen.
    const last = segments[beforePlan - 1];
    expect(last.slice(last.lastIndexOf('\r'))).toBe('\r\x1b[K');
  }, 120_000);
});

describe('on real photographs (the leuven pair)', () => {
  let run: Awaited<ReturnType<typeof runPiped>>;
  let report: Report;
  beforeAll(async () => {
    const card = tempDir('seamscout-card-');
    for (const f of ['leuvenA.jpg', 'leuvenB.jpg']) copyFileSync(externalFixture(f), join(card, f));
    const json = join(tempDir('seamscout-out-'), 'report.json');
    run = await runPiped(['check', card, '--threads', '0', '--no-progress', '--json', json]);
    report = JSON.parse(readFileSync(json, 'utf8'));
  }, 120_000);

  it('shows the pair once while checking and not again in the final block, whose verdict did not change', () => {
    const lines = run.stdout.split('\n');
    const finalAt = lines.findIndex((l) => l.startsWith('Seamscout check of '));
    expect(lines.slice(0, finalAt).filter((l) => pairLine.test(l))).toHaveLength(1);
    expect(lines.slice(finalAt).filter((l) => pairLine.test(l))).toHaveLength(0);
    // Its finding is explained, counted as a pair, not as a reshoot.
    expect(lines).toContain('Findings: 1 pair flagged.');
  });

  it('lists again a pair whose verdict or kind differs from the one shown while checking, once, and only that', () => {
    const p = report.pairs[0];
    const other: Verdict = p.verdict === 'ok' ? 'reshoot' : 'ok';
    const rows = (shown: ShownPair): string[] => formatSummary(report, new Map([[pairKey(p), shown]])).split('\n').filter((l) => pairLine.test(l));
    expect(rows({ verdict: other, kind: p.kind })).toEqual([expect.stringMatching(new RegExp(`\\[shown as ${other === 'ok' ? 'ok' : 'RESHOOT'} while checking\\]$`))]);
    // A row's closure pair is screened first as another pair, and a turn's closure pair may end as
    // one between rows (--all-pairs on a set shot in rows): listed once, with its final kind.
    const kindChanged = rows({ verdict: p.verdict, kind: 'closure' });
    expect(kindChanged).toHaveLength(1);
    expect(kindChanged[0]).toMatch(new RegExp(`^. ${p.a} -> ${p.b} +${p.kind} .*\\[shown as closure while checking\\]$`));
    expect(rows({ verdict: p.verdict, kind: p.kind })).toEqual([]);
  });

  it('prints the whole pair table when no pair line was shown, and a pair never shown under its own heading', () => {
    const p = report.pairs[0];
    expect(formatSummary(report).split('\n').filter((l) => pairLine.test(l))).toEqual([pairRow(p, 11)]);
    const reversed = { ...p, a: p.b, b: p.a };
    const out = formatSummary({ ...report, pairs: [p, reversed] }, new Map([[pairKey(p), { verdict: p.verdict, kind: p.kind }]])).split('\n');
    const at = out.indexOf('Pairs not shown while checking:');
    expect(at).toBeGreaterThan(0);
    expect(out.filter((l) => pairLine.test(l))).toEqual([pairRow(reversed, 11)]);
  });
});
