/**
 * The coverage map: every placed frame's footprint on an equirectangular view of the sphere around
 * the camera (yaw across, pitch up), and the directions inside the shot band no frame sees.
 */
import type { Analysis, CoverageHole, CoverageNote, FlagCode, MatchBudget, PairMeasure, SequenceGeometry, Verdict } from './report.js';
import { cross } from '../geometry/rotations.js';
import { distortionFactor, undistortRadius } from '../geometry/lens.js';

/**
 * What the map is drawn from: the frames' sizes, the stations' reference frames, the geometry, and
 * (from a report or a budget) whether the set is declared a full sphere.
 */
export type MapSource = Pick<Analysis, 'frames' | 'stations' | 'geometry'> & {
  readonly budget?: Pick<MatchBudget, 'fullSphere'> | null;
  /** The pairs, judged (a report's): links between stations flagged for overlap or matching are marked on the map. */
  readonly pairs?: readonly MapLink[];
  /** A report's coverage holes, outlined where they are with where to aim. */
  readonly holes?: readonly CoverageHole[];
};

/** What the map needs of a pair to mark it: its frames, kind, overlap and, once judged, verdict and reasons. */
export type MapLink = Pick<PairMeasure, 'a' | 'b' | 'kind' | 'overlap'> & { readonly verdict?: Verdict; readonly reasons?: readonly FlagCode[] };

type Vec = [number, number, number];


/** A direction of yaw and pitch (degrees) in the level frame: right, down, forward (right-handed, as a camera's x, y, z). */
function directionOf(yawDeg: number, pitchDeg: number): Vec {
  const r = Math.PI / 180;
  return [Math.cos(pitchDeg * r) * Math.sin(yawDeg * r), -Math.sin(pitchDeg * r), Math.cos(pitchDeg * r) * Math.cos(yawDeg * r)];
}

/** Camera axes of a station in the level frame, from its yaw, pitch and roll as stationPoses measures them. */
function axesOf(yawDeg: number, pitchDeg: number, rollDeg: number): { x: Vec; y: Vec; z: Vec } {
  const z = directionOf(yawDeg, pitchDeg);
  // The level right of the view is z x up (up = (0, -1, 0)); the camera's x is that turned by the
  // roll about z, and y = z x x points down the image.
  const ln = Math.hypot(z[2], z[0]) || 1;
  const level: Vec = [z[2] / ln, 0, -z[0] / ln];
  const q = (rollDeg * Math.PI) / 180;
  const zl = cross(z, level);
  const x = [0, 1, 2].map((k) => Math.cos(q) * level[k] + Math.sin(q) * zl[k]) as Vec;
  return { x, y: cross(z, x), z };
}

export interface Footprint {
  readonly station: number;
  /** The frame's border as (yaw, pitch) in degrees, yaw unwrapped along the outline. */
  readonly outline: [number, number][];
  readonly centre: [number, number];
}

/** A run of uncovered map cells in one row: pitch from..to, yaw from..to, degrees. */
export interface HoleRun {
  readonly pitchFromDeg: number;
  readonly pitchToDeg: number;
  readonly yawFromDeg: number;
  readonly yawToDeg: number;
}

export interface CoverageMap {
  readonly footprints: Footprint[];
  readonly holes: HoleRun[];
  /** The band of pitch the frames were aimed over, where an uncovered direction is a hole. */
  readonly band: { readonly fromDeg: number; readonly toDeg: number };
  /** Whether an open zenith or nadir counts as a hole (the set reaches toward it, or a full sphere is declared). */
  readonly poles: { readonly zenith: boolean; readonly nadir: boolean };
  readonly cellDeg: number;
}

interface PlacedCamera {
  readonly station: number;
  readonly width: number;
  readonly height: number;
  readonly axes: { x: Vec; y: Vec; z: Vec };
  /** The sequence's radial distortion (lens.ts), zero for a pinhole. */
  readonly k1: number;
  readonly k2: number;
  /** Squared ideal radius of the frame's corner: beyond it the model may fold back, and the frame sees nothing. */
  readonly cornerIdeal2: number;
}

function lensOf(frame: { width: number; height: number }, g: SequenceGeometry): { k1: number; k2: number; cornerIdeal2: number } {
  const k1 = g.distortion?.k1 ?? 0, k2 = g.distortion?.k2 ?? 0;
  const corner = undistortRadius(Math.hypot(frame.width, frame.height) / (2 * g.focalPx), k1, k2);
  return { k1, k2, cornerIdeal2: Number.isFinite(corner) ? corner * corner * 1.0001 : Infinity };
}

/** The placed stations of a report with their reference frame's size. */
function placedCameras(report: MapSource, g: SequenceGeometry): PlacedCamera[] {
  return g.poses.flatMap((p) => {
    const ref = report.stations[p.station]?.reference;
    const frame = report.frames.find((f) => f.file === ref);
    return frame ? [{ station: p.station, width: frame.width, height: frame.height, axes: axesOf(p.yawDeg, p.pitchDeg, p.rollDeg), ...lensOf(frame, g) }] : [];
  });
}

function direction(c: PlacedCamera, f: number, u: number, v: number): Vec {
  const ad = (u - (c.width - 1) / 2) / f, bd = (v - (c.height - 1) / 2) / f;
  // Through the lens: the pixel's ideal position (a lens that folds back keeps the pixel's own).
  const rd = Math.hypot(ad, bd), ru = undistortRadius(rd, c.k1, c.k2);
  const s = rd > 0 && Number.isFinite(ru) ? ru / rd : 1;
  const a = ad * s, b = bd * s;
  return [0, 1, 2].map((k) => a * c.axes.x[k] + b * c.axes.y[k] + c.axes.z[k]) as Vec;
}

function angles(d: Vec): [number, number] {
  const n = Math.hypot(d[0], d[1], d[2]);
  return [(Math.atan2(d[0], d[2]) * 180) / Math.PI, (Math.asin(-d[1] / n) * 180) / Math.PI];
}

function sees(c: PlacedCamera, f: number, d: Vec): boolean {
  const z = d[0] * c.axes.z[0] + d[1] * c.axes.z[1] + d[2] * c.axes.z[2];
  if (z <= 0) return false;
  const xu = (d[0] * c.axes.x[0] + d[1] * c.axes.x[1] + d[2] * c.axes.x[2]) / z, yu = (d[0] * c.axes.y[0] + d[1] * c.axes.y[1] + d[2] * c.axes.y[2]) / z;
  const r2 = xu * xu + yu * yu;
  if (r2 > c.cornerIdeal2) return false;
  const g = distortionFactor(r2, c.k1, c.k2);
  const u = f * xu * g + (c.width - 1) / 2;
  const v = f * yu * g + (c.height - 1) / 2;
  return u >= -0.5 && u <= c.width - 0.5 && v >= -0.5 && v <= c.height - 0.5;
}

/**
 * A frame aimed above this pitch reaches toward the zenith (below its negative, toward the nadir).
 * Common practice: a set meant to cover the sphere has a row at about 60 degrees or more before the
 * pole frame; a set whose frames all stay lower is not meant to cover the pole, unless it says so.
 */
export const poleReachDeg = 60;
/** Hand-held, a row aimed at a pitch comes out a degree or two either side of it (common practice). */
const poleReachSlackDeg = 2;

interface Band {
  readonly fromDeg: number;
  readonly toDeg: number;
  /** Whether an open zenith or nadir counts as a hole: the set reaches toward it, or a full sphere is declared. */
  readonly zenith: boolean;
  readonly nadir: boolean;
}

/**
 * The band of pitch the frames were aimed over, where an uncovered direction is a hole: from the
 * lowest to the highest frame centre, widened by 80 % of half a frame's height, so the notches where
 * frames of one row meet at their corners do not count; up to a pole when a frame reaches toward it
 * (a centre beyond `poleReachDeg`) or the set is declared a full sphere.
 */
function shotBand(cams: readonly PlacedCamera[], f: number, fullSphere: boolean): Band {
  const halfV = Math.max(...cams.map((c) => (Math.atan(c.height / (2 * f)) * 180) / Math.PI));
  const pitches = cams.map((c) => angles(c.axes.z)[1]);
  const top = Math.max(...pitches), bottom = Math.min(...pitches);
  const zenith = fullSphere || top >= poleReachDeg - poleReachSlackDeg;
  const nadir = fullSphere || bottom <= -(poleReachDeg - poleReachSlackDeg);
  return {
    fromDeg: nadir ? -90 : Math.max(-90, bottom - 0.8 * halfV),
    toDeg: zenith ? 90 : Math.min(90, top + 0.8 * halfV),
    zenith,
    nadir,
  };
}

const fullSphereOf = (source: MapSource): boolean => source.budget?.fullSphere === true;

/**
 * Which cells of the whole sphere no frame sees: row r spans pitch -90 + r c to -90 + (r + 1) c,
 * column q yaw -180 + q c to -180 + (q + 1) c, judged at the cell's middle.
 */
function openCells(cams: readonly PlacedCamera[], f: number, c: number): Uint8Array {
  const cols = Math.round(360 / c), rowsN = Math.round(180 / c);
  const open = new Uint8Array(cols * rowsN);
  const ranges = cams.map((cam) => pitchRange(cam, f));
  for (let r = 0; r < rowsN; r++) {
    const pm = -90 + (r + 0.5) * c;
    // Only the frames whose pitch range holds this row of cells can see it.
    const here = cams.filter((_, k) => ranges[k][0] <= pm && pm <= ranges[k][1]);
    for (let q = 0; q < cols; q++) {
      const d = directionOf(-180 + (q + 0.5) * c, pm);
      open[r * cols + q] = here.some((cam) => sees(cam, f, d)) ? 0 : 1;
    }
  }
  return open;
}

/**
 * The pitch a frame spans: its extremes lie on its border unless it sees a pole (pitch has no other
 * extreme inside the frame), sampled along the border and widened by a degree for the samples' spacing.
 */
function pitchRange(cam: PlacedCamera, f: number): [number, number] {
  let lo = Infinity, hi = -Infinity;
  const W = cam.width - 0.5, H = cam.height - 0.5, steps = 32;
  for (let k = 0; k <= steps; k++) {
    const t = k / steps;
    for (const [u, v] of [[-0.5 + t * (W + 0.5), -0.5], [-0.5 + t * (W + 0.5), H], [-0.5, -0.5 + t * (H + 0.5)], [W, -0.5 + t * (H + 0.5)]]) {
      const p = angles(direction(cam, f, u, v))[1];
      lo = Math.min(lo, p);
      hi = Math.max(hi, p);
    }
  }
  if (sees(cam, f, [0, -1, 0])) hi = 90;
  if (sees(cam, f, [0, 1, 0])) lo = -90;
  return [lo - 1, hi + 1];
}

// Open cells already found, by geometry and cell size (re-judging with another budget keeps the geometry).
const opened = new WeakMap<SequenceGeometry, Map<number, Uint8Array>>();

function openCellsOf(report: MapSource, g: SequenceGeometry, cams: readonly PlacedCamera[], c: number): Uint8Array {
  const cached = opened.get(g)?.get(c);
  if (cached) return cached;
  const open = openCells(cams, g.focalPx, c);
  if (!opened.has(g)) opened.set(g, new Map());
  opened.get(g)!.set(c, open);
  return open;
}

// Maps already drawn, by geometry (re-judging with another budget keeps the geometry).
const drawn = new WeakMap<SequenceGeometry, Map<string, CoverageMap | null>>();

/**
 * Footprints and holes of a report's geometry, on a grid of `cellDeg`. Holes count inside the shot
 * band (see shotBand); the poles only when the set reaches toward them or its budget declares a
 * full sphere.
 */
export function coverageMap(report: MapSource, cellDeg = 1): CoverageMap | null {
  const g = report.geometry;
  if (!g || g.poses.length === 0) return null;
  const key = `${cellDeg}:${fullSphereOf(report)}`;
  const cached = drawn.get(g)?.get(key);
  if (cached !== undefined) return cached;
  const map = drawMap(report, g, cellDeg);
  if (!drawn.has(g)) drawn.set(g, new Map());
  drawn.get(g)!.set(key, map);
  return map;
}

function drawMap(report: MapSource, g: SequenceGeometry, cellDeg: number): CoverageMap | null {
  const cams = placedCameras(report, g);
  if (cams.length === 0) return null;
  const f = g.focalPx;
  const footprints: Footprint[] = cams.map((c) => {
    const border: [number, number][] = [];
    const steps = 24;
    const edge = (u0: number, v0: number, u1: number, v1: number): void => {
      for (let k = 0; k < steps; k++) border.push([u0 + ((u1 - u0) * k) / steps, v0 + ((v1 - v0) * k) / steps]);
    };
    const W = c.width - 0.5, H = c.height - 0.5;
    edge(-0.5, -0.5, W, -0.5);
    edge(W, -0.5, W, H);
    edge(W, H, -0.5, H);
    edge(-0.5, H, -0.5, -0.5);
    const outline: [number, number][] = [];
    for (const [u, v] of border) {
      const [yaw0, pitch] = angles(direction(c, f, u, v));
      let yaw = yaw0;
      if (outline.length) {
        const prev = outline[outline.length - 1][0];
        while (yaw - prev > 180) yaw -= 360;
        while (yaw - prev < -180) yaw += 360;
      }
      outline.push([yaw, pitch]);
    }
    return { station: c.station, outline, centre: angles(c.axes.z) };
  });

  const band = shotBand(cams, f, fullSphereOf(report));
  const open = openCellsOf(report, g, cams, cellDeg);
  const cols = Math.round(360 / cellDeg), rowsN = Math.round(180 / cellDeg);
  const holes: HoleRun[] = [];
  for (let r = 0; r < rowsN; r++) {
    const pc = -90 + r * cellDeg, pm = pc + cellDeg / 2;
    if (pm < band.fromDeg || pm > band.toDeg) continue;
    let runStart: number | null = null;
    for (let q = 0; q <= cols; q++) {
      const isOpen = q < cols && open[r * cols + q] === 1;
      if (isOpen && runStart === null) runStart = q;
      if (!isOpen && runStart !== null) {
        holes.push({ pitchFromDeg: pc, pitchToDeg: pc + cellDeg, yawFromDeg: -180 + runStart * cellDeg, yawToDeg: -180 + q * cellDeg });
        runStart = null;
      }
    }
  }
  return { footprints, holes, band: { fromDeg: band.fromDeg, toDeg: band.toDeg }, poles: { zenith: band.zenith, nadir: band.nadir }, cellDeg };
}

/** Degrees of the band left uncovered (area-weighted by cos pitch, so a pole cap is not overstated), as a share of the band. */
export function holeShare(map: CoverageMap): number {
  const w = (p: number): number => Math.cos((p * Math.PI) / 180);
  let open = 0, all = 0;
  for (let p = -90; p < 90; p += map.cellDeg) {
    const pm = p + map.cellDeg / 2;
    if (pm >= map.band.fromDeg && pm <= map.band.toDeg) all += 360 * w(pm);
  }
  for (const h of map.holes) open += (h.yawToDeg - h.yawFromDeg) * w((h.pitchFromDeg + h.pitchToDeg) / 2);
  return all > 0 ? open / all : 0;
}

const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

/** Okabe & Ito's colours for the two warning verdicts ("Color Universal Design", 2002), as the app uses them. */
const warningColour: Record<Exclude<Verdict, 'ok'>, string> = { weak: '#E69F00', reshoot: '#D55E00' };

/** Why a link between stations is marked, most telling first; each has its own dash pattern and words. */
const linkCodes = ['no-match', 'no-closure', 'low-overlap'] as const;
export type LinkMarkCode = (typeof linkCodes)[number];
const linkDash: Record<LinkMarkCode, string> = { 'no-match': '2 5', 'no-closure': '12 4 2 4', 'low-overlap': '9 5' };
const linkLegend: Record<LinkMarkCode, string> = {
  'no-match': 'link that did not match (dotted)',
  'no-closure': 'turn that does not close (dash-dot)',
  'low-overlap': 'link with too little overlap (dashed, its overlap beside it)',
};

/** A link between two placed stations that the verdicts flag for its overlap or its match. */
export interface LinkMark {
  readonly a: string;
  readonly b: string;
  /** Stations (counting from 0) of a and b. */
  readonly stations: readonly [number, number];
  readonly code: LinkMarkCode;
  readonly verdict: Exclude<Verdict, 'ok'>;
  readonly overlap: number | null;
  /** The stations' centres, yaw and pitch in degrees, b's yaw unwrapped to lie within 180 degrees of a's. */
  readonly from: readonly [number, number];
  readonly to: readonly [number, number];
}

/**
 * The neighbour and closure links a judged report flags for low overlap, no match or no closure,
 * between stations the map places; a link with a station not placed has nowhere to be drawn.
 */
export function linkMarks(source: MapSource): LinkMark[] {
  const map = coverageMap(source);
  if (!map) return [];
  const centre = new Map(map.footprints.map((fp) => [fp.station, fp.centre]));
  const stationOf = (file: string): number | undefined => source.stations.find((st) => st.frames.includes(file))?.index;
  const marks: LinkMark[] = [];
  for (const p of source.pairs ?? []) {
    if ((p.kind !== 'neighbour' && p.kind !== 'closure') || !p.verdict || p.verdict === 'ok') continue;
    const code = linkCodes.find((c) => p.reasons?.includes(c));
    const sa = stationOf(p.a), sb = stationOf(p.b);
    if (!code || sa === undefined || sb === undefined) continue;
    const ca = centre.get(sa), cb = centre.get(sb);
    if (!ca || !cb) continue;
    marks.push({ a: p.a, b: p.b, stations: [sa, sb], code, verdict: p.verdict, overlap: p.overlap, from: [ca[0], ca[1]], to: [ca[0] + wrapYaw(cb[0] - ca[0]), cb[1]] });
  }
  return marks;
}

/** Approximate width of a legend text at 11 px sans-serif: wide enough to keep entries apart. */
const textWidth = (t: string): number => 6.2 * t.length;

/**
 * The map as a standalone SVG: 2 px a degree by default, yaw from -180 (left) to 180, pitch 90 at
 * the top. Frames are outlined and numbered by station (counting from 1, as the app does). Problems
 * are marked where they are, each in a warning colour of Okabe & Ito's palette with a second cue
 * and a legend entry in words, never by colour alone: what no frame sees is hatched; a report's
 * coverage holes get a dashed outline and a cross where to aim; a link flagged for low overlap,
 * no match or no closure is a line between its stations' centres, dashed, dotted or dash-dotted,
 * on a dark casing, with its overlap or the words beside it.
 */
export function coverageMapSvg(report: MapSource, scale = 2): string | null {
  const map = coverageMap(report);
  if (!map) return null;
  const plot = plotOf(scale);
  const links = linkMarks(report);
  const holes = report.holes ?? [];
  const { placed, lines } = placeLegend(legendEntries(map, holes, links), plot.W);
  const bottom = 36 + 18 * lines;
  return [
    ...mapBackground(map, report.geometry!, plot, bottom),
    ...holeMarks(holes, plot),
    ...linkLines(links, plot),
    '</g>',
    ...axisAndLegend(placed, plot),
    '</svg>',
  ].join('\n') + '\n';
}

/** The SVG's drawing area: `scale` px a degree, the sphere below a `top` px title line. */
interface Plot {
  readonly scale: number;
  readonly W: number;
  readonly H: number;
  readonly top: number;
  readonly x: (yaw: number) => number;
  readonly y: (pitch: number) => number;
}

function plotOf(scale: number): Plot {
  const W = 360 * scale, H = 180 * scale, top = 28;
  const x = (yaw: number): number => (yaw + 180) * scale;
  const y = (pitch: number): number => top + (90 - pitch) * scale;
  return { scale, W, H, top, x, y };
}

interface LegendEntry {
  readonly swatch: (lx: number, ly: number) => string;
  readonly text: string;
}

/** The legend's entries in words: frames, what is not covered, then each kind of mark the map shows. */
function legendEntries(map: CoverageMap, holes: readonly CoverageHole[], links: readonly LinkMark[]): LegendEntry[] {
  const legend: LegendEntry[] = [
    { swatch: (lx, ly) => `<rect x="${lx}" y="${ly - 10}" width="14" height="12" fill="#0072B2" fill-opacity="0.08" stroke="#0072B2"/>`, text: 'frame (station number)' },
    { swatch: (lx, ly) => `<rect x="${lx}" y="${ly - 10}" width="14" height="12" fill="url(#hole)" stroke="#D55E00"/>`, text: map.holes.length ? 'not covered (hatched)' : 'not covered (none in the shot band)' },
  ];
  for (const v of ['reshoot', 'weak'] as const) {
    const here = holes.filter((h) => h.verdict === v);
    if (here.length === 0) continue;
    legend.push({
      swatch: (lx, ly) => `<rect x="${lx + 1}" y="${ly - 9}" width="12" height="10" fill="none" stroke="${warningColour[v]}" stroke-width="2" stroke-dasharray="4 2"/><path d="M ${lx + 7} ${ly - 8} v 8 M ${lx + 3} ${ly - 4} h 8" stroke="#000000" stroke-width="1.5"/>`,
      text: `hole to fill, ${v === 'reshoot' ? 'reshoot' : 'weak'} (dashed outline; + where to aim)`,
    });
  }
  for (const code of linkCodes) {
    for (const v of ['reshoot', 'weak'] as const) {
      if (!links.some((l) => l.code === code && l.verdict === v)) continue;
      legend.push({
        swatch: (lx, ly) => `<line x1="${lx}" y1="${ly - 4}" x2="${lx + 22}" y2="${ly - 4}" stroke="#000000" stroke-opacity="0.75" stroke-width="6"/><line x1="${lx}" y1="${ly - 4}" x2="${lx + 22}" y2="${ly - 4}" stroke="${warningColour[v]}" stroke-width="3.5" stroke-dasharray="${linkDash[code]}"/>`,
        text: `${linkLegend[code]}, ${v}`,
      });
    }
  }
  return legend;
}

/** The legend's entries flowing onto a further line where one is full; `lines` counts the lines after the first. */
function placeLegend(legend: readonly LegendEntry[], W: number): { placed: { lx: number; line: number; entry: LegendEntry }[]; lines: number } {
  const placed: { lx: number; line: number; entry: LegendEntry }[] = [];
  let lx = 4, line = 0;
  for (const entry of legend) {
    const wide = 28 + textWidth(entry.text) + 18;
    if (lx > 4 && lx + wide > W) {
      lx = 4;
      line++;
    }
    placed.push({ lx, line, entry });
    lx += wide;
  }
  return { placed, lines: line };
}

/** The SVG's head, title line and sphere, then (inside the sphere's clip group, left open) the grid, what no frame sees and the frames. */
function mapBackground(map: CoverageMap, g: SequenceGeometry, plot: Plot, bottom: number): string[] {
  const { scale, W, H, top, x, y } = plot;
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H + top + bottom}" viewBox="0 0 ${W} ${H + top + bottom}" font-family="sans-serif" font-size="11">`);
  parts.push('<title>Seamscout coverage map</title>');
  parts.push('<defs><pattern id="hole" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#fbe3d6"/><line x1="0" y1="0" x2="0" y2="6" stroke="#D55E00" stroke-width="2"/></pattern>');
  parts.push(`<clipPath id="sphere"><rect x="0" y="${top}" width="${W}" height="${H}"/></clipPath></defs>`);
  parts.push(`<rect x="0" y="0" width="${W}" height="${H + top + bottom}" fill="#ffffff"/>`);
  parts.push(`<rect x="0" y="${top}" width="${W}" height="${H}" fill="#f4f4f4" stroke="#999999"/>`);
  parts.push(`<text x="4" y="18">Coverage: ${Math.round(g.horizontalDeg)}° of the horizon, ${Math.round(g.verticalDeg)}° vertically${g.closure ? (g.closure.closes ? '; the turn closes' : '; the turn does not meet itself') : ''}</text>`);
  parts.push('<g clip-path="url(#sphere)">');
  for (let yaw = -150; yaw < 180; yaw += 30) parts.push(`<line x1="${x(yaw)}" y1="${top}" x2="${x(yaw)}" y2="${top + H}" stroke="#dddddd"/>`);
  for (let p = -60; p <= 60; p += 30) parts.push(`<line x1="0" y1="${y(p)}" x2="${W}" y2="${y(p)}" stroke="${p === 0 ? '#bbbbbb' : '#dddddd'}"/>`);
  for (const h of map.holes) {
    parts.push(`<rect class="hole" x="${x(h.yawFromDeg)}" y="${y(h.pitchToDeg)}" width="${(h.yawToDeg - h.yawFromDeg) * scale}" height="${(h.pitchToDeg - h.pitchFromDeg) * scale}" fill="url(#hole)"/>`);
  }
  for (const fp of map.footprints) {
    for (const shift of [-360, 0, 360]) {
      const pts = fp.outline.map(([a, b]) => `${x(a + shift).toFixed(1)},${y(b).toFixed(1)}`).join(' ');
      parts.push(`<polygon class="footprint" data-station="${fp.station}" points="${pts}" fill="#0072B2" fill-opacity="0.08" stroke="#0072B2" stroke-width="1.2"/>`);
    }
    parts.push(`<text x="${x(fp.centre[0]).toFixed(1)}" y="${(y(fp.centre[1]) + 4).toFixed(1)}" text-anchor="middle" fill="#003b5c">${esc(String(fp.station + 1))}</text>`);
  }
  return parts;
}

/** Copies a yaw's width to either side, so a mark across the seam at +-180 degrees shows whole. */
const seamShifts = (yawLo: number, yawHi: number): number[] => [0, ...(yawHi > 180 ? [-360] : []), ...(yawLo < -180 ? [360] : [])];

/** A report's coverage holes: a dashed outline in the verdict's colour and a cross where to aim. */
function holeMarks(holes: readonly CoverageHole[], plot: Plot): string[] {
  const { scale, x, y } = plot;
  const parts: string[] = [];
  for (const h of holes) {
    const colour = warningColour[h.verdict === 'ok' ? 'weak' : h.verdict];
    const width = Math.min(360, h.widthDeg);
    const pTop = h.pole === 'zenith' ? 90 : h.pole === 'nadir' ? -90 + h.heightDeg : h.pitchDeg + h.heightDeg / 2;
    const yawLo = width >= 359 ? -180 : h.yawDeg - width / 2;
    for (const shift of seamShifts(yawLo, yawLo + width)) {
      parts.push(`<rect class="hole-mark" data-verdict="${h.verdict}" x="${x(yawLo + shift).toFixed(1)}" y="${y(pTop).toFixed(1)}" width="${(width * scale).toFixed(1)}" height="${(h.heightDeg * scale).toFixed(1)}" fill="none" stroke="${colour}" stroke-width="2.5" stroke-dasharray="6 3"/>`);
      if (h.pole === null) {
        const ax = x(h.yawDeg + shift), ay = y(h.pitchDeg);
        parts.push(`<path class="aim-mark" d="M ${(ax - 7).toFixed(1)} ${ay.toFixed(1)} h 14 M ${ax.toFixed(1)} ${(ay - 7).toFixed(1)} v 14" stroke="#000000" stroke-width="2"/>`);
      }
    }
  }
  return parts;
}

/** Flagged links: a dashed, dotted or dash-dotted line on a dark casing between the stations' centres, with its words beside it. */
function linkLines(links: readonly LinkMark[], plot: Plot): string[] {
  const { scale, x, y } = plot;
  const parts: string[] = [];
  for (const l of links) {
    const colour = warningColour[l.verdict];
    const words = l.code === 'low-overlap' ? (l.overlap === null ? 'low overlap' : `${Math.round(100 * l.overlap)} %`) : l.code === 'no-match' ? 'no match' : 'no closure';
    // The line stops short of the station numbers at either end.
    const x1 = x(l.from[0]), y1 = y(l.from[1]), x2 = x(l.to[0]), y2 = y(l.to[1]);
    const len = Math.hypot(x2 - x1, y2 - y1) || 1, cut = Math.min(10, len / 4);
    const ux = (x2 - x1) / len, uy = (y2 - y1) / len;
    for (const shift of seamShifts(Math.min(l.from[0], l.to[0]), Math.max(l.from[0], l.to[0]))) {
      const d = shift * scale;
      const a = `x1="${(x1 + ux * cut + d).toFixed(1)}" y1="${(y1 + uy * cut).toFixed(1)}" x2="${(x2 - ux * cut + d).toFixed(1)}" y2="${(y2 - uy * cut).toFixed(1)}"`;
      parts.push(`<line class="link-casing" ${a} stroke="#000000" stroke-opacity="0.75" stroke-width="7"/>`);
      parts.push(`<line class="link-mark" data-link="${esc(`${l.a}|${l.b}`)}" data-code="${l.code}" data-verdict="${l.verdict}" ${a} stroke="${colour}" stroke-width="4.5" stroke-dasharray="${linkDash[l.code]}"/>`);
      parts.push(`<text class="link-words" x="${((x1 + x2) / 2 + d).toFixed(1)}" y="${((y1 + y2) / 2 - 9).toFixed(1)}" text-anchor="middle" font-weight="bold" fill="#000000" stroke="#ffffff" stroke-width="3" paint-order="stroke">${esc(words)}</text>`);
    }
  }
  return parts;
}

/** The yaw labels under the sphere and the placed legend entries. */
function axisAndLegend(placed: readonly { lx: number; line: number; entry: LegendEntry }[], plot: Plot): string[] {
  const { W, H, top, x } = plot;
  const parts: string[] = [];
  for (let yaw = -180; yaw <= 180; yaw += 90) parts.push(`<text x="${Math.min(W - 30, Math.max(2, x(yaw) - 12))}" y="${top + H + 14}" fill="#555555">${yaw}°</text>`);
  for (const { lx: ex, line: el, entry } of placed) {
    const ly = top + H + 30 + 18 * el;
    parts.push(`<g class="legend-entry">${entry.swatch(ex, ly)}<text x="${ex + 28}" y="${ly}">${esc(entry.text)}</text></g>`);
  }
  return parts;
}

/** One connected stretch of uncovered cells (8-neighbours, wrapping in yaw). */
interface HoleRegion {
  readonly cells: number;
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly widthDeg: number;
  readonly heightDeg: number;
  /** The region reaches the top (zenith) or bottom (nadir) row of cells. */
  readonly pole: 'zenith' | 'nadir' | null;
}

/** The set cells of a grid (`cellDeg`, as openCells) as connected regions. */
function regionsOf(mask: Uint8Array, c: number): HoleRegion[] {
  const cols = Math.round(360 / c), rowsN = Math.round(180 / c);
  const seen = new Uint8Array(mask.length);
  const regions: HoleRegion[] = [];
  const stack: number[] = [];
  const cells: number[] = [];
  for (let start = 0; start < mask.length; start++) {
    if (!mask[start] || seen[start]) continue;
    stack.length = 0;
    cells.length = 0;
    stack.push(start);
    seen[start] = 1;
    while (stack.length) {
      const k = stack.pop()!;
      cells.push(k);
      const r = Math.floor(k / cols), q = k % cols;
      for (let dr = -1; dr <= 1; dr++)
        for (let dq = -1; dq <= 1; dq++) {
          const rr = r + dr;
          if (rr < 0 || rr >= rowsN) continue;
          const nk = rr * cols + ((q + dq + cols) % cols);
          if (mask[nk] && !seen[nk]) {
            seen[nk] = 1;
            stack.push(nk);
          }
        }
    }
    // Yaw: circular mean, then the extent unwrapped around it; pitch: plain.
    let sx = 0, sy = 0, pLo = Infinity, pHi = -Infinity;
    for (const k of cells) {
      const yaw = ((k % cols) * c - 180 + c / 2) * (Math.PI / 180);
      sx += Math.cos(yaw);
      sy += Math.sin(yaw);
      const p = Math.floor(k / cols) * c - 90;
      pLo = Math.min(pLo, p);
      pHi = Math.max(pHi, p + c);
    }
    const mid = (Math.atan2(sy, sx) * 180) / Math.PI;
    let yLo = Infinity, yHi = -Infinity;
    for (const k of cells) {
      const d = ((((k % cols) * c - 180 + c / 2 - mid) % 360) + 540) % 360 - 180;
      yLo = Math.min(yLo, d - c / 2);
      yHi = Math.max(yHi, d + c / 2);
    }
    const pole = pHi >= 90 ? 'zenith' : pLo <= -90 ? 'nadir' : null;
    const wraps = yHi - yLo >= 359;
    regions.push({
      cells: cells.length,
      yawDeg: wraps ? 0 : mid + (yLo + yHi) / 2,
      pitchDeg: pole === 'zenith' ? 90 : pole === 'nadir' ? -90 : (pLo + pHi) / 2,
      widthDeg: wraps ? 360 : yHi - yLo,
      heightDeg: pHi - pLo,
      pole,
    });
  }
  return regions;
}

const round = (v: number): number => Math.round(v);
const wrapYaw = (d: number): number => ((((d + 180) % 360) + 360) % 360) - 180;
const signedDeg = (v: number): string => `${round(v) > 0 ? '+' : ''}${round(v) || 0}°`;

/** Samples of yaw along a row's pitch: 0.5 degrees apart, sample k at yaw -180 + (k + 0.5) / 2. */
const sampleDeg = 0.5;
const samples = Math.round(360 / sampleDeg);
const sampleYaw = (k: number): number => -180 + (k + 0.5) * sampleDeg;

/** Which yaws at `pitchDeg` the given frames see. */
function lineCover(cams: readonly PlacedCamera[], f: number, pitchDeg: number): Uint8Array {
  const cover = new Uint8Array(samples);
  for (let k = 0; k < samples; k++) {
    const d = directionOf(sampleYaw(k), pitchDeg);
    cover[k] = cams.some((c) => sees(c, f, d)) ? 1 : 0;
  }
  return cover;
}

/** Runs of unset samples around the circle: [from, to) with to > from, indices taken modulo the samples. */
function openRuns(cover: Uint8Array): [number, number][] {
  const k0 = cover.indexOf(1);
  if (k0 < 0) return [[0, samples]];
  const runs: [number, number][] = [];
  let start = -1;
  for (let k = k0; k <= k0 + samples; k++) {
    const set = k === k0 + samples || cover[k % samples] === 1;
    if (!set && start < 0) start = k;
    if (set && start >= 0) {
      runs.push([start, k]);
      start = -1;
    }
  }
  return runs;
}

/** A camera aimed at a yaw and pitch, level, of a given size: where a frame to fill a hole would go. */
const aimedCamera = (yawDeg: number, pitchDeg: number, width: number, height: number): PlacedCamera => ({ station: -1, width, height, axes: axesOf(yawDeg, pitchDeg, 0), k1: 0, k2: 0, cornerIdeal2: Infinity });

interface Row {
  readonly pitchDeg: number;
  readonly cams: PlacedCamera[];
  readonly cover: Uint8Array;
  /** Degrees of yaw one of its frames spans along the row's pitch. */
  readonly frameDeg: number;
}

/** Holes worth a reshoot and notes worth knowing, as judge puts them in the report. */
export interface CoverageFindings {
  readonly holes: CoverageHole[];
  readonly notes: CoverageNote[];
}

// Findings already made, by geometry and declaration (re-judging with another budget keeps the geometry).
const found = new WeakMap<SequenceGeometry, Map<boolean, CoverageFindings>>();

/**
 * Holes worth a reshoot, with where to aim, and notes. Each row's own frames, along the row's
 * pitch, find its gaps; a gap is a hole where no other frame covers it either, located at the
 * row's pitch and the gap's middle (whether or not the frames either side matched each other).
 * The rest of what no frame sees inside the shot band (bands between rows, a zenith or nadir the
 * set reaches toward or declares) are holes of their own. A single sweep gets no holes unless it
 * is declared a full sphere (its gaps are the pairs' own flags: low-overlap, no-match, no-closure).
 * In a set that does not go all the way round, only what lies within the yaw its rows span counts.
 * An open pole the set neither reaches toward nor declares is a note, not a hole.
 */
export function coverageFindings(source: MapSource): CoverageFindings {
  const g = source.geometry;
  if (!g || g.poses.length === 0) return { holes: [], notes: [] };
  const fullSphere = fullSphereOf(source);
  const cached = found.get(g)?.get(fullSphere);
  if (cached) return cached;
  const result = findHoles(source, g, fullSphere);
  if (!found.has(g)) found.set(g, new Map());
  found.get(g)!.set(fullSphere, result);
  return result;
}

/** The holes of coverageFindings. */
export function coverageHoles(source: MapSource): CoverageHole[] {
  return coverageFindings(source).holes;
}

function findHoles(source: MapSource, g: SequenceGeometry, fullSphere: boolean): CoverageFindings {
  const cams = placedCameras(source, g);
  if (cams.length === 0) return { holes: [], notes: [] };
  const f = g.focalPx;
  const band = shotBand(cams, f, fullSphere);
  const rowList = g.rows?.length ? g.rows : [{ pitchDeg: g.poses.reduce((t, p) => t + p.pitchDeg, 0) / g.poses.length, stations: g.poses.map((p) => p.station) }];
  const multiRow = rowList.length >= 2;
  if (!multiRow && !band.zenith && !band.nadir) return { holes: [], notes: [] };

  const c = 1;
  const open = openCellsOf(source, g, cams, c);
  const rows = rowsOf(rowList, cams, f);
  // The yaw the set spans: what any row covers along its own pitch; all of it when declared a full sphere.
  const span = new Uint8Array(samples);
  for (const r of rows) for (let k = 0; k < samples; k++) span[k] |= r.cover[k];
  const goesRound = fullSphere || span.every((v) => v === 1);

  // Cells a suggested frame would fill: they belong to that hole, not to another.
  const explained = new Uint8Array(open.length);
  const grid: HoleGrid = { open, explained, c, cols: Math.round(360 / c), f };
  const unplaced = new Set(g.unplaced);
  const holes: CoverageHole[] = [];
  for (const row of rows) {
    for (const piece of rowPieces(row, span, goesRound)) {
      const hole = gapHole(row, piece, grid, unplaced);
      if (hole) holes.push(hole);
    }
  }
  holes.push(...bandHoles(rows, grid, band, goesRound));
  // An open pole the set does not reach toward: said once, asking for nothing (sets in rows only;
  // a single sweep plainly leaves both poles).
  const notes = multiRow ? poleNotes(cams, band, open, explained, c) : [];
  return { holes, notes };
}

/** The open cells of the sphere, those a suggested frame already fills, and the grid's cell size. */
interface HoleGrid {
  readonly open: Uint8Array;
  readonly explained: Uint8Array;
  readonly c: number;
  readonly cols: number;
  readonly f: number;
}

/** The rows with placed frames, each with what its frames see along its pitch. */
function rowsOf(rowList: readonly { pitchDeg: number; stations: readonly number[] }[], cams: readonly PlacedCamera[], f: number): Row[] {
  return rowList.flatMap((r) => {
    const rc = cams.filter((cam) => r.stations.includes(cam.station));
    if (rc.length === 0) return [];
    const frameDeg = lineCover([aimedCamera(0, r.pitchDeg, rc[0].width, rc[0].height)], f, r.pitchDeg).reduce((t, v) => t + v, 0) * sampleDeg;
    return [{ pitchDeg: r.pitchDeg, cams: rc, cover: lineCover(rc, f, r.pitchDeg), frameDeg }];
  });
}

/** A stretch of a row's samples no frame of the row sees: a gap between frames, or where the row ends short of the others. */
interface RowPiece {
  readonly from: number;
  readonly to: number;
  readonly end: boolean;
}

/** A row's gaps within the yaw the set spans, and the ends where it stops short of the other rows. */
function rowPieces(row: Row, span: Uint8Array, goesRound: boolean): RowPiece[] {
  const pieces: RowPiece[] = [];
  for (const [from, to] of openRuns(row.cover)) {
    let inside = true;
    for (let k = from; k < to && inside; k++) if (!goesRound && !span[k % samples]) inside = false;
    if (inside) {
      pieces.push({ from, to, end: false });
      continue;
    }
    // Where the row stops short of the other rows: a crop, unless it is a frame's worth.
    let s0 = -1;
    for (let k = from; k <= to; k++) {
      const within = k < to && span[k % samples] === 1;
      if (within && s0 < 0) s0 = k;
      if (!within && s0 >= 0) {
        if ((k - s0) * sampleDeg >= 0.5 * row.frameDeg) pieces.push({ from: s0, to: k, end: true });
        s0 = -1;
      }
    }
  }
  return pieces;
}

/** Marks the open cells not yet explained that the given frames would see; their count and pitch extent. */
function claimCells(grid: HoleGrid, fills: readonly PlacedCamera[]): { cells: number; pLo: number; pHi: number } {
  const { open, explained, c, cols, f } = grid;
  let pLo = Infinity, pHi = -Infinity, cells = 0;
  for (let cell = 0; cell < open.length; cell++) {
    if (!open[cell] || explained[cell]) continue;
    const r = Math.floor(cell / cols);
    const d = directionOf(-180 + ((cell % cols) + 0.5) * c, -90 + (r + 0.5) * c);
    if (!fills.some((cam) => sees(cam, f, d))) continue;
    explained[cell] = 1;
    cells++;
    pLo = Math.min(pLo, -90 + r * c);
    pHi = Math.max(pHi, -90 + (r + 1) * c);
  }
  return { cells, pLo, pHi };
}

/** The row's stations either side of a gap at `midYaw`, and the words for where it is. */
function gapSides(row: Row, midYaw: number, end: boolean): { between: [number, number] | null; where: string; sideStations: number[] } {
  const sides = row.cams.map((cam) => ({ s: cam.station, d: wrapYaw(angles(cam.axes.z)[0] - midYaw) }));
  const left = sides.filter((x) => x.d < 0).sort((a, b) => b.d - a.d)[0];
  const right = sides.filter((x) => x.d >= 0).sort((a, b) => a.d - b.d)[0];
  const pair = [left?.s, right?.s].filter((x): x is number => x !== undefined).sort((a, b) => a - b);
  const between: [number, number] | null = !end && pair.length === 2 && pair[0] !== pair[1] ? [pair[0], pair[1]] : null;
  const where = between ? `between stations ${between[0] + 1} and ${between[1] + 1}` : `next to station ${(left ?? right).s + 1}`;
  return { between, where, sideStations: between ?? [(left ?? right).s] };
}

/**
 * A station shot just before or after one either side that could not be placed (no pose, so no
 * footprint) may be the very frame aimed there: the gap may be a failed match, not a missing frame.
 */
function unplacedNextTo(unplaced: ReadonlySet<number>, sideStations: readonly number[]): { station: number; next: number } | null {
  for (const u of [...unplaced].sort((a, b) => a - b)) {
    const next = sideStations.find((st) => Math.abs(u - st) === 1);
    if (next !== undefined) return { station: u, next };
  }
  return null;
}

/** The hole a row's gap or short end leaves, with the frames to add; null when other frames see all of it. */
function gapHole(row: Row, piece: RowPiece, grid: HoleGrid, unplaced: ReadonlySet<number>): CoverageHole | null {
  const widthDeg = (piece.to - piece.from) * sampleDeg;
  const midYaw = wrapYaw(sampleYaw(piece.from) - sampleDeg / 2 + widthDeg / 2);
  // Frames to add at 30 % overlap with the neighbours and each other (common practice: 30-50 %):
  // a gap has a neighbour on both sides, a row's end on one.
  const F = row.frameDeg;
  const n = piece.end ? Math.max(1, Math.ceil(widthDeg / (0.7 * F))) : Math.max(1, Math.ceil((widthDeg - 0.4 * F) / (0.7 * F)) + 1);
  const aims = Array.from({ length: n }, (_, k) => wrapYaw(sampleYaw(piece.from) - sampleDeg / 2 + ((k + 0.5) * widthDeg) / n));
  const fills = aims.map((y) => aimedCamera(y, row.pitchDeg, row.cams[0].width, row.cams[0].height));
  const { cells, pLo, pHi } = claimCells(grid, fills);
  // Other frames see all of it: no hole on the sphere.
  if (cells === 0) return null;
  const heightDeg = pHi - pLo;
  const { between, where, sideStations } = gapSides(row, midYaw, piece.end);
  const maybe = unplacedNextTo(unplaced, sideStations);
  const aim = n === 1
    ? `add a frame aimed at yaw ${round(aims[0])}°, pitch ${signedDeg(row.pitchDeg)}`
    : `add ${n} frames aimed from yaw ${round(aims[0])}° to ${round(aims[n - 1])}°, at pitch ${signedDeg(row.pitchDeg)}`;
  let advice: string;
  let verdict: Verdict;
  if (piece.end) {
    advice = `the row at pitch ${signedDeg(row.pitchDeg)} stops about ${round(widthDeg)}° short of the others at yaw ${round(midYaw)}° (${where}): ${aim}, or crop the panorama there`;
    verdict = 'weak';
  } else {
    advice = `nothing covers about ${round(widthDeg)}° x ${round(heightDeg)}° at yaw ${round(midYaw)}°, pitch ${signedDeg(row.pitchDeg)} (${where}): ${aim}`;
    verdict = Math.min(widthDeg, heightDeg) >= 2 ? 'reshoot' : 'weak';
  }
  if (maybe !== null) {
    advice += `; but station ${maybe.station + 1}, shot next to station ${maybe.next + 1}, could not be placed: if it is aimed there, it needs matching, not reshooting`;
    verdict = 'weak';
  }
  return { code: 'coverage-hole', verdict, yawDeg: midYaw, pitchDeg: row.pitchDeg, widthDeg, heightDeg, pole: null, advice, between };
}

/**
 * The yaw samples all rows share, less a quarter frame at each end (the corners of the last frames
 * of a row curve away there; a panorama is cropped to what its rows share); every sample in a set
 * that goes round.
 */
function sharedYaw(rows: readonly Row[], goesRound: boolean): Uint8Array {
  const shared = new Uint8Array(samples).fill(1);
  if (!goesRound) {
    for (const r of rows) for (let k = 0; k < samples; k++) shared[k] &= r.cover[k];
    const trim = Math.round((0.25 * Math.max(...rows.map((r) => r.frameDeg))) / sampleDeg);
    const kept = shared.slice();
    for (const [from, to] of openRuns(shared)) {
      for (let k = from - trim; k < to + trim; k++) kept[((k % samples) + samples) % samples] = 0;
    }
    shared.set(kept);
  }
  return shared;
}

/**
 * What is left between the rows' own pitches: bands between rows, notches; and beyond them up to
 * a counted pole. Above the highest row and below the lowest, the frames' edges are jagged
 * (hand-held rows scatter in pitch and roll) and a panorama is cropped there: no hole. In a set
 * that does not go round, only the yaw all its rows share.
 */
function bandHoles(rows: readonly Row[], grid: HoleGrid, band: Band, goesRound: boolean): CoverageHole[] {
  const { open, explained, c, cols } = grid;
  const shared = sharedYaw(rows, goesRound);
  const holeFrom = band.nadir ? -90 : Math.min(...rows.map((r) => r.pitchDeg));
  const holeTo = band.zenith ? 90 : Math.max(...rows.map((r) => r.pitchDeg));
  const rest = new Uint8Array(open.length);
  for (let cell = 0; cell < open.length; cell++) {
    if (!open[cell] || explained[cell]) continue;
    const r = Math.floor(cell / cols), pm = -90 + (r + 0.5) * c;
    if (pm < holeFrom || pm > holeTo) continue;
    const yaw = -180 + ((cell % cols) + 0.5) * c;
    if (!shared[Math.min(samples - 1, Math.floor((yaw + 180) / sampleDeg))]) continue;
    rest[cell] = 1;
  }
  const holes: CoverageHole[] = [];
  for (const r of regionsOf(rest, c)) {
    // A pole not counted is the notes' business.
    if ((r.pole === 'zenith' && !band.zenith) || (r.pole === 'nadir' && !band.nadir)) continue;
    const verdict: Verdict = Math.min(r.widthDeg, r.heightDeg) >= 2 || r.pole ? 'reshoot' : 'weak';
    let advice: string;
    if (r.pole === 'zenith') advice = `the sky straight up is not covered above pitch ${signedDeg(90 - r.heightDeg)}: add a frame aimed straight up`;
    else if (r.pole === 'nadir') advice = `the ground straight down is not covered below pitch ${signedDeg(-90 + r.heightDeg)}: add a frame aimed straight down (common practice: hand-held, with the tripod moved aside)`;
    else if (r.widthDeg >= 359) advice = `nothing covers pitch ${signedDeg(r.pitchDeg - r.heightDeg / 2)} to ${signedDeg(r.pitchDeg + r.heightDeg / 2)} all the way round: the rows are too far apart; add a row at pitch ${signedDeg(r.pitchDeg)}, or tilt the rows closer together`;
    else advice = `nothing covers about ${round(r.widthDeg)}° x ${round(r.heightDeg)}° at yaw ${round(wrapYaw(r.yawDeg))}°, pitch ${signedDeg(r.pitchDeg)} (${nearStations(rows, r.yawDeg, r.pitchDeg)}): add a frame aimed there`;
    holes.push({ code: 'coverage-hole', verdict, yawDeg: wrapYaw(r.yawDeg), pitchDeg: r.pitchDeg, widthDeg: r.widthDeg, heightDeg: r.heightDeg, pole: r.pole, advice, between: null });
  }
  return holes;
}

/** A note for each open pole the set neither reaches toward nor declares. */
function poleNotes(cams: readonly PlacedCamera[], band: Band, open: Uint8Array, explained: Uint8Array, c: number): CoverageNote[] {
  const notes: CoverageNote[] = [];
  const centres = cams.map((cam) => angles(cam.axes.z)[1]);
  for (const pole of ['zenith', 'nadir'] as const) {
    if (pole === 'zenith' ? band.zenith : band.nadir) continue;
    const beyond = pole === 'zenith' ? Math.max(...centres) : Math.min(...centres);
    const cap = poleCap(open, explained, c, pole, beyond);
    if (cap === null) continue;
    const text = pole === 'zenith'
      ? `nothing covers the view above about pitch ${signedDeg(cap)} (the zenith): no frame is aimed above ${poleReachDeg}°, so the set is taken as not meant to cover it; declare a full sphere (the budget's full-sphere setting, or --full-sphere) to have it checked`
      : `nothing covers the view below about pitch ${signedDeg(cap)} (the nadir): no frame is aimed below -${poleReachDeg}°, so the set is taken as not meant to cover it; declare a full sphere (the budget's full-sphere setting, or --full-sphere) to have it checked`;
    notes.push({ pole, pitchDeg: Math.round(10 * cap) / 10, text });
  }
  return notes;
}

/**
 * Where the open cap around a pole begins: the mean over yaw of its lowest (zenith) or highest
 * (nadir) open pitch, over the open cells joined to the pole beyond the frames' centres; null when
 * the pole is seen.
 */
function poleCap(open: Uint8Array, explained: Uint8Array, c: number, pole: 'zenith' | 'nadir', beyondDeg: number): number | null {
  const cols = Math.round(360 / c), rowsN = Math.round(180 / c);
  const first = pole === 'zenith' ? rowsN - 1 : 0, step = pole === 'zenith' ? -1 : 1;
  const reach = new Float64Array(cols).fill(NaN);
  let reached = new Uint8Array(cols);
  for (let q = 0; q < cols; q++) reached[q] = open[first * cols + q] && !explained[first * cols + q] ? 1 : 0;
  if (!reached.some((v) => v === 1)) return null;
  for (let r = first; r >= 0 && r < rowsN; r += step) {
    const lo = -90 + r * c, hi = lo + c;
    if (pole === 'zenith' ? lo < beyondDeg : hi > beyondDeg) break;
    const next = new Uint8Array(cols);
    let any = false;
    for (let q = 0; q < cols; q++) {
      const cell = r * cols + q;
      if (!open[cell] || explained[cell]) continue;
      // Joined to the cap: open in the row nearer the pole at this yaw or beside it.
      if (r !== first && !(reached[q] || reached[(q + 1) % cols] || reached[(q + cols - 1) % cols])) continue;
      next[q] = 1;
      any = true;
      reach[q] = pole === 'zenith' ? lo : hi;
    }
    if (!any) break;
    reached = next;
  }
  const edge = [...reach].filter((v) => !Number.isNaN(v));
  return edge.length ? edge.reduce((t, v) => t + v, 0) / edge.length : null;
}

/** "between stations 3 and 4": the stations either side of a direction, in the row nearest its pitch. */
function nearStations(rows: readonly Row[], yaw: number, pitch: number): string {
  const row = rows.reduce((a, b) => (Math.abs(b.pitchDeg - pitch) < Math.abs(a.pitchDeg - pitch) ? b : a));
  const inRow = row.cams.map((cam) => ({ s: cam.station + 1, d: wrapYaw(angles(cam.axes.z)[0] - yaw) }));
  const left = inRow.filter((x) => x.d < 0).sort((a, b) => b.d - a.d)[0];
  const right = inRow.filter((x) => x.d >= 0).sort((a, b) => a.d - b.d)[0];
  const pair = [left?.s, right?.s].filter((x): x is number => x !== undefined).sort((a, b) => a - b);
  return pair.length === 2 && pair[0] !== pair[1] ? `between stations ${pair[0]} and ${pair[1]}` : `next to station ${pair[0]}`;
}
