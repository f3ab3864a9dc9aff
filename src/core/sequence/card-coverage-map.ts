/**
 * The coverage map of a card: one map per sequence, stacked in one SVG under a line naming the
 * sequence, since each sequence turns about its own place. A report of one sequence gives its map
 * as it is.
 */
import { coverageMapSvg } from './coverage-map.js';
import type { Report } from './report.js';
import { sequenceReport } from './sequence-report.js';

const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

/** Height of the line naming each sequence, px. */
const headingPx = 22;

export function cardCoverageMapSvg(report: Report, scale = 2): string | null {
  const sequences = report.sequences ?? [];
  if (sequences.length <= 1) return coverageMapSvg(report, scale);
  const parts: string[] = [];
  let y = 0, width = 0;
  for (const q of sequences) {
    const svg = coverageMapSvg(sequenceReport(report, q.index), scale);
    const heading = `Sequence ${q.index} of ${sequences.length}: ${q.firstFile} to ${q.lastFile}`;
    parts.push(`<text x="4" y="${y + 16}" font-size="13" font-weight="bold">${esc(heading)}${svg ? '' : ': its frames could not be placed'}</text>`);
    y += headingPx;
    if (!svg) continue;
    const w = Number(/width="([\d.]+)"/.exec(svg)![1]), h = Number(/height="([\d.]+)"/.exec(svg)![1]);
    // Each map's ids (patterns, clip paths) made its own, so that one map never draws with another's.
    const own = svg.replace(/id="([^"]+)"/g, `id="$1-${q.index}"`).replace(/url\(#([^)]+)\)/g, `url(#$1-${q.index})`);
    parts.push(own.replace('<svg ', `<svg x="0" y="${y}" `));
    y += h;
    width = Math.max(width, w);
  }
  if (width === 0) return null;
  return [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${y}" viewBox="0 0 ${width} ${y}" font-family="sans-serif">`,
    `<rect x="0" y="0" width="${width}" height="${y}" fill="#ffffff"/>`,
    ...parts,
    '</svg>',
    '',
  ].join('\n');
}
