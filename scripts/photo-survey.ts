/**
 * The photo-wall corpus against the current check: writes every scenario of
 * test/helpers/photo-sequences.ts into <outdir>/<scenario>/, runs the check on it as the command
 * line does by default (runCheck + judge with the default budget, no cache), and prints what was
 * expected beside what was flagged. Not a test: a baseline of misses and false alarms.
 *
 *   npx tsx scripts/photo-survey.ts <outdir> [scenario ...]
 *
 * <outdir> must be missing or empty; nothing is written anywhere else. Beside each scenario's
 * folder: <scenario>.truth.json (the spec's frames and expected findings) and
 * <scenario>.report.json (the check's report); survey.json holds the table's rows.
 */
import { mkdir, readdir, writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { defaultBudget } from '../src/core/sequence/report.js';
import type { Report } from '../src/core/sequence/report.js';
import { judge } from '../src/core/sequence/verdicts.js';
import { commandLineThreads, defaultMaxSide, runCheck } from '../src/main/check.js';
import type { ExpectedFinding, Scenario } from '../test/helpers/photo-sequences.js';
import type { FrameTruth, SequenceSpec } from '../test/helpers/photo-sequences.js';
import { framesTruth, pixelMapper, scenarios, writeSequence } from '../test/helpers/photo-sequences.js';

/**
 * How far the check's registered homographies land from the truth, full-resolution px: the worst
 * point of a 9 x 9 grid of a's pixels that fall inside b, per pair; median and worst over pairs.
 * With lens distortion no homography is exact, so this includes the lens there.
 */
function homographyErrors(report: Report, spec: SequenceSpec, frames: readonly FrameTruth[]): string {
  const byFile = new Map(frames.map((f) => [f.file, f]));
  const errs: number[] = [];
  for (const p of report.pairs) {
    const a = byFile.get(p.a), b = byFile.get(p.b);
    if (!p.homography || !a || !b) continue;
    const h = p.homography;
    const truth = pixelMapper(spec, a, b);
    let worst = 0;
    for (let j = 0; j < 9; j++) {
      for (let i = 0; i < 9; i++) {
        const x = ((i + 0.5) / 9) * spec.width - 0.5, y = ((j + 0.5) / 9) * spec.height - 0.5;
        const t = truth(x, y);
        if (!t || t[0] < 0 || t[1] < 0 || t[0] > spec.width - 1 || t[1] > spec.height - 1) continue;
        const w = h[6] * x + h[7] * y + h[8];
        worst = Math.max(worst, Math.hypot((h[0] * x + h[1] * y + h[2]) / w - t[0], (h[3] * x + h[4] * y + h[5]) / w - t[1]));
      }
    }
    errs.push(worst);
  }
  if (errs.length === 0) return 'no registered pair';
  errs.sort((x, y) => x - y);
  return `registered ${errs.length} pairs, error vs truth median ${errs[errs.length >> 1].toFixed(2)} px, worst ${errs[errs.length - 1].toFixed(2)} px`;
}

interface Flag {
  readonly code: string;
  /** Where: a frame, "a~b" for a pair, "station n", or "yaw/pitch" for a hole. */
  readonly at: string;
  readonly frames: readonly string[];
  readonly yawDeg?: number;
  readonly pitchDeg?: number;
}

/** Every flag of a report, once per place (frames of a station that carry its flag are not repeated). */
export function flagsOf(r: Report): Flag[] {
  const out: Flag[] = [];
  const stationCodes = new Set<string>();
  for (const s of r.stations) {
    for (const code of s.flags) {
      out.push({ code, at: `station ${s.index + 1} (${s.frames.join(', ')})`, frames: s.frames });
      for (const f of s.frames) stationCodes.add(`${code}|${f}`);
    }
  }
  for (const p of r.pairs) for (const code of p.reasons) out.push({ code, at: `${p.a}~${p.b}`, frames: [p.a, p.b] });
  const pairCodes = new Set(out.flatMap((f) => f.frames.map((x) => `${f.code}|${x}`)));
  for (const f of r.frames) {
    for (const code of f.flags) {
      // A frame's flag that only repeats its station's or one of its pairs' is the same finding.
      if (stationCodes.has(`${code}|${f.file}`) || pairCodes.has(`${code}|${f.file}`)) continue;
      out.push({ code, at: f.file, frames: [f.file] });
    }
  }
  for (const h of r.holes ?? []) out.push({ code: h.code, at: `hole ${h.pole ?? ''}${h.pole ? ' ' : ''}yaw ${h.yawDeg.toFixed(0)} pitch ${h.pitchDeg.toFixed(0)} (${h.verdict})`, frames: [], yawDeg: h.yawDeg, pitchDeg: h.pitchDeg });
  for (const p of r.folderProblems) out.push({ code: p.code, at: 'folder', frames: [] });
  return out;
}

const angleDiff = (a: number, b: number): number => Math.abs(((a - b + 540) % 360) - 180);

/** Whether a flag is the expected finding: same code, on the same frame or pair (a frame's flag may sit on one of its pairs or its station), or a hole near where to aim. */
function matches(e: ExpectedFinding, f: Flag): boolean {
  if (e.code !== f.code) return false;
  if (e.pair) return f.frames.length === 2 && f.frames.includes(e.pair[0]) && f.frames.includes(e.pair[1]);
  if (e.frame) return f.frames.includes(e.frame);
  if (e.yawDeg !== undefined && e.pitchDeg !== undefined) {
    // Hole tolerance: within half a frame step of where the frame is missing (common practice).
    return f.yawDeg !== undefined && f.pitchDeg !== undefined && angleDiff(e.yawDeg, f.yawDeg) <= 25 && Math.abs(e.pitchDeg - f.pitchDeg) <= 15;
  }
  return true;
}

const describeExpected = (e: ExpectedFinding): string =>
  `${e.code} ${e.pair ? `${e.pair[0]}~${e.pair[1]}` : e.frame ?? `yaw ${e.yawDeg} pitch ${e.pitchDeg}`}`;

interface Row {
  readonly scenario: string;
  readonly kind: Scenario['kind'];
  readonly expected: string[];
  readonly flagged: string[];
  readonly verdict: string;
  readonly caught: number;
  readonly missed: string[];
  readonly falseAlarms: string[];
  readonly setApart: string[];
  readonly geometry: string;
  readonly renderS: number;
  readonly checkS: number;
  readonly error: string | null;
}

async function survey(outdir: string, only: readonly string[]): Promise<Row[]> {
  await mkdir(outdir, { recursive: true });
  const present = await readdir(outdir);
  if (present.length > 0) throw new Error(`Expected a missing or empty folder for outdir but received ${outdir} holding ${present.length} entries`);
  const list = scenarios().filter((s) => only.length === 0 || only.includes(s.name));
  if (list.length === 0) throw new Error(`Expected scenario names from ${scenarios().map((s) => s.name).join(', ')} but received ${only.join(', ')}`);
  const rows: Row[] = [];
  for (const s of list) {
    const folder = join(outdir, s.name);
    const written = await writeSequence(folder, s.spec);
    await writeFile(join(outdir, `${s.name}.truth.json`), JSON.stringify({ scenario: s.name, kind: s.kind, description: s.description, truth: s.truth, frames: framesTruth(s.spec), spec: { ...s.spec, frames: undefined } }, null, 2) + '\n');
    // As a user runs it (default options); a set shot in rows also with --all-pairs, its own way.
    const pitches = s.spec.frames.map((f) => f.pitchDeg);
    const variants = Math.max(...pitches) - Math.min(...pitches) > 20 ? [false, true] : [false];
    for (const allPairs of variants) {
      const name = allPairs ? `${s.name} --all-pairs` : s.name;
      const started = performance.now();
      let report: Report | null = null;
      let error: string | null = null;
      try {
        const result = await runCheck(folder, { maxSide: defaultMaxSide, threads: commandLineThreads(), cache: null, allPairs });
        report = judge(result.analysis, defaultBudget);
        await writeFile(join(outdir, `${s.name}${allPairs ? '.all-pairs' : ''}.report.json`), JSON.stringify(report, null, 2) + '\n');
      } catch (err) {
        error = (err as Error).message;
      }
      const checkS = (performance.now() - started) / 1000;
      const row = compare(s, name, report, error, written.frames[0].focalPx, written.elapsedMs / 1000, checkS);
      rows.push(report ? { ...row, geometry: `${row.geometry}; ${homographyErrors(report, s.spec, written.frames)}` } : row);
      process.stdout.write(formatRow(rows[rows.length - 1], s.truth.verdict) + '\n');
    }
  }
  return rows;
}

function compare(s: Scenario, name: string, report: Report | null, error: string | null, focalPx: number, renderS: number, checkS: number): Row {
  const flags = report ? flagsOf(report) : [];
  const used = new Set<number>();
  let caught = 0;
  const missed: string[] = [];
  for (const e of s.truth.findings) {
    const k = flags.findIndex((f, i) => !used.has(i) && matches(e, f));
    if (k >= 0) {
      caught++;
      used.add(k);
      // Further flags of the same finding (the same code on the same place again) are not new alarms.
      flags.forEach((f, i) => {
        if (matches(e, f)) used.add(i);
      });
    } else missed.push(describeExpected(e));
  }
  const falseAlarms = flags.filter((_, i) => !used.has(i)).map((f) => `${f.code} ${f.at}`);
  const skipped = new Map((report?.skipped ?? []).map((k) => [k.file, k.code]));
  const inFrames = new Set((report?.frames ?? []).map((f) => f.file));
  const setApart = s.truth.setApart.map((a) => {
    const got = skipped.get(a.file);
    const ok = !inFrames.has(a.file) && (a.code === null || got === a.code);
    return `${a.file}: ${got ?? (inFrames.has(a.file) ? 'taken as a frame' : 'absent')}${ok ? '' : ' (expected ' + (a.code ?? 'set apart') + ')'}`;
  });
  const g = report?.geometry;
  const geometry = g
    ? `f ${g.focalPx.toFixed(0)} px (${g.focalFrom}; truth ${focalPx.toFixed(0)}), sweep ${g.horizontalDeg.toFixed(0)} deg, rms ${g.rmsPx.toFixed(1)} px${g.closure ? `, misclosure ${g.closure.misclosureDeg?.toFixed(2) ?? '-'} deg` : ''}${g.unplaced.length ? `, unplaced ${g.unplaced.length}` : ''}`
    : 'no geometry';
  return {
    scenario: name,
    kind: s.kind,
    expected: s.truth.findings.map(describeExpected),
    flagged: flags.map((f) => `${f.code} ${f.at}`),
    verdict: report ? report.verdict : 'crash',
    caught,
    missed,
    falseAlarms,
    setApart,
    geometry,
    renderS,
    checkS,
    error,
  };
}

function formatRow(r: Row, wantVerdict: string | null): string {
  const lines = [
    `## ${r.scenario} (${r.kind}) — verdict ${r.verdict}${wantVerdict ? ` (want ${wantVerdict})` : ''}; caught ${r.caught}/${r.expected.length}, missed ${r.missed.length}, false alarms ${r.falseAlarms.length}; render ${r.renderS.toFixed(1)} s, check ${r.checkS.toFixed(1)} s`,
    `   expected: ${r.expected.join('; ') || 'nothing'}`,
    `   flagged:  ${r.flagged.join('; ') || 'nothing'}`,
  ];
  if (r.missed.length) lines.push(`   missed:   ${r.missed.join('; ')}`);
  if (r.falseAlarms.length) lines.push(`   false:    ${r.falseAlarms.join('; ')}`);
  if (r.setApart.length) lines.push(`   set apart: ${r.setApart.join('; ')}`);
  lines.push(`   geometry: ${r.geometry}`);
  if (r.error) lines.push(`   CRASH: ${r.error}`);
  return lines.join('\n');
}

async function main(): Promise<number> {
  const [out, ...only] = process.argv.slice(2);
  if (!out) {
    process.stderr.write('usage: npx tsx scripts/photo-survey.ts <outdir> [scenario ...]\n');
    return 2;
  }
  const outdir = resolve(out);
  const rows = await survey(outdir, only);
  await writeFile(join(outdir, 'survey.json'), JSON.stringify(rows, null, 2) + '\n');
  const table = [
    '| scenario | expected | flagged | verdict | caught | missed | false alarms | check s |',
    '| --- | --- | --- | --- | --- | --- | --- | --- |',
    ...rows.map((r) => `| ${r.scenario} | ${r.expected.join('; ') || '-'} | ${r.flagged.join('; ') || '-'} | ${r.verdict} | ${r.caught}/${r.expected.length} | ${r.missed.length} | ${r.falseAlarms.length} | ${r.checkS.toFixed(1)} |`),
  ];
  process.stdout.write('\n' + table.join('\n') + '\n');
  const clean = rows.filter((r) => r.kind === 'clean');
  const faults = rows.filter((r) => r.kind === 'fault');
  process.stdout.write(`\nclean controls with no flag: ${clean.filter((r) => r.flagged.length === 0 && !r.error).length}/${clean.length}; planted faults caught: ${faults.reduce((n, r) => n + r.caught, 0)}/${faults.reduce((n, r) => n + r.expected.length, 0)}; false alarms: ${rows.reduce((n, r) => n + r.falseAlarms.length, 0)}; crashes: ${rows.filter((r) => r.error).length}\n`);
  return 0;
}

main().then((code) => process.exit(code), (err: unknown) => {
  process.stderr.write(`photo-survey: ${(err as Error).stack ?? String(err)}\n`);
  process.exit(2);
});
