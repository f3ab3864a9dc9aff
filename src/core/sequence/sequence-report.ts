/**
 * One sequence of a card as a report of its own, for the views and exports that take one sequence
 * at a time (strip, coverage map, closure). `judge` judges each sequence as if it were alone in a
 * folder, so this report is what checking that sequence alone would give, and judging it again
 * gives it back.
 */
import type { Report, ReportSequence } from './report.js';

/** The card's sequences, or an empty list for a report of one folder checked as one sequence. */
export function cardSequences(report: Report): readonly ReportSequence[] {
  return report.sequences ?? [];
}

/**
 * The report of sequence `index` (its `index` field, counting from 1): its own frames, stations,
 * pairs, geometry, holes, verdict and counts. What belongs to the card as a whole stays with the
 * card: files not checked, RAW+JPEG twins, folder problems and single shots are left out, as they
 * were when the sequence was judged.
 */
export function sequenceReport(report: Report, index: number): Report {
  const sequences = cardSequences(report);
  const q = sequences.find((s) => s.index === index);
  if (!q) {
    const known = sequences.length ? `a sequence index from ${sequences[0].index} to ${sequences[sequences.length - 1].index}` : 'a report with sequences';
    throw new RangeError(`Expected ${known} for index but received ${JSON.stringify(index)}`);
  }
  return {
    schema: report.schema,
    verdict: q.verdict,
    folder: report.folder,
    budget: report.budget,
    sweepDeg: q.sweepDeg,
    geometry: q.geometry,
    counts: q.counts,
    frames: q.frames,
    stations: q.stations,
    pairs: q.pairs,
    skipped: [],
    rawPlusJpeg: null,
    folderProblems: [],
    holes: q.holes,
    coverageNotes: q.coverageNotes,
    plan: q.plan ?? [],
  };
}
