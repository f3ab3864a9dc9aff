// The coverage map beside the strip: the same SVG the export writes (core/sequence/coverage-map.ts), parsed
// as SVG (no HTML parsing, no script), with a sentence for screen readers.
import type { LinkMark } from '../core/sequence/coverage-map.js';
import { coverageMap, coverageMapSvg, holeShare, linkMarks } from '../core/sequence/coverage-map.js';
import type { Report } from '../core/sequence/report.js';
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
  const marks = [
    ...(report.holes ?? []).filter((h) => h.verdict !== 'ok').map((h) => el('li', { 'data-mark': 'hole', 'data-verdict': h.verdict }, `${h.verdict === 'reshoot' ? 'Reshoot' : 'Weak'}: ${holeWhere(h.yawDeg, h.pitchDeg, h.pole)} (dashed outline; the cross is where to aim).`)),
    ...linkMarks(report).map((l) => el('li', { 'data-mark': 'link', 'data-link': `${l.a}|${l.b}`, 'data-verdict': l.verdict }, linkWords(l))),
  ];
  return el(
    'section',
    { class: 'coverage', 'aria-label': 'Coverage', 'data-holes': map.holes.length },
    el('h2', {}, 'Coverage'),
    el('p', { class: 'coverage-words' }, `On the sphere around the camera, ${words}.`),
    marks.length ? el('ul', { class: 'coverage-marks' }, marks) : null,
    image,
    notes,
  );
}

const deg = (v: number): string => `${Math.round(v) || 0}°`;

function holeWhere(yawDeg: number, pitchDeg: number, pole: 'zenith' | 'nadir' | null): string {
  if (pole === 'zenith') return 'the sky straight up is not covered';
  if (pole === 'nadir') return 'the ground straight down is not covered';
  return `a hole at yaw ${deg(yawDeg)}, pitch ${pitchDeg > 0.5 ? '+' : ''}${deg(pitchDeg)}`;
}

/** A marked link in words, with the mark it has on the map. */
function linkWords(l: LinkMark): string {
  const between = `stations ${l.stations[0] + 1} and ${l.stations[1] + 1}`;
  const verdict = l.verdict === 'reshoot' ? 'Reshoot' : 'Weak';
  if (l.code === 'low-overlap') return `${verdict}: ${between} share only ${l.overlap === null ? 'a little' : `${Math.round(100 * l.overlap)} %`} (dashed line between them).`;
  if (l.code === 'no-match') return `${verdict}: ${between} did not match (dotted line between them).`;
  return `${verdict}: the turn does not close between ${between} (dash-dot line between them).`;
}
