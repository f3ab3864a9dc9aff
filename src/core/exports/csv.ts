import type { Report, ReportPair } from '../sequence/report.js';

/**
 * One CSV field per RFC 4180: quoted when it holds a comma, a quote or a line break. Text that a
 * spreadsheet would take for a formula (it begins with =, +, -, @, a tab or a carriage return: a
 * file name such as "=HYPERLINK(...).jpg") gets a leading apostrophe, as the OWASP advice on CSV
 * injection says; a number keeps its sign.
 */
export function csvField(v: unknown): string {
  let s = v === null || v === undefined ? '' : String(v);
  if (/^[=+\-@\t\r]/.test(s) && !(typeof v === 'number' || /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(s))) s = `'${s}`;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function csvRows(rows: readonly (readonly unknown[])[]): string {
  return rows.map((r) => r.map(csvField).join(',')).join('\r\n') + '\r\n';
}

const fixed = (v: number | null | undefined, digits: number): string => (v === null || v === undefined ? '' : v.toFixed(digits));
const yesNo = (v: boolean | null | undefined): string => (v === null || v === undefined ? '' : v ? 'yes' : 'no');

/**
 * One row per pair (RFC 4180, CRLF line ends, header first). Columns added later go after the
 * first fourteen, so that a reader that counts columns keeps working. A card of several sequences
 * adds a last column, `sequence` (its index, from 1); a report of one sequence, or of none, has no
 * such column and reads as before.
 */
export function reportToCsv(report: Report): string {
  const header = [
    'a', 'b', 'kind', 'verdict', 'reasons', 'matches', 'inliers', 'matches_in_overlap', 'overlap', 'ev_diff', 'rms_error_px', 'shift_px', 'homography', 'advice',
    'predicted_overlap', 'sharpness_ratio', 'misfit', 'parallax',
  ];
  const row = (p: ReportPair): unknown[] => [
    p.a, p.b, p.kind, p.verdict, p.reasons.join(' '), p.matches, p.inliers, p.matchesInOverlap,
    p.overlap === null ? '' : p.overlap.toFixed(4),
    p.evDiff === null ? '' : p.evDiff.toFixed(3),
    p.rmsError === null ? '' : p.rmsError.toFixed(3),
    p.shiftPx === null ? '' : p.shiftPx.toFixed(2),
    p.homography === null ? '' : p.homography.map((v) => Number(v.toPrecision(10))).join(' '),
    p.advice.join(' / '),
    fixed(p.predictedOverlap, 4),
    fixed(p.sharpnessRatio, 3),
    fixed(p.misfit, 4),
    yesNo(p.parallax),
  ];
  const several = report.sequences && report.sequences.length > 1 ? report.sequences : null;
  if (!several) return csvRows([header, ...report.pairs.map(row)]);
  return csvRows([[...header, 'sequence'], ...several.flatMap((q) => q.pairs.map((p) => [...row(p), q.index]))]);
}

/**
 * Inlier correspondences at full resolution: a, b, xa, ya, xb, yb. Given the report of a card of
 * several sequences, a last column `sequence` names the sequence of each pair (empty for a pair the
 * report does not list).
 */
export function tiePointsToCsv(sets: readonly { a: string; b: string; points: ArrayLike<number> }[], report?: Report): string {
  const several = report?.sequences && report.sequences.length > 1 ? report.sequences : null;
  const sequenceOf = new Map(several?.flatMap((q) => q.pairs.map((p) => [`${p.a}\n${p.b}`, q.index] as const)) ?? []);
  const rows: unknown[][] = [several ? ['a', 'b', 'xa', 'ya', 'xb', 'yb', 'sequence'] : ['a', 'b', 'xa', 'ya', 'xb', 'yb']];
  for (const s of sets) {
    const tail = several ? [sequenceOf.get(`${s.a}\n${s.b}`) ?? ''] : [];
    for (let k = 0; k + 3 < s.points.length; k += 4) rows.push([s.a, s.b, s.points[k].toFixed(2), s.points[k + 1].toFixed(2), s.points[k + 2].toFixed(2), s.points[k + 3].toFixed(2), ...tail]);
  }
  return csvRows(rows);
}
