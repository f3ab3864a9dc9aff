// The pair detail: both frames with the tie points and the overlap drawn, every measure with the
// budget's limit beside it, the verdict and reasons, and the advice in plain words.
import type { Report, ReportPair } from '../core/sequence/report.js';
import { focalPxFrom35mm } from '../core/geometry/sweep.js';
import { button, el } from './dom.js';
import { evStep, flagMeaning, flagWords, kindWords, percent, pixels } from './format.js';
import { backIcon, verdictBadge } from './icons.js';
import type { CanvasFrame } from './pair-canvas.js';
import { renderPairCanvas, renderPlacedCanvas } from './pair-canvas.js';
import { findPair, pairKey } from './pairs.js';
import { flagList } from './strip-view.js';

export type TiePointState = { readonly state: 'loading' } | { readonly state: 'ready'; readonly points: readonly number[] } | { readonly state: 'failed'; readonly message: string };

export interface DetailContext {
  readonly image: (file: string) => SVGImageElement;
  readonly tiePoints: TiePointState;
  readonly lines: boolean;
  readonly onBack: () => void;
  readonly onToggleLines: () => void;
}

function measure(name: string, label: string, value: string | Node, note: string | null = null): HTMLElement {
  return el('div', { class: 'measure', 'data-measure': name }, el('dt', {}, label), el('dd', {}, el('span', { class: 'numeral' }, value), note ? el('span', { class: 'limit' }, note) : null));
}

/** The measures a verdict rests on: shown first, above the pictures, so they are read without scrolling. */
function keyMeasures(p: ReportPair, report: Report): HTMLElement {
  const b = report.budget;
  const betweenStations = p.kind === 'neighbour' || p.kind === 'closure';
  return el(
    'dl',
    { class: 'measures key-measures' },
    measure('overlap', 'Overlap', p.homography ? percent(p.overlap) : 'none found', betweenStations ? `weak below ${percent(b.weakOverlap)}, reshoot below ${percent(b.reshootOverlap)}` : null),
    measure('inliers', 'Inliers', String(p.inliers), betweenStations ? `at least ${b.minInliers}` : null),
    measure('evDiff', 'EV difference', evStep(p.evDiff), betweenStations ? `within ${evStep(b.maxEvDiff).replace('+', '±')}` : null),
    p.kind === 'bracket' || p.shiftPx !== null ? measure('shiftPx', 'Largest corner shift', pixels(p.shiftPx, 1), p.kind === 'bracket' ? `at most ${b.maxBracketShiftPx} px` : null) : null,
    measure('verdict', 'Verdict', verdictBadge(p.verdict, 28)),
    measure('reasons', 'Reasons', p.reasons.length ? p.reasons.map((r) => `${flagWords(r)} (${flagMeaning[r]})`).join('; ') : 'none'),
  );
}

/** The rest of the evidence: how many matches, how many of them agree, and how well. */
function moreMeasures(p: ReportPair): HTMLElement {
  const share = p.matches > 0 ? p.inliers / p.matches : null;
  return el(
    'dl',
    { class: 'measures more-measures' },
    measure('matches', 'Matches', String(p.matches)),
    measure('inlierShare', 'Inlier share', percent(share)),
    measure('matchesInOverlap', 'Matches inside the overlap', String(p.matchesInOverlap)),
    measure('rmsError', 'RMS error', pixels(p.rmsError, 2)),
  );
}

/**
 * What the drawn tie points are, in words. They are the points the homography is finally fitted
 * to (a's corners in the overlap, each found in b by its appearance), which are not the descriptor
 * matches the inlier count reports, except where that refinement failed and the inliers stand in.
 */
export function tieNote(ties: TiePointState, p: Pick<ReportPair, 'inliers'>): string {
  if (ties.state === 'loading') return 'Loading tie points…';
  if (ties.state === 'failed') return `Tie points could not be loaded: ${ties.message}`;
  const n = Math.floor(ties.points.length / 4);
  if (n === 0) return 'No tie points: the frames did not line up.';
  const what = n === 1 ? 'tie point' : 'tie points';
  if (n === p.inliers) return `${n} ${what} drawn, as many as the inliers: the points the homography is fitted to. The outline is the overlap.`;
  return `${n} ${what} drawn: the points the homography is finally fitted to (the first frame's corners in the overlap, each found in the second by its appearance). They are not the ${p.inliers} inliers, which count the descriptor matches that agree. The outline is the overlap.`;
}

function frameCaption(report: Report, file: string, side: 'a' | 'b'): HTMLElement {
  const f = report.frames.find((x) => x.file === file);
  return el(
    'figcaption',
    { class: 'detail-frame', 'data-side': side },
    el('span', { class: 'frame-name' }, file),
    f && f.verdict !== 'ok' ? verdictBadge(f.verdict, 20) : null,
    f ? flagList(f.flags) : null,
  );
}

function canvasFrame(report: Report, file: string): CanvasFrame {
  const f = report.frames.find((x) => x.file === file);
  // Unknown sizes (never in a whole report) fall back to 3:2 so the layout still stands.
  return f && f.width > 0 && f.height > 0 ? { file, width: f.width, height: f.height } : { file, width: 1500, height: 1000 };
}

/** The focal length in full-resolution px: the sequence's, else the frame's EXIF 35 mm equivalent, else null. */
function focalOf(report: Report, f: CanvasFrame): number | null {
  if (report.geometry) return report.geometry.focalPx;
  const f35 = report.frames.find((x) => x.file === f.file)?.settings.focalLength35;
  return f35 ? focalPxFrom35mm(f35, f.width, f.height) : null;
}

export function renderDetail(report: Report, key: string, ctx: DetailContext): HTMLElement {
  const p = findPair(report, key);
  if (!p) return el('section', { class: 'detail', 'data-detail': '', 'data-pair': key }, el('p', {}, 'This pair is not in the report.'), button({ class: 'back' }, ctx.onBack, backIcon(), 'Back'));
  const ties = ctx.tiePoints;
  const fa = canvasFrame(report, p.a), fb = canvasFrame(report, p.b);
  const canvas = renderPairCanvas(fa, fb, p.homography, { image: ctx.image, tiePoints: ties.state === 'ready' ? ties.points : null, lines: ctx.lines });
  const placed = p.homography ? renderPlacedCanvas(fa, fb, p.homography, { href: (file) => ctx.image(file).getAttribute('href'), focalPx: focalOf(report, fa) }) : null;
  const placedWords = placed
    ? `${p.b} placed on ${p.a} through the pair's homography: ${p.a} has the solid edge, ${p.b} the dashed one; the hatched part with the bright outline is what both frames see.`
    : 'No homography: the frames could not be placed in one view.';
  return el(
    'section',
    { class: `detail detail-${p.verdict}`, 'data-detail': '', 'data-pair': pairKey(p), 'data-kind': p.kind, 'data-verdict': p.verdict, 'aria-label': `Pair ${p.a} and ${p.b}` },
    el(
      'header',
      { class: 'detail-head' },
      button({ class: 'back', 'aria-keyshortcuts': 'Escape' }, ctx.onBack, backIcon(), 'Back to the strip (Esc)'),
      el('h2', {}, `${p.a} → ${p.b}`),
      el('span', { class: 'kind' }, kindWords[p.kind]),
      verdictBadge(p.verdict, 32),
    ),
    keyMeasures(p, report),
    el('figure', { class: 'placed-figure', 'data-placed': placed ? 'drawn' : 'none' }, placed, el('figcaption', { class: 'placed-words' }, placedWords)),
    el(
      'div',
      { class: 'detail-body' },
      el(
        'div',
        { class: 'detail-advice', 'data-advice': p.advice.length },
        el('h3', {}, 'What to do'),
        p.advice.length ? el('ul', {}, p.advice.map((a) => el('li', {}, a))) : el('p', {}, 'Nothing: this pair is within the match budget.'),
      ),
      moreMeasures(p),
    ),
    el('h3', { class: 'side-by-side-head' }, 'Side by side, with the tie points'),
    el('figure', { class: 'detail-figure' }, canvas, el('div', { class: 'detail-captions' }, frameCaption(report, p.a, 'a'), frameCaption(report, p.b, 'b'))),
    el(
      'div',
      { class: 'detail-tools' },
      el('p', { class: 'tie-note', 'data-tie-note': ties.state, 'data-tie-count': ties.state === 'ready' ? Math.floor(ties.points.length / 4) : null }, tieNote(ties, p)),
      button({ class: 'small', 'aria-pressed': String(ctx.lines), 'data-toggle-lines': '' }, ctx.onToggleLines, ctx.lines ? 'Hide lines' : 'Show lines'),
    ),
  );
}
