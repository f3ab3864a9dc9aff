import { stat } from 'node:fs/promises';
import { resolve } from 'node:path';
import { parseArgs } from 'node:util';
import type { NumericBudgetKey } from '../core/sequence/budget.js';
import { budgetAsTyped, budgetFromTyped, budgetKeys, percentBudgetKeys } from '../core/sequence/budget.js';
import { tiePointsToCsv } from '../core/exports/csv.js';
import type { MatchBudget, Report } from '../core/sequence/report.js';
import { defaultBudget } from '../core/sequence/report.js';
import { judge } from '../core/sequence/verdicts.js';
import { commandLineThreads, defaultMaxSide } from './check.js';
import { checkCard } from './card-check.js';
import { sequenceReport } from '../core/sequence/sequence-report.js';
import { isCardLayout } from './scan.js';
import { NoCoverageMap, coverageMapContent, coverageMapFormat } from './coverage-map-file.js';
import { createFeatureCache } from './feature-cache.js';
import { exportContent } from './export-content.js';
import type { SettingsFile } from './settings.js';
import { readSettingsFile, settingsBudget, shareOverlapNote } from './settings.js';
import { forTerminal, formatSummary } from './summary.js';
import { createCheckStream } from './check-stream.js';
import { expectExportTarget, writeFileAtomic } from './write-file.js';
import { plainArgumentError } from './argument-words.js';
import type { ShotPreference } from '../common/api.js';
import { isShotPreference } from '../common/api.js';

export const checkUsage = `Usage: seamscout check [folder] [options]

Checks the shot sequences in a folder or on a card, each on its own: which frames to reshoot and
why. Without a folder, checks the demo shoot.

Options:
  --recursive              look in sub-folders too (the default for a camera card: a folder that is,
                           or holds, DCIM with numbered folders such as 100CAMERA)
  --no-recursive           look only in the folder itself, even on a camera card
  --sequence N             check only one sequence of the card: its number in the summary, or the
                           name of its first file
  --all-pairs              match every plausible pair (multi-row or unordered sets)
  --size N                 longest side of the analysis image in px (default ${defaultMaxSide})
  --prefer jpeg|raw        of a RAW+JPEG pair (one shot written twice), check this one (default jpeg;
                           also "prefer" in the settings file)
  --threads N              worker threads (default: none on 2 cores or fewer, else one per core;
                           0 = analyse in the command's own thread)
  --json FILE              write the report (schema seamscout-report/1)
  --graphml FILE           write the pair graph as GraphML
  --csv FILE               write one row per pair (RFC 4180)
  --dot FILE               write the pair graph in the DOT language
  --tie-points FILE        write each pair's tie points (CSV: a,b,xa,ya,xb,yb, full-resolution px):
                           the points its homography is finally fitted to, up to 300 of a's corners
                           in the overlap each found in b by its appearance. Not the matches the
                           inlier count reports (those are fewer); where that refinement fails,
                           the inlier matches themselves
  --coverage-map FILE      write the coverage map: every frame's footprint on the sphere around the
                           camera and what no frame sees (.svg, or .png); on a card of several
                           sequences, one file each, numbered (map-1.svg, map-2.svg, ...)
  --force                  overwrite existing output files (regular files only; nothing is ever
                           written inside the checked folder)
  --no-cache               analyse every frame again (the cache lives in the user's cache folder)
  --settings FILE          settings file (default: the user settings file, if present); its budget
                           as below, overlaps in percent too (a file of earlier versions with
                           overlaps as shares, 0.2, is read as 20 % with a note). The command says
                           which file it used and which of its values differ from the defaults
  --no-progress            no progress line (there is one only when the output is a terminal)
  --progress json          write one JSON object per event to stderr, for tools: start, frame,
                           pair, sequence, end (see docs/progress-events.md)
Match budget (also in the settings file under "budget"):
  --min-inliers N          fewest inliers for an ok pair (default 20)
  --reshoot-overlap PCT    reshoot a pair under this overlap, in percent: 20, not 0.2 (default 20)
  --weak-overlap PCT       weak under this overlap, in percent (default 30)
  --max-ev EV              largest exposure difference between neighbours (default 0.5)
  --min-sharpness R        blurred below this share of its neighbours' sharpness (default 0.65)
  --max-bracket-shift PX   largest bracket frame shift, full-resolution px (default 4)
  --full-sphere            the set is meant to cover the whole sphere: an open zenith or nadir is
                           a hole to reshoot ("fullSphere": true in the settings file). Without it
                           an open pole is only a note, unless a frame is aimed above 60 degrees
                           of pitch (zenith) or below -60 (nadir)

Exit status: 0 all ok; 1 something flagged (or too little to judge, such as a single frame);
2 nothing checked or an output not written: a usage error, a folder that cannot be read or holds
no image files, or an output file that cannot be written (a coverage map that cannot be drawn,
for frames that could not be placed, is only a note).
`;

export interface CheckCommandDeps {
  /** Folder of the demo shoot, made on first use. */
  readonly demoFolder?: () => Promise<string>;
}

/** The command's option for each budget field. */
const budgetOptions = {
  minInliers: 'min-inliers', reshootOverlap: 'reshoot-overlap', weakOverlap: 'weak-overlap', maxEvDiff: 'max-ev',
  minSharpnessRatio: 'min-sharpness', maxBracketShiftPx: 'max-bracket-shift', fullSphere: 'full-sphere',
} as const satisfies Record<keyof MatchBudget, string>;

/**
 * One line on where the budget came from: the settings file, and which of the values it gives differ
 * from the defaults, in the file's names and the person's units (overlaps in percent). The file's
 * budget was checked before this is asked.
 */
export function budgetSourceLine(file: string, settings: SettingsFile): string {
  const defaults = budgetAsTyped(defaultBudget);
  const mine = budgetAsTyped(budgetFromTyped(settingsBudget(settings, file)));
  const unit = (k: keyof MatchBudget): string => (percentBudgetKeys.includes(k as NumericBudgetKey) ? ' %' : '');
  const differ = budgetKeys
    .filter((k) => settings.budget?.[k] !== undefined && mine[k] !== defaults[k])
    .map((k) => `${k} ${mine[k]}${unit(k)} (default ${defaults[k]}${unit(k)})`);
  return `Settings from ${file}: ${differ.length ? differ.join(', ') : 'the default budget'}\n`;
}

/** The command's options as parseArgs reads them (throws on an unknown or malformed option). */
function parseCheckArgs(args: string[]) {
  return parseArgs({
    args,
    allowPositionals: true,
    options: {
      recursive: { type: 'boolean' }, 'no-recursive': { type: 'boolean' }, sequence: { type: 'string' }, 'all-pairs': { type: 'boolean' }, size: { type: 'string' }, threads: { type: 'string' },
      json: { type: 'string' }, graphml: { type: 'string' }, csv: { type: 'string' }, dot: { type: 'string' }, 'tie-points': { type: 'string' }, 'coverage-map': { type: 'string' }, prefer: { type: 'string' },
      force: { type: 'boolean' }, 'no-cache': { type: 'boolean' }, settings: { type: 'string' }, 'no-progress': { type: 'boolean' }, progress: { type: 'string' }, help: { type: 'boolean' },
      'min-inliers': { type: 'string' }, 'reshoot-overlap': { type: 'string' }, 'weak-overlap': { type: 'string' }, 'max-ev': { type: 'string' },
      'min-sharpness': { type: 'string' }, 'max-bracket-shift': { type: 'string' }, 'full-sphere': { type: 'boolean' },
    },
  });
}

type CheckValues = ReturnType<typeof parseCheckArgs>['values'];

/** What the options and the settings file settle before any folder is read. */
interface CheckSettings {
  readonly budget: MatchBudget;
  readonly size: number;
  readonly threads: number | undefined;
  readonly prefer: ShotPreference | undefined;
  /** Where the budget came from, for stderr ('' without a settings file). */
  readonly settingsNote: string;
}

function wholeOption(name: string, value: string | undefined, min: number): number | undefined {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (!Number.isInteger(n) || n < min) throw new TypeError(`Expected a whole number of at least ${min} for --${name} but received ${value}`);
  return n;
}

/** The options' values checked and the settings file read; throws with the message to show. */
async function readCheckSettings(v: CheckValues): Promise<CheckSettings> {
  let settingsNote = '';
  const size = wholeOption('size', v.size, 64) ?? defaultMaxSide;
  const threads = wholeOption('threads', v.threads, 0);
  if (v['coverage-map']) coverageMapFormat(v['coverage-map']);
  if (v.progress !== undefined && v.progress !== 'json') throw new TypeError(`Expected json for --progress but received ${v.progress}`);
  if (v.prefer !== undefined && !isShotPreference(v.prefer)) throw new TypeError(`Expected jpeg or raw for --prefer but received ${v.prefer}`);
  const { settings, file } = await readSettingsFile(v.settings);
  const prefer = (v.prefer as ShotPreference | undefined) ?? settings.prefer;
  const typed = Object.fromEntries(budgetKeys.map((k) => [k, v[budgetOptions[k]]]));
  // Only a flag given says so: its absence leaves the settings file's declaration standing.
  typed.fullSphere = v['full-sphere'] ? true : undefined;
  const budget = budgetFromTyped(settingsBudget(settings, file ?? v.settings ?? ''), { values: typed, name: (k) => `--${budgetOptions[k]}` });
  if (file) {
    settingsNote = budgetSourceLine(file, settings);
    const shares = shareOverlapNote(settings, file);
    if (shares) settingsNote += `note: ${shares}\n`;
  }
  return { budget, size, threads, prefer, settingsNote };
}

/** The folder to check, or null when there is none (said on stderr). */
async function checkedFolder(positionals: readonly string[], deps: CheckCommandDeps): Promise<string | null> {
  let folder: string;
  if (positionals.length === 1) folder = resolve(positionals[0]);
  else if (deps.demoFolder) {
    process.stderr.write('No folder given: checking the demo shoot.\n');
    folder = await deps.demoFolder();
  } else {
    process.stderr.write(`Expected a folder for check but received none\n\n${checkUsage}`);
    return null;
  }
  try {
    if (!(await stat(folder)).isDirectory()) throw new Error('not a folder');
  } catch {
    process.stderr.write(`seamscout: Expected a readable folder but received ${forTerminal(folder)}\n`);
    return null;
  }
  return folder;
}

/**
 * Whether every output could be written, asked before the check, not after it; each refusal is
 * said. (A coverage map's name may turn into numbered ones on a card of several sequences: whether
 * it exists is asked when it is written.)
 */
async function outputsWritable(v: CheckValues, folder: string): Promise<boolean> {
  const targets = [v.json, v.graphml, v.csv, v.dot, v['tie-points'], v['coverage-map']].filter((p): p is string => !!p);
  let refused = false;
  for (const path of targets) {
    try {
      await expectExportTarget(resolve(path), { outside: folder, overwrite: (v.force ?? false) || path === v['coverage-map'] });
    } catch (err) {
      process.stderr.write(`seamscout: ${forTerminal((err as Error).message)}\n`);
      refused = true;
    }
  }
  return !refused;
}

interface CardResult {
  readonly report: Report;
  readonly tiePoints: Parameters<typeof tiePointsToCsv>[0];
  /** The pair lines already shown as they came, for the summary. */
  readonly shown: ReturnType<typeof createCheckStream>['shown'];
}

/** The folder checked and judged, streaming pair lines as they come; null when the check failed (said on stderr). */
async function checkAndJudge(v: CheckValues, settings: CheckSettings, folder: string): Promise<CardResult | null> {
  const { budget } = settings;
  // Pair lines as they come on stdout; the progress line under them only on a terminal.
  const stream = createCheckStream({
    budget,
    folder,
    out: process.stdout,
    bar: !!process.stdout.isTTY && !v['no-progress'] && v.progress !== 'json',
    events: v.progress === 'json' ? process.stderr : null,
  });
  try {
    // A camera card's layout (DCIM and numbered folders) is read through all its folders.
    const recursive = v.recursive ?? (v['no-recursive'] ? false : await isCardLayout(folder));
    const result = await checkCard(folder, {
      recursive,
      sequence: v.sequence ?? null,
      allPairs: v['all-pairs'],
      maxSide: settings.size,
      threads: settings.threads ?? commandLineThreads(),
      prefer: settings.prefer,
      cache: v['no-cache'] ? null : createFeatureCache(),
      onProgress: stream.onProgress,
      onPair: stream.onPair,
      onRunDone: stream.onRunDone,
    });
    const report = judge(result.analysis, budget);
    stream.end(report.verdict);
    return { report, tiePoints: result.tiePoints, shown: stream.shown };
  } catch (err) {
    stream.end(null);
    process.stderr.write(`seamscout: ${forTerminal((err as Error).message)}\n`);
    return null;
  }
}

/** Each output asked for, written; false when one could not be (a coverage map that cannot be drawn is only a note). */
async function writeOutputs(v: CheckValues, report: Report, tiePoints: CardResult['tiePoints'], folder: string): Promise<boolean> {
  const outputs: [string | undefined, () => string | Promise<string | Uint8Array>][] = [
    [v.json, () => exportContent(report, 'json').text],
    [v.graphml, () => exportContent(report, 'graphml').text],
    [v.csv, () => exportContent(report, 'csv').text],
    [v.dot, () => exportContent(report, 'dot').text],
    [v['tie-points'], () => tiePointsToCsv(tiePoints, report)],
  ];
  // The coverage map is of one sequence: on a card of several, one file each, numbered.
  const sequences = report.sequences ?? [];
  if (v['coverage-map'] && sequences.length > 1) {
    const path = v['coverage-map'];
    const dot = path.lastIndexOf('.');
    for (const q of sequences) outputs.push([`${path.slice(0, dot)}-${q.index}${path.slice(dot)}`, () => coverageMapContent(sequenceReport(report, q.index), coverageMapFormat(path))]);
  } else outputs.push([v['coverage-map'], () => coverageMapContent(report, coverageMapFormat(v['coverage-map']!))]);
  let failed = false;
  for (const [path, make] of outputs) {
    if (!path) continue;
    try {
      await writeFileAtomic(resolve(path), await make(), { overwrite: v.force ?? false, outside: folder });
      process.stderr.write(`wrote ${forTerminal(path)}\n`);
    } catch (err) {
      if (err instanceof NoCoverageMap) {
        // A set that could not be placed (no focal length, no pair between stations) is answered by
        // the check's verdict; the missing map is a note, not a failure of the command.
        process.stderr.write(`note: ${forTerminal(path)} not written: ${err.message.replace(/^no coverage map: /, '')}\n`);
        continue;
      }
      process.stderr.write(`seamscout: ${forTerminal((err as Error).message)}\n`);
      failed = true;
    }
  }
  return !failed;
}

export async function checkCommand(args: string[], deps: CheckCommandDeps = {}): Promise<number> {
  let parsed;
  try {
    parsed = parseCheckArgs(args);
  } catch (err) {
    process.stderr.write(`seamscout: ${forTerminal(plainArgumentError(err, 'check', args))}\n`);
    return 2;
  }
  const { values: v, positionals } = parsed;
  if (v.help) {
    process.stdout.write(checkUsage);
    return 0;
  }
  if (positionals.length > 1) {
    process.stderr.write(`Expected at most one folder for check but received ${positionals.length}\n\n${checkUsage}`);
    return 2;
  }
  let settings: CheckSettings;
  try {
    settings = await readCheckSettings(v);
  } catch (err) {
    process.stderr.write(`seamscout: ${forTerminal((err as Error).message)}\n`);
    return 2;
  }
  process.stderr.write(settings.settingsNote);

  const folder = await checkedFolder(positionals, deps);
  if (folder === null) return 2;
  if (!(await outputsWritable(v, folder))) return 2;
  const checked = await checkAndJudge(v, settings, folder);
  if (!checked) return 2;
  const { report } = checked;
  if (report.frames.length === 0 && report.skipped.length === 0) {
    // Nothing was checked: no verdict to give, nothing to write.
    process.stderr.write(`seamscout: no image files in ${forTerminal(folder)}\n`);
    return 2;
  }
  process.stdout.write(formatSummary(report, checked.shown));
  if (!(await writeOutputs(v, report, checked.tiePoints, folder))) return 2;
  return report.verdict === 'ok' ? 0 : 1;
}
