import sharp from 'sharp';
import { coverageMapSvg } from '../core/sequence/coverage-map.js';
import type { Report } from '../core/sequence/report.js';

export type CoverageMapFormat = 'svg' | 'png';

/** The format a coverage map file name asks for, by its ending. */
export function coverageMapFormat(path: string): CoverageMapFormat {
  const m = /\.(svg|png)$/i.exec(path);
  if (!m) throw new TypeError(`Expected a file name ending in .svg or .png for --coverage-map but received ${path}`);
  return m[1].toLowerCase() as CoverageMapFormat;
}

/** No coverage map can be drawn: the frames could not be placed. */
export class NoCoverageMap extends Error {}
export const noCoverageMapText = 'no coverage map: the frames could not be placed (no pair between stations matched, or no focal length could be had)';

/** The coverage map of a report as SVG text or PNG bytes (sharp rasterises the SVG). */
export async function coverageMapContent(report: Report, format: CoverageMapFormat): Promise<string | Uint8Array> {
  const svg = coverageMapSvg(report);
  if (svg === null) throw new NoCoverageMap(noCoverageMapText);
  if (format === 'svg') return svg;
  return new Uint8Array(await sharp(Buffer.from(svg), { density: 144 }).png().toBuffer());
}
