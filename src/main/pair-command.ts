import { basename, dirname } from 'node:path';
import { parseArgs } from 'node:util';
import { budgetFromTyped } from '../core/sequence/budget.js';
import { multiply, normalise, invert } from '../core/geometry/homography.js';
import type { Analysis } from '../core/sequence/report.js';
import { analysisToFull } from '../core/image/resolution.js';
import { judge } from '../core/sequence/verdicts.js';
import { plainArgumentError, plainFileError } from './argument-words.js';
import { defaultMaxSide } from './check.js';
import { readFrameExif } from './exif.js';
import type { FrameAnalysis } from '../core/pair/pair-analysis.js';
import { analyseFrameFile, analysePair } from './frame-analysis.js';
import { readSettingsFile, settingsBudget } from './settings.js';
import { forTerminal } from './summary.js';

export const pairUsage = `Usage: seamscout pair <frameA> <frameB> [options]

Matches two frames as the check matches neighbouring stations (same analysis, same inliers) and
judges them against the match budget as a neighbour pair: matches, inliers, overlap, EV difference,
the fit's error and the verdict (ok, weak or reshoot) with its reasons.

Options:
  --size N                 longest side of the analysis image in px (default ${defaultMaxSide}, as the check)
  --settings FILE          settings file for the match budget (default: the user settings file, if present)
  --help                   this text

Exit status: 0 ok; 1 weak or reshoot (no model found is reshoot); 2 a usage error or a frame that
cannot be read.
`;

export async function pairCommand(args: string[]): Promise<number> {
  let parsed;
  try {
    parsed = parseArgs({ args, allowPositionals: true, options: { size: { type: 'string' }, settings: { type: 'string' }, help: { type: 'boolean' } } });
  } catch (err) {
    process.stderr.write(`seamscout: ${forTerminal(plainArgumentError(err, 'pair', args))}\n`);
    return 2;
  }
  const { values, positionals } = parsed;
  if (values.help) {
    process.stdout.write(pairUsage);
    return 0;
  }
  if (positionals.length !== 2) {
    process.stderr.write(`Expected two frames for pair but received ${positionals.length}\n\n${pairUsage}`);
    return 2;
  }
  const size = values.size === undefined ? defaultMaxSide : Number(values.size);
  if (!Number.isInteger(size) || size < 64) {
    process.stderr.write(`seamscout: Expected a whole number of pixels (64 or more) for --size but received ${forTerminal(values.size ?? '')}\n`);
    return 2;
  }
  let budget;
  try {
    const { settings, file } = await readSettingsFile(values.settings);
    budget = budgetFromTyped(settingsBudget(settings, file ?? ''));
  } catch (err) {
    process.stderr.write(`seamscout: ${forTerminal((err as Error).message)}\n`);
    return 2;
  }
  const [pa, pb] = positionals;
  const frame = (path: string): Promise<FrameAnalysis> =>
    analyseFrameFile(path, size).catch((err: unknown) => {
      throw new Error(plainFileError(err, path, 'an image file', 'pair'), { cause: err });
    });
  const [a, b] = await Promise.all([frame(pa), frame(pb)]);
  const [ea, eb] = await Promise.all([readFrameExif(pa), readFrameExif(pb)]);
  // The check's own measurement of a pair between stations.
  const r = analysePair(a, b, { retryAtFullSize: true, overlapBlocks: true });

  const [na, nb] = [basename(pa), basename(pb) === basename(pa) ? pb : basename(pb)];
  const toFull = (f: FrameAnalysis): Float64Array => analysisToFull(f.fullWidth, f.fullHeight, f.image.width, f.image.height);
  const scale = a.fullWidth / a.image.width;
  const h = r.homography ? normalise(multiply(multiply(toFull(b), Float64Array.from(r.homography)), invert(toFull(a))!)) : null;
  const analysis: Analysis = {
    folder: dirname(pa),
    frames: [[na, a, ea], [nb, b, eb]].map(([file, f, e]) => {
      const fr = f as FrameAnalysis, ex = e as typeof ea;
      return { file: file as string, width: fr.fullWidth, height: fr.fullHeight, captureTime: ex.captureTime, settings: ex.settings, sharpness: fr.sharpness, keypoints: fr.features.keypoints.count };
    }),
    stations: [na, nb].map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
    pairs: [{
      a: na, b: nb, kind: 'neighbour', matches: r.matches, inliers: r.inliers, matchesInOverlap: r.matchesInOverlap, overlap: r.overlap,
      homography: h ? Array.from(h) : null, evDiff: r.evDiff, rmsError: r.rmsError === null ? null : r.rmsError * scale, shiftPx: null,
      moved: r.moved?.map((m) => ({ x: m.x * scale, y: m.y * scale, width: m.width * scale, height: m.height * scale })) ?? null,
      misfit: r.misfit, parallax: r.parallax, sharpnessRatio: r.sharpness?.ratio ?? null,
    }],
    skipped: [],
    sweepDeg: null,
    geometry: null,
  };
  const p = judge(analysis, budget).pairs[0];
  const pct = (v: number | null): string => (v === null ? 'n/a' : `${(100 * v).toFixed(1)} %`);
  const lines = [
    `${forTerminal(na)} -> ${forTerminal(nb)}`,
    `  matches     ${r.matches}`,
    `  inliers     ${r.inliers}`,
    `  overlap     ${pct(r.overlap)}`,
    `  EV change   ${r.evDiff !== null ? `${r.evDiff >= 0 ? '+' : ''}${r.evDiff.toFixed(2)} EV (${forTerminal(nb)} ${r.evDiff >= 0 ? 'brighter' : 'darker'})` : 'n/a'}`,
    `  RMS error   ${r.rmsError === null ? 'n/a' : `${(r.rmsError * scale).toFixed(2)} px at full resolution`}`,
    `  result      ${r.homography ? 'matched' : `no model (${r.noModel})`}`,
    `  verdict     ${p.verdict}${p.reasons.length ? ` (${p.reasons.join(', ')})` : ''}`,
    ...p.advice.map((s) => `  - ${forTerminal(s)}`),
  ];
  process.stdout.write(lines.join('\n') + '\n');
  return p.verdict === 'ok' ? 0 : 1;
}
