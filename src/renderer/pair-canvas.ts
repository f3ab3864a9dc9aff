// Both frames of a pair side by side in one SVG, scaled to a common height, with the inlier tie
// points marked on each (joined by a line when lines are on) and the overlap outlined on each.
// Everything is placed in one coordinate system derived from the frames' full-resolution sizes in
// the report, so the drawing stays registered with the images at any displayed size.
import { overlapRegions } from '../core/overlap.js';
import { svg } from './dom.js';

export interface CanvasFrame {
  readonly file: string;
  readonly width: number;
  readonly height: number;
}

export interface PairLayout {
  readonly width: number;
  readonly height: number;
  /** Scale from full-resolution px of a and of b to canvas units, and where b starts. */
  readonly sa: number;
  readonly sb: number;
  readonly bx: number;
}

export function pairLayout(a: CanvasFrame, b: CanvasFrame, height = 1000, gap = 48): PairLayout {
  const sa = height / Math.max(1, a.height);
  const sb = height / Math.max(1, b.height);
  const bx = a.width * sa + gap;
  return { width: bx + b.width * sb, height, sa, sb, bx };
}

export interface PairCanvasOptions {
  /** An SVG image element for a frame at detail size (reused between renders so it does not reload). */
  readonly image: (file: string) => SVGImageElement;
  /** xa, ya, xb, yb per tie point in full-resolution px, or null while not loaded. */
  readonly tiePoints: readonly number[] | null;
  readonly lines: boolean;
}

// Pixel centres are at integers: a w x h frame spans [-0.5, w - 0.5].
const at = (v: number, s: number, offset = 0): number => offset + (v + 0.5) * s;

function polygonPoints(p: readonly number[], s: number, offset: number): string {
  const out: string[] = [];
  for (let i = 0; i + 1 < p.length; i += 2) out.push(`${at(p[i], s, offset).toFixed(1)},${at(p[i + 1], s).toFixed(1)}`);
  return out.join(' ');
}

export function renderPairCanvas(a: CanvasFrame, b: CanvasFrame, homography: readonly number[] | null, opts: PairCanvasOptions): SVGSVGElement {
  const L = pairLayout(a, b);
  const place = (f: CanvasFrame, x: number, s: number, side: 'a' | 'b'): SVGGElement => {
    const img = opts.image(f.file);
    img.setAttribute('x', String(x));
    img.setAttribute('y', '0');
    img.setAttribute('width', String(f.width * s));
    img.setAttribute('height', String(f.height * s));
    img.setAttribute('preserveAspectRatio', 'none');
    return svg('g', { 'data-side': side }, img, svg('rect', { class: 'frame-edge', x, y: 0, width: f.width * s, height: f.height * s }));
  };
  const root = svg(
    'svg',
    { class: 'pair-canvas', viewBox: `0 0 ${L.width.toFixed(1)} ${L.height}`, role: 'img', 'aria-label': `${a.file} and ${b.file} side by side with tie points and overlap` },
    place(a, 0, L.sa, 'a'),
    place(b, L.bx, L.sb, 'b'),
  );
  if (homography) {
    const r = overlapRegions(homography, a.width, a.height, b.width, b.height);
    if (r.inA.length >= 6) root.append(svg('polygon', { class: 'overlap-outline', 'data-overlap': 'a', points: polygonPoints(r.inA, L.sa, 0) }));
    if (r.inB.length >= 6) root.append(svg('polygon', { class: 'overlap-outline', 'data-overlap': 'b', points: polygonPoints(r.inB, L.sb, L.bx) }));
  }
  const t = opts.tiePoints;
  if (t) {
    const n = Math.floor(t.length / 4);
    const ties = svg('g', { class: `ties${opts.lines ? ' with-lines' : ''}`, 'data-ties': n });
    for (let k = 0; k < n; k++) {
      const xa = at(t[4 * k], L.sa), ya = at(t[4 * k + 1], L.sa);
      const xb = at(t[4 * k + 2], L.sb, L.bx), yb = at(t[4 * k + 3], L.sb);
      ties.append(svg(
        'g',
        { class: 'tie', 'data-tie': k },
        opts.lines ? svg('line', { class: 'tie-line', x1: xa.toFixed(1), y1: ya.toFixed(1), x2: xb.toFixed(1), y2: yb.toFixed(1) }) : null,
        svg('circle', { class: 'tie-dot', 'data-side': 'a', cx: xa.toFixed(1), cy: ya.toFixed(1), r: 6 }),
        svg('circle', { class: 'tie-dot', 'data-side': 'b', cx: xb.toFixed(1), cy: yb.toFixed(1), r: 6 }),
      ));
    }
    root.append(ties);
  }
  return root;
}
