/**
 * The coverage map: every placed frame's footprint on an equirectangular view of the sphere around
 * the camera (yaw across, pitch up), and the directions inside the shot band no frame sees.
 */
import type { Analysis, CoverageHole, SequenceGeometry, Verdict } from './report.js';
import { cross } from './rotations.js';
import { distortionFactor, undistortRadius } from './lens.js';

/** What the map is drawn from: the frames' sizes, the stations' reference frames, the geometry. */
export type MapSource = Pick<Analysis, 'frames' | 'stations' | 'geometry'>;

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
 * Footprints and holes of a report's geometry, on a grid of `cellDeg`. The band where holes count
 * runs from the lowest to the highest frame centre, widened by 80 % of half a frame's height, so the
 * notches where frames of one row meet at their corners do not count; a set reaching within a
 * frame of a pole counts up to the pole (a missing zenith or nadir).
 */
/**
 * The band of pitch the frames were aimed over: from the lowest to the highest frame centre,
 * widened by 80 % of half a frame's height; up to a pole when it comes within a frame of it.
 */
function shotBand(cams: readonly PlacedCamera[], f: number): { fromDeg: number; toDeg: number } {
  const halfV = Math.max(...cams.map((c) => (Math.atan(c.height / (2 * f)) * 180) / Math.PI));
  const pitches = cams.map((c) => angles(c.axes.z)[1]);
  let from = Math.min(...pitches) - 0.8 * halfV, to = Math.max(...pitches) + 0.8 * halfV;
  if (to > 90 - 2 * halfV) to = 90;
  if (from < -90 + 2 * halfV) from = -90;
  return { fromDeg: from, toDeg: to };
}

// Maps already drawn, by geometry (re-judging with another budget keeps the geometry).
const drawn = new WeakMap<SequenceGeometry, Map<number, CoverageMap | null>>();

export function coverageMap(report: MapSource, cellDeg = 1): CoverageMap | null {
  const g = report.geometry;
  if (!g || g.poses.length === 0) return null;
  const cached = drawn.get(g)?.get(cellDeg);
  if (cached !== undefined) return cached;
  const map = drawMap(report, g, cellDeg);
  if (!drawn.has(g)) drawn.set(g, new Map());
  drawn.get(g)!.set(cellDeg, map);
  return map;
}

function drawMap(report: MapSource, g: SequenceGeometry, cellDeg: number): CoverageMap | null {
  const cams = placedCameras(report, g);
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

  const { fromDeg: from, toDeg: to } = shotBand(cams, f);
  const holes: HoleRun[] = [];
  for (let pc = -90; pc < 90; pc += cellDeg) {
    const pm = pc + cellDeg / 2;
    if (pm < from || pm > to) continue;
    let runStart: number | null = null;
    for (let yc = -180; yc <= 180; yc += cellDeg) {
      const d = directionOf(yc + cellDeg / 2, pm);
      const open = yc < 180 && !cams.some((c) => sees(c, f, d));
      if (open && runStart === null) runStart = yc;
      if (!open && runStart !== null) {
        holes.push({ pitchFromDeg: pc, pitchToDeg: pc + cellDeg, yawFromDeg: runStart, yawToDeg: yc });
        runStart = null;
      }
    }
  }
  return { footprints, holes, band: { fromDeg: from, toDeg: to }, cellDeg };
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

/**
 * The map as a standalone SVG: 2 px a degree by default, yaw from -180 (left) to 180, pitch 90 at
 * the top. Frames are outlined and numbered by station (counting from 1, as the app does); holes
 * are hatched in vermillion (Okabe & Ito's palette) and named in the legend, never by colour alone.
 */
export function coverageMapSvg(report: MapSource, scale = 2): string | null {
  const map = coverageMap(report);
  if (!map) return null;
  const W = 360 * scale, H = 180 * scale, top = 28, bottom = 36;
  const x = (yaw: number): number => (yaw + 180) * scale;
  const y = (pitch: number): number => top + (90 - pitch) * scale;
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H + top + bottom}" viewBox="0 0 ${W} ${H + top + bottom}" font-family="sans-serif" font-size="11">`);
  parts.push('<title>Seamscout coverage map</title>');
  parts.push('<defs><pattern id="hole" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#fbe3d6"/><line x1="0" y1="0" x2="0" y2="6" stroke="#D55E00" stroke-width="2"/></pattern>');
  parts.push(`<clipPath id="sphere"><rect x="0" y="${top}" width="${W}" height="${H}"/></clipPath></defs>`);
  parts.push(`<rect x="0" y="0" width="${W}" height="${H + top + bottom}" fill="#ffffff"/>`);
  parts.push(`<rect x="0" y="${top}" width="${W}" height="${H}" fill="#f4f4f4" stroke="#999999"/>`);
  const g = report.geometry!;
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
  parts.push('</g>');
  for (let yaw = -180; yaw <= 180; yaw += 90) parts.push(`<text x="${Math.min(W - 30, Math.max(2, x(yaw) - 12))}" y="${top + H + 14}" fill="#555555">${yaw}°</text>`);
  const ly = top + H + 30;
  parts.push(`<rect x="4" y="${ly - 10}" width="14" height="12" fill="#0072B2" fill-opacity="0.08" stroke="#0072B2"/><text x="22" y="${ly}">frame (station number)</text>`);
  parts.push(`<rect x="170" y="${ly - 10}" width="14" height="12" fill="url(#hole)" stroke="#D55E00"/><text x="188" y="${ly}">${map.holes.length ? 'not covered' : 'not covered (none in the shot band)'}</text>`);
  parts.push('</svg>');
  return parts.join('\n') + '\n';
}

/** One connected stretch of uncovered cells (8-neighbours, wrapping in yaw). */
interface HoleRegion {
  readonly cells: number;
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly widthDeg: number;
  readonly heightDeg: number;
  readonly pole: 'zenith' | 'nadir' | null;
}

/** The holes of a map as connected regions. */
export function holeRegions(map: CoverageMap): HoleRegion[] {
  const c = map.cellDeg;
  const cols = Math.round(360 / c), rowsN = Math.round(180 / c);
  const open = new Uint8Array(cols * rowsN);
  for (const h of map.holes) {
    const r = Math.round((h.pitchFromDeg + 90) / c);
    for (let y = h.yawFromDeg; y < h.yawToDeg; y += c) open[r * cols + Math.round((y + 180) / c)] = 1;
  }
  const seen = new Uint8Array(open.length);
  const regions: HoleRegion[] = [];
  for (let start = 0; start < open.length; start++) {
    if (!open[start] || seen[start]) continue;
    const stack = [start];
    seen[start] = 1;
    const cells: number[] = [];
    while (stack.length) {
      const k = stack.pop()!;
      cells.push(k);
      const r = Math.floor(k / cols), q = k % cols;
      for (let dr = -1; dr <= 1; dr++)
        for (let dq = -1; dq <= 1; dq++) {
          const rr = r + dr;
          if (rr < 0 || rr >= rowsN) continue;
          const nk = rr * cols + ((q + dq + cols) % cols);
          if (open[nk] && !seen[nk]) {
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
    const pole = pHi >= 90 && map.band.toDeg >= 90 ? 'zenith' : pLo <= -90 && map.band.fromDeg <= -90 ? 'nadir' : null;
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

/**
 * Holes worth a reshoot in a set shot in rows or up to a pole, with where to aim: gaps inside a
 * row, bands between rows, and a missing zenith or nadir. A single sweep gets none (its gaps are
 * the pairs' own flags, low-overlap, no-match and no-closure). Holes under 2 degrees across are weak
 * (within the error of the poses and the footprint model); larger ones reshoot.
 */
export function coverageHoles(source: MapSource): CoverageHole[] {
  const g = source.geometry;
  if (!g || g.poses.length === 0) return [];
  // A single sweep short of the poles has no holes of its own: decided before drawing the map.
  if ((g.rows?.length ?? 1) < 2) {
    const cams = placedCameras(source, g);
    if (cams.length === 0) return [];
    const band = shotBand(cams, g.focalPx);
    if (band.toDeg < 90 && band.fromDeg > -90) return [];
  }
  const map = coverageMap(source);
  if (!map) return [];
  // The hole's neighbours: in the row nearest its pitch, the stations either side of it in yaw.
  const near = (yaw: number, pitch: number): string => {
    const rows = g.rows?.length ? g.rows : [{ pitchDeg: 0, stations: g.poses.map((p) => p.station) }];
    const row = rows.reduce((a, b) => (Math.abs(b.pitchDeg - pitch) < Math.abs(a.pitchDeg - pitch) ? b : a));
    const inRow = g.poses.filter((p) => row.stations.includes(p.station)).map((p) => ({ s: p.station + 1, d: wrapYaw(p.yawDeg - yaw) }));
    const left = inRow.filter((x) => x.d < 0).sort((a, b) => b.d - a.d)[0];
    const right = inRow.filter((x) => x.d >= 0).sort((a, b) => a.d - b.d)[0];
    const pair = [left?.s, right?.s].filter((x): x is number => x !== undefined).sort((a, b) => a - b);
    return pair.length === 2 && pair[0] !== pair[1] ? `between stations ${pair[0]} and ${pair[1]}` : `next to station ${pair[0]}`;
  };
  return holeRegions(map).map((r) => {
    const verdict: Verdict = Math.min(r.widthDeg, r.heightDeg) >= 2 || r.pole ? 'reshoot' : 'weak';
    let advice: string;
    if (r.pole === 'zenith') advice = `the sky straight up is not covered above pitch ${round(90 - r.heightDeg)}°: add a frame aimed straight up`;
    else if (r.pole === 'nadir') advice = `the ground straight down is not covered below pitch ${round(-90 + r.heightDeg)}°: add a frame aimed straight down (common practice: hand-held, with the tripod moved aside)`;
    else if (r.widthDeg >= 359) advice = `nothing covers pitch ${round(r.pitchDeg - r.heightDeg / 2)}° to ${round(r.pitchDeg + r.heightDeg / 2)}° all the way round: the rows are too far apart; add a row at pitch ${round(r.pitchDeg)}°, or tilt the rows closer together`;
    else advice = `nothing covers about ${round(r.widthDeg)}° x ${round(r.heightDeg)}° at yaw ${round(wrapYaw(r.yawDeg))}°, pitch ${round(r.pitchDeg)}° (${near(r.yawDeg, r.pitchDeg)}): add a frame aimed there`;
    return { code: 'coverage-hole', verdict, yawDeg: wrapYaw(r.yawDeg), pitchDeg: r.pitchDeg, widthDeg: r.widthDeg, heightDeg: r.heightDeg, pole: r.pole, advice };
  });
}
