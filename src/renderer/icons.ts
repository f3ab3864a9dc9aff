// Our own icons, simple inline SVG shapes. The three verdict shapes differ (circle, diamond,
// square) so the verdict reads without colour; the word is always shown beside them as well.
// Colours: the Okabe-Ito palette (Okabe & Ito, "Color Universal Design", 2002).
import type { Verdict } from '../core/sequence/report.js';
import { el, svg } from './dom.js';
import { verdictWords } from './format.js';

export const verdictColour: Record<Verdict, string> = { ok: '#0072B2', weak: '#E69F00', reshoot: '#D55E00' };
// Glyph colour on the shape, for contrast: white on blue and vermillion, black on orange.
const glyphColour: Record<Verdict, string> = { ok: '#FFFFFF', weak: '#000000', reshoot: '#FFFFFF' };

export function verdictIcon(v: Verdict, size = 24): SVGSVGElement {
  const fill = verdictColour[v];
  const ink = glyphColour[v];
  const common = { fill: 'none', stroke: ink, 'stroke-width': 2.6, 'stroke-linecap': 'round', 'stroke-linejoin': 'round' };
  const shapes: Record<Verdict, () => SVGElement[]> = {
    ok: () => [svg('circle', { cx: 12, cy: 12, r: 10.5, fill }), svg('path', { d: 'M7 12.4l3.3 3.3L17.2 8.8', ...common })],
    weak: () => [
      svg('path', { d: 'M12 1 23 12 12 23 1 12Z', fill }),
      svg('path', { d: 'M12 6.8v6.4', ...common }),
      svg('circle', { cx: 12, cy: 16.9, r: 1.5, fill: ink }),
    ],
    reshoot: () => [svg('rect', { x: 1.5, y: 1.5, width: 21, height: 21, rx: 3, fill }), svg('path', { d: 'M7.6 7.6l8.8 8.8M16.4 7.6l-8.8 8.8', ...common })],
  };
  return svg('svg', { class: `icon icon-${v}`, viewBox: '0 0 24 24', width: size, height: size, 'aria-hidden': 'true', focusable: 'false', 'data-icon': v }, ...shapes[v]());
}

/** Icon and word together: the only way the page shows a verdict. */
export function verdictBadge(v: Verdict, size = 24): HTMLSpanElement {
  return el('span', { class: `badge badge-${v}`, 'data-verdict-badge': v }, verdictIcon(v, size), el('span', { class: 'badge-word' }, verdictWords[v]));
}

/** A half-filled disc: the theme toggle. */
export function themeIcon(): SVGSVGElement {
  return svg(
    'svg',
    { class: 'icon', viewBox: '0 0 24 24', width: 22, height: 22, 'aria-hidden': 'true', focusable: 'false' },
    svg('circle', { cx: 12, cy: 12, r: 9.5, fill: 'none', stroke: 'currentColor', 'stroke-width': 2 }),
    svg('path', { d: 'M12 2.5a9.5 9.5 0 0 1 0 19Z', fill: 'currentColor' }),
  );
}

/** An open tray: folders. */
export function folderIcon(): SVGSVGElement {
  return svg(
    'svg',
    { class: 'icon', viewBox: '0 0 24 24', width: 22, height: 22, 'aria-hidden': 'true', focusable: 'false' },
    svg('path', { d: 'M2.5 6.5h7l2 2.5h10v10.5h-19Z', fill: 'none', stroke: 'currentColor', 'stroke-width': 2, 'stroke-linejoin': 'round' }),
  );
}

/** A left chevron: back. */
export function backIcon(): SVGSVGElement {
  return svg(
    'svg',
    { class: 'icon', viewBox: '0 0 24 24', width: 22, height: 22, 'aria-hidden': 'true', focusable: 'false' },
    svg('path', { d: 'M15 4.5 7.5 12 15 19.5', fill: 'none', stroke: 'currentColor', 'stroke-width': 2.6, 'stroke-linecap': 'round', 'stroke-linejoin': 'round' }),
  );
}
