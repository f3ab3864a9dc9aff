// The coverage map beside the strip: the same SVG the export writes (core/coverage-map.ts), parsed
// as SVG (no HTML parsing, no script), with a sentence for screen readers.
import { coverageMap, coverageMapSvg, holeShare } from '../core/coverage-map.js';
import type { Report } from '../core/report.js';
import { el } from './dom.js';

/** The coverage section, or null when the frames could not be placed. */
export function renderCoverage(report: Report): HTMLElement | null {
  const svg = coverageMapSvg(report);
  const map = coverageMap(report);
  if (svg === null || map === null) return null;
  const parsed = new DOMParser().parseFromString(svg, 'image/svg+xml').documentElement;
  const image = document.importNode(parsed, true) as unknown as SVGSVGElement;
  image.removeAttribute('width');
  image.removeAttribute('height');
  image.setAttribute('class', 'coverage-map');
  image.setAttribute('role', 'img');
  const share = holeShare(map);
  const words = map.holes.length === 0 ? 'every direction in the shot band is covered' : `about ${Math.max(1, Math.round(100 * share))} % of the shot band is not covered (hatched)`;
  image.setAttribute('aria-label', `Coverage map: ${words}`);
  const notes = (report.coverageNotes ?? []).map((n) => el('p', { class: 'coverage-note', 'data-note': n.pole }, `Note: ${n.text}.`));
  return el('section', { class: 'coverage', 'aria-label': 'Coverage', 'data-holes': map.holes.length }, el('h2', {}, 'Coverage'), el('p', { class: 'coverage-words' }, `On the sphere around the camera, ${words}.`), image, notes);
}
