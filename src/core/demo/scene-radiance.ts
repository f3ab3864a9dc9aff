/**
 * The demo scene: a headland above the sea seen from one point, as radiance (linear light) by
 * viewing direction. Near grass and rock at the bottom of every view; across one stretch of the
 * turn the sea runs out to the horizon, elsewhere hills and hazy mountains rise behind; a village of
 * small houses on the hills and a striped lighthouse on the coast; a sky with a gradient and soft,
 * low-contrast clouds. Everything is drawn from a seed.
 *
 * Colour: each material has a tint of unit luminance (Y = 0.2126 R + 0.7152 G + 0.0722 B, the
 * sRGB / ITU-R BT.709 weights), so luminance is exactly the radiance the material is given and
 * exposure changes scale all three channels alike.
 *
 * Directions are given as yaw (radians, 0..2 pi, positive to the right of +z) and height on the
 * unit cylinder around the camera, h = tan(elevation): near the horizon the same as the elevation
 * in radians, and cheaper to get from a ray than an angle. Elevations below are such heights.
 *
 * Detail is band-limited to the frames' angular pixel size (see lattice-noise.ts), and hard edges
 * (skylines, walls, windows) are antialiased over one pixel, so overlapping frames of one focal
 * length render the same corners.
 */
import type { Octaves, OctaveSpec } from './lattice-noise.js';
import { octaveNoise1, octaveNoise2, prepareOctaves } from './lattice-noise.js';
import { createRandom } from '../numeric/random.js';

const deg = Math.PI / 180;
const turn = 2 * Math.PI;

/** What a direction looks at. */
export type Surface = 'sky' | 'sea' | 'land' | 'structure';

/** A building as an angular box with an optional gable, standing in front of the hills. */
export interface Structure {
  readonly kind: 'house' | 'lighthouse';
  /** Yaw of its centre line, radians. */
  readonly yaw: number;
  readonly halfWidth: number;
  /** Height of its foot and of its walls (scene heights: about radians near the horizon). */
  readonly base: number;
  readonly wallHeight: number;
  /** Height of the gable above the walls (0 for none). */
  readonly roofHeight: number;
  /** Window columns and rows on the front face. */
  readonly windowCols: number;
  readonly windowRows: number;
  /** Luminance of the lit wall. */
  readonly wallLum: number;
}

/** The scene's layout, independent of any camera. */
export interface Scene {
  readonly seed: number;
  /** Yaw of the middle of the open sea, radians. */
  readonly seaYaw: number;
  /** Half the angular width of the open sea, radians. */
  readonly seaHalfWidth: number;
  /** Height of the sea horizon (slightly below 0: the camera stands above the water). */
  readonly seaHorizon: number;
  /** Yaw of the sun (brighter sky on that side). */
  readonly sunYaw: number;
  readonly structures: readonly Structure[];
  readonly specs: Readonly<Record<OctaveName, OctaveSpec>>;
}

type OctaveName = 'fgRidge' | 'midRidge' | 'farRidge' | 'fgDetail' | 'midDetail' | 'farDetail' | 'sea' | 'cloud';

/** A scene prepared for frames of one angular pixel size: octaves band-limited, skylines tabulated. */
export interface SceneView {
  readonly scene: Scene;
  readonly pixelAngle: number;
  readonly octaves: Readonly<Record<OctaveName, Octaves>>;
  /** Skyline heights sampled every `tableStep` radians of yaw over the full turn. */
  readonly fgRidge: Float32Array;
  readonly midRidge: Float32Array;
  readonly farRidge: Float32Array;
  readonly tableStep: number;
  /** Smooth functions of yaw or elevation alone, tabulated (see smoothTable). */
  readonly sunByYaw: SmoothTable;
  readonly skyGlow: SmoothTable;
  readonly skyBlue: SmoothTable;
  readonly cloudFade: SmoothTable;
  readonly seaGlow: SmoothTable;
  /** Per half-degree of yaw, 1 where some structure may be. */
  readonly structureBins: Uint8Array;
}

/** A smooth function sampled on a regular grid and read back by linear interpolation. */
export interface SmoothTable {
  readonly start: number;
  readonly step: number;
  readonly data: Float64Array;
}

function smoothTable(f: (x: number) => number, start: number, end: number, samples: number): SmoothTable {
  const step = (end - start) / (samples - 1);
  return { start, step, data: Float64Array.from({ length: samples + 1 }, (_, i) => f(start + Math.min(i, samples - 1) * step)) };
}

function at(t: SmoothTable, x: number): number {
  let u = (x - t.start) / t.step;
  const last = t.data.length - 2;
  if (u <= 0) return t.data[0];
  if (u >= last) u = last;
  const i = Math.floor(u);
  const f = u - i;
  return t.data[i] + f * (t.data[i + 1] - t.data[i]);
}

const structureBinsPerTurn = 720;

/** The scene drawn from a seed. */
export function createScene(seed: number): Scene {
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new TypeError(`Expected a whole number from 0 to 4294967295 for seed but received ${seed}`);
  const rnd = createRandom(seed ^ 0x5ca1ab1e);
  const seaYaw = rnd.next() * turn;
  const seaHalfWidth = (48 + 20 * rnd.next()) * deg;
  const seaHorizon = -0.15 * deg;
  const sunYaw = seaYaw + (rnd.next() - 0.5) * 80 * deg;
  const s = (k: number): number => (seed * 31 + k * 1013) | 0;
  const specs: Record<OctaveName, OctaveSpec> = {
    fgRidge: { cells: 48, octaves: 12, persistence: 0.55, stretchY: 1, seed: s(1) },
    midRidge: { cells: 40, octaves: 12, persistence: 0.5, stretchY: 1, seed: s(2) },
    farRidge: { cells: 28, octaves: 12, persistence: 0.52, stretchY: 1, seed: s(3) },
    // Land: the coarse octaves also lay out the grass and rock patches.
    fgDetail: { cells: 60, octaves: 12, persistence: 0.68, stretchY: 1.6, seed: s(4), coarseOctaves: 3 },
    midDetail: { cells: 150, octaves: 12, persistence: 0.68, stretchY: 2, seed: s(6), coarseOctaves: 3 },
    farDetail: { cells: 250, octaves: 12, persistence: 0.64, stretchY: 2.5, seed: s(8), coarseOctaves: 2 },
    sea: { cells: 360, octaves: 9, persistence: 0.6, stretchY: 5, seed: s(9) },
    cloud: { cells: 20, octaves: 4, persistence: 0.5, stretchY: 2.2, seed: s(10) },
  };
  // Structures sit in front of the hills, so their feet are placed against the mid skyline; the
  // skyline itself is band-limited per view, so they use the coarse (view-independent) profile.
  const coarseMid = prepareOctaves({ ...specs.midRidge, octaves: 3 }, 1e-9);
  const coarseMidAt = (yaw: number): number => midRidgeAt(seaYaw, seaHalfWidth, octaveNoise1(coarseMid, wrap(yaw)), wrap(yaw));
  const structures: Structure[] = [];
  // The village: on the land side, away from the coast.
  const villageYaw = wrap(seaYaw + Math.PI + (rnd.next() - 0.5) * 60 * deg);
  let yaw = villageYaw - 6 * deg;
  const houses = 5 + rnd.int(3);
  for (let i = 0; i < houses; i++) {
    const halfWidth = (0.7 + 0.6 * rnd.next()) * deg;
    yaw += halfWidth + (0.4 + 1.6 * rnd.next()) * deg;
    const wallHeight = (0.6 + 0.4 * rnd.next()) * deg;
    let foot = Infinity;
    for (let k = -2; k <= 2; k++) foot = Math.min(foot, coarseMidAt(yaw + (k / 2) * halfWidth));
    structures.push({
      kind: 'house', yaw: wrap(yaw), halfWidth, base: foot - (0.4 + 0.5 * rnd.next()) * deg, wallHeight,
      roofHeight: (0.3 + 0.3 * rnd.next()) * deg, windowCols: 2 + rnd.int(3), windowRows: 1 + rnd.int(2), wallLum: 0.32 + 0.16 * rnd.next(),
    });
    yaw += halfWidth;
  }
  // The lighthouse: on the point where the land meets the open sea.
  const side = rnd.next() < 0.5 ? -1 : 1;
  const lightYaw = wrap(seaYaw + side * (seaHalfWidth - 4 * deg));
  structures.push({
    kind: 'lighthouse', yaw: lightYaw, halfWidth: 0.32 * deg, base: seaHorizon - 0.35 * deg, wallHeight: 3.2 * deg,
    roofHeight: 0, windowCols: 1, windowRows: 3, wallLum: 0.42,
  });
  return { seed, seaYaw, seaHalfWidth, seaHorizon, sunYaw: wrap(sunYaw), structures, specs };
}

function wrap(yaw: number): number {
  const w = yaw % turn;
  return w < 0 ? w + turn : w;
}

/** Angular distance between two yaws, 0..pi. */
function yawDistance(a: number, b: number): number {
  const d = Math.abs(wrap(a - b));
  return d > Math.PI ? turn - d : d;
}

function smoothstep(e0: number, e1: number, x: number): number {
  const t = Math.min(1, Math.max(0, (x - e0) / (e1 - e0)));
  return t * t * (3 - 2 * t);
}

/** 0 over the open sea, 1 over land, with a coastline some 18 degrees wide in between. */
function landShare(seaYaw: number, seaHalfWidth: number, yaw: number): number {
  return smoothstep(seaHalfWidth - 9 * deg, seaHalfWidth + 9 * deg, yawDistance(yaw, seaYaw));
}

/** Hills: well below the horizon over the sea, rising over land. `n` is noise with mean 0.5. */
function midRidgeAt(seaYaw: number, seaHalfWidth: number, n: number, yaw: number): number {
  const land = landShare(seaYaw, seaHalfWidth, yaw);
  return -14 * deg + land * (13 * deg + 7 * deg * (n - 0.5) + 2.5 * deg) + (1 - land) * 4 * deg * (n - 0.5);
}

/**
 * Prepares the scene for frames whose pixels subtend `pixelAngle` radians at the centre. Frames of
 * the same angular pixel size (one focal length and width) render the same detail.
 */
export function prepareSceneView(scene: Scene, pixelAngle: number): SceneView {
  const octaves = {} as Record<OctaveName, Octaves>;
  for (const name of Object.keys(scene.specs) as OctaveName[]) octaves[name] = prepareOctaves(scene.specs[name], pixelAngle);
  const tableStep = pixelAngle / 3;
  const n = Math.ceil(turn / tableStep) + 2;
  const fgRidge = new Float32Array(n), midRidge = new Float32Array(n), farRidge = new Float32Array(n);
  const lighthouse = scene.structures.find((s) => s.kind === 'lighthouse');
  for (let i = 0; i < n; i++) {
    const yaw = wrap(i * tableStep);
    const land = landShare(scene.seaYaw, scene.seaHalfWidth, yaw);
    // Foreground: the headland's own edge, grass and boulders, 5 to 10 degrees below the horizon.
    const nf = octaveNoise1(octaves.fgRidge, yaw);
    fgRidge[i] = -7.5 * deg + 9 * deg * (nf - 0.5);
    let mid = midRidgeAt(scene.seaYaw, scene.seaHalfWidth, octaveNoise1(octaves.midRidge, yaw), yaw);
    // A rocky point under the lighthouse.
    if (lighthouse) {
      const d = yawDistance(yaw, lighthouse.yaw);
      mid = Math.max(mid, lighthouse.base + 0.3 * deg - Math.max(0, d - 0.9 * deg) * 0.22 - Math.max(0, d - 2.5 * deg) * 1.5);
    }
    midRidge[i] = mid;
    // Mountains: peaked (ridged noise) and only behind land; low islands far out over the sea.
    const nr = octaveNoise1(octaves.farRidge, yaw);
    const ridged = 1 - Math.abs(2 * nr - 1);
    farRidge[i] = scene.seaHorizon + land * (1.5 * deg + 9 * deg * ridged * ridged) + (1 - land) * Math.max(0, nr - 0.62) * 6 * deg - 0.3 * deg * (1 - land);
  }
  const sunByYaw = smoothTable((y) => 0.5 + 0.5 * Math.cos(y - scene.sunYaw), 0, turn, 4097);
  const skyGlow = smoothTable((up) => 0.36 + 0.2 * Math.exp(-up / (6 * deg)), 0, Math.PI, 8192);
  const skyBlue = smoothTable((up) => smoothstep(0, 25 * deg, up), 0, Math.PI, 8192);
  const cloudFade = smoothTable((up) => smoothstep(0.5 * deg, 5 * deg, up), 0, Math.PI, 8192);
  const seaGlow = smoothTable((d) => 0.05 + 0.11 * Math.exp(-d / (2.5 * deg)), 0, Math.PI, 8192);
  const structureBins = new Uint8Array(structureBinsPerTurn);
  for (const st of scene.structures) {
    const reach = st.halfWidth + 2 * pixelAngle;
    const lo = Math.floor(((st.yaw - reach) / turn) * structureBinsPerTurn);
    const hi = Math.floor(((st.yaw + reach) / turn) * structureBinsPerTurn);
    for (let b = lo; b <= hi; b++) structureBins[((b % structureBinsPerTurn) + structureBinsPerTurn) % structureBinsPerTurn] = 1;
  }
  return { scene, pixelAngle, octaves, fgRidge, midRidge, farRidge, tableStep, sunByYaw, skyGlow, skyBlue, cloudFade, seaGlow, structureBins };
}

function tableAt(t: Float32Array, step: number, yaw: number): number {
  const x = yaw / step;
  const i = Math.floor(x);
  const f = x - i;
  return t[i] + f * (t[i + 1] - t[i]);
}

// Tints of unit luminance (divided by 0.2126 R + 0.7152 G + 0.0722 B).
function tint(r: number, g: number, b: number): [number, number, number] {
  const y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
  return [r / y, g / y, b / y];
}
const grass = tint(0.5, 0.72, 0.3);
const dryGrass = tint(0.78, 0.72, 0.45);
const rock = tint(0.8, 0.74, 0.64);
const haze = tint(0.72, 0.8, 0.92);
const seaTint = tint(0.3, 0.55, 0.7);
const skyLow = tint(0.86, 0.92, 1.0);
const skyHigh = tint(0.5, 0.68, 1.0);
const cloudTint = tint(0.95, 0.95, 0.97);
const plaster = tint(0.95, 0.9, 0.8);
const roofTint = tint(0.72, 0.38, 0.28);
const glass = tint(0.35, 0.4, 0.48);
const redPaint = tint(0.85, 0.22, 0.18);

/** The colour under construction, as luminance and a unit-luminance tint (kept in three numbers). */
interface Shade {
  lum: number;
  r: number;
  g: number;
  b: number;
}

function setShade(s: Shade, lum: number, t: readonly number[]): void {
  s.lum = lum;
  s.r = t[0];
  s.g = t[1];
  s.b = t[2];
}

function mixTint(s: Shade, t: readonly number[], k: number): void {
  s.r += k * (t[0] - s.r);
  s.g += k * (t[1] - s.g);
  s.b += k * (t[2] - s.b);
}

/**
 * Grass and rock. The coarse octaves lay out the patches (borders roughened by the fine ones); the
 * fine octaves, through a steep curve, give both the grain at every resolved scale: tufts and dark
 * shrubs in the grass, bright faces and dark pits in the rock, all with hard edges, as corners.
 */
function shadeLand(s: Shade, detail: Octaves, yaw: number, e: number, lum: number, hazeK: number): void {
  const n = octaveNoise2(detail, yaw, e);
  const coarse = detail.partial[0];
  const fine = n - coarse;
  const m = 0.5 + 1.8 * (coarse - 0.5) + 0.9 * fine;
  const rockiness = smoothstep(0.56, 0.59, m);
  const dry = smoothstep(0.4, 0.46, m);
  const g = 1 + 9 * fine;
  const grain = g <= 0.15 ? 0.0225 : g * g;
  const shrub = smoothstep(0.035, 0.05, fine);
  const grassLum = (0.05 + 0.05 * coarse) * grain * (1 - 0.75 * shrub);
  const pit = smoothstep(-0.03, -0.045, fine);
  const rockLum = (0.08 + 0.14 * coarse) * (0.5 + 0.5 * grain) * (1 - 0.8 * pit);
  setShade(s, lum * (grassLum + rockiness * (rockLum - grassLum)), grass);
  mixTint(s, dryGrass, dry * (1 - rockiness));
  mixTint(s, rock, rockiness);
  if (hazeK > 0) {
    s.lum += hazeK * (0.3 - s.lum);
    mixTint(s, haze, hazeK);
  }
}

function shadeSea(s: Shade, view: SceneView, yaw: number, e: number): void {
  const depression = view.scene.seaHorizon - e;
  const n = octaveNoise2(view.octaves.sea, yaw, e);
  // Brighter towards the horizon (the sky's reflection at grazing angles), waves as streaks, and
  // sparse glints where the sun's side catches wave crests.
  const base = at(view.seaGlow, depression);
  const sun = at(view.sunByYaw, yaw);
  const glint = smoothstep(0.66, 0.72, n) * sun * 0.35;
  setShade(s, base * (0.55 + 0.9 * n) + glint, seaTint);
  mixTint(s, skyLow, glint > 0 ? Math.min(1, glint * 3) : 0);
}

function shadeSky(s: Shade, view: SceneView, yaw: number, e: number): void {
  const up = Math.max(0, e - view.scene.seaHorizon);
  const sun = at(view.sunByYaw, yaw);
  const sun2 = sun * sun;
  setShade(s, at(view.skyGlow, up) + 0.1 * sun2 * sun2, skyLow);
  mixTint(s, skyHigh, at(view.skyBlue, up));
  // Soft clouds: thresholded coarse noise, thin near the horizon, about a tenth brighter.
  const c = octaveNoise2(view.octaves.cloud, yaw, e);
  const cloud = smoothstep(0.5, 0.68, c) * at(view.cloudFade, up);
  if (cloud > 0) {
    s.lum *= 1 + 0.12 * cloud;
    mixTint(s, cloudTint, 0.7 * cloud);
  }
}

/** Coverage in 0..1 of a half-plane whose signed distance (radians, positive inside) is d. */
function cover(d: number, pixel: number): number {
  const t = 0.5 + d / pixel;
  return t <= 0 ? 0 : t >= 1 ? 1 : t;
}

/** Coverage of a structure at (yaw, e), with its shade written to s when positive. */
function shadeStructure(s: Shade, st: Structure, yaw: number, e: number, pixel: number): number {
  let dx = yaw - st.yaw;
  if (dx > Math.PI) dx -= turn;
  else if (dx < -Math.PI) dx += turn;
  const ax = Math.abs(dx);
  const side = st.halfWidth - ax;
  if (side < -pixel || e < st.base - pixel) return 0;
  const top = st.base + st.wallHeight;
  const roofTop = top + st.roofHeight * (1 - ax / st.halfWidth);
  const slope = st.roofHeight / st.halfWidth;
  const dTop = st.roofHeight > 0 ? (roofTop - e) / Math.sqrt(1 + slope * slope) : top - e;
  const coverage = Math.min(cover(side, pixel), cover(e - st.base, pixel), cover(dTop, pixel));
  if (coverage <= 0) return 0;
  const u = (dx + st.halfWidth) / (2 * st.halfWidth);
  const v = (e - st.base) / st.wallHeight;
  if (st.kind === 'lighthouse') {
    // Red and white bands, a dark lantern room with a bright lamp on top, small windows.
    const band = Math.floor(v * 5);
    setShade(s, band % 2 === 0 ? st.wallLum : st.wallLum * 0.45, band % 2 === 0 ? plaster : redPaint);
    if (v > 0.86) setShade(s, v > 0.9 && v < 0.97 && Math.abs(u - 0.5) < 0.3 ? 0.9 : 0.03, glass);
    else if (band % 2 === 0 && Math.abs(u - 0.5) < 0.12 && (v * 5) % 1 > 0.35 && (v * 5) % 1 < 0.7) setShade(s, 0.02, glass);
    // Shaded side of the round tower.
    s.lum *= 0.55 + 0.45 * Math.sin(Math.PI * Math.min(1, u * 1.4));
    return coverage;
  }
  if (e > top) {
    // Roof: courses of tiles.
    const course = ((e - top) / (st.roofHeight / 4)) % 1;
    setShade(s, 0.11 * (course < 0.18 ? 0.55 : 1) * (dx < 0 ? 1 : 0.7), roofTint);
    return coverage;
  }
  // Walls: the front face lit, the gable end in shade; windows in a grid on the front face.
  const front = u < 0.72;
  setShade(s, front ? st.wallLum : st.wallLum * 0.5, plaster);
  if (front) {
    const cu = (u / 0.72) * st.windowCols;
    const cv = v * (st.windowRows + 0.4);
    const fu = cu % 1, fv = cv % 1;
    const px = pixel / ((2 * st.halfWidth * 0.72) / st.windowCols);
    const py = pixel / (st.wallHeight / (st.windowRows + 0.4));
    const wx = Math.min(cover((fu - 0.3) , px), cover((0.7 - fu), px));
    const wy = Math.min(cover((fv - 0.3), py), cover((0.75 - fv), py)) * (cv >= 0.3 && cv < st.windowRows ? 1 : 0);
    const w = wx * wy;
    if (w > 0) s.lum += w * (0.025 - s.lum);
  }
  return coverage;
}

/** Scratch for shadeDirection (one per thread, as every module-level value is). */
const layerShade: Shade = { lum: 0, r: 1, g: 1, b: 1 };
/** The colour gathered so far and the share of the pixel still uncovered. */
const gathered = { weight: 1, r: 0, g: 0, b: 0 };

function gather(s: Shade, cov: number): void {
  const a = gathered;
  const k = a.weight * cov * s.lum;
  a.r += k * s.r;
  a.g += k * s.g;
  a.b += k * s.b;
  a.weight *= 1 - cov;
}

/**
 * Linear-light radiance of the direction in scene coordinates (yaw, height), written as R, G, B to
 * out[o..o+2]. The layers are visited nearest first (foreground, structures, hills, sea, mountains
 * beyond the sea, sky); each covers the direction wholly, partly (an edge, antialiased over one pixel) or not at
 * all, and what it leaves uncovered shows the next.
 */
export function shadeDirection(view: SceneView, yaw: number, e: number, out: Float32Array, o: number): void {
  const p = view.pixelAngle;
  const oc = view.octaves;
  const s = layerShade;
  const a = gathered;
  a.weight = 1;
  a.r = 0;
  a.g = 0;
  a.b = 0;
  let cov = cover(tableAt(view.fgRidge, view.tableStep, yaw) - e, p);
  if (cov > 0) {
    shadeLand(s, oc.fgDetail, yaw, e, 1, 0);
    gather(s, cov);
  }
  if (a.weight > 0 && e < 8 * deg && e > -6 * deg && view.structureBins[((yaw / turn) * structureBinsPerTurn) | 0] === 1) {
    const list = view.scene.structures;
    for (let i = 0; i < list.length; i++) {
      cov = shadeStructure(s, list[i], yaw, e, p);
      if (cov > 0) {
        gather(s, cov);
        break;
      }
    }
  }
  if (a.weight > 0) {
    cov = cover(tableAt(view.midRidge, view.tableStep, yaw) - e, p);
    if (cov > 0) {
      shadeLand(s, oc.midDetail, yaw, e, 0.9, 0.12);
      gather(s, cov);
    }
  }
  if (a.weight > 0) {
    cov = cover(view.scene.seaHorizon - e, p);
    if (cov > 0) {
      shadeSea(s, view, yaw, e);
      gather(s, cov);
    }
  }
  if (a.weight > 0) {
    cov = cover(tableAt(view.farRidge, view.tableStep, yaw) - e, p);
    if (cov > 0) {
      shadeLand(s, oc.farDetail, yaw, e, 0.85, 0.45);
      gather(s, cov);
    }
  }
  if (a.weight > 0) {
    shadeSky(s, view, yaw, e);
    gather(s, 1);
  }
  out[o] = a.r;
  out[o + 1] = a.g;
  out[o + 2] = a.b;
}

/** Scene coordinates of a world direction: yaw (0..2 pi) and height on the unit cylinder. */
export function sceneCoordinates(dx: number, dy: number, dz: number): [number, number] {
  let yaw = Math.atan2(dx, dz);
  if (yaw < 0) yaw += turn;
  return [yaw, dy / Math.hypot(dx, dz)];
}

/** Linear-light RGB radiance seen along the world direction (dx, dy, dz), written to out[o..o+2]. */
export function radianceAlong(view: SceneView, dx: number, dy: number, dz: number, out: Float32Array, o = 0): void {
  const [yaw, h] = sceneCoordinates(dx, dy, dz);
  shadeDirection(view, yaw, h, out, o);
}

/** What the direction (scene coordinates) looks at: the nearest layer covering it at least half. */
export function surfaceAt(view: SceneView, yaw: number, e: number): Surface {
  if (e < tableAt(view.fgRidge, view.tableStep, yaw)) return 'land';
  for (const st of view.scene.structures) if (shadeStructure({ lum: 0, r: 0, g: 0, b: 0 }, st, yaw, e, view.pixelAngle) >= 0.5) return 'structure';
  if (e < tableAt(view.midRidge, view.tableStep, yaw)) return 'land';
  if (e < view.scene.seaHorizon) return 'sea';
  return e < tableAt(view.farRidge, view.tableStep, yaw) ? 'land' : 'sky';
}
