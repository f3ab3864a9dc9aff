/**
 * Rotating-camera sequences rendered from real photographs (test/fixtures/external/photos, sources
 * in test/fixtures/external/SOURCES.md), with exact geometry: the camera turns about its centre
 * inside a prism whose walls, ceiling and floor are those photographs. This is a second corpus,
 * independent of the demo shoot's procedural scene, for checking the judgement on real content.
 *
 * Per output pixel: pixel -> distorted normalised coordinates -> undistorted (Brown's radial model,
 * x_d = x_u (1 + k1 r^2 + k2 r^4) with r the undistorted radius over the focal length, inverted by
 * Newton steps) -> ray -> hit on the prism -> bilinear sample in linear light (sRGB transfer,
 * IEC 61966-2-1) -> 2x2 supersampling. Then motion blur, vignetting, exposure, seeded sensor noise,
 * clipping, sRGB encoding, JPEG with EXIF (CIPA DC-008 tags through sharp).
 *
 * Poses follow src/core/demo/camera.ts (yaw to the right, pitch up, roll clockwise seen from behind;
 * world y up), so the truth's homography of a pair without distortion is rotationHomography() there.
 * `scenarios()` is the catalogue; `npx tsx scripts/photo-survey.ts <outdir>` runs the check on it.
 */
import { mkdir, readdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import sharp from 'sharp';
import type { CameraModel, Pose } from '../../src/core/demo/camera.js';
import { cameraModel, focalLengthPx, worldToCamera } from '../../src/core/demo/camera.js';
import { createRandom } from '../../src/core/numeric/random.js';
import { linearOf8bit, linearToSrgb } from '../../src/core/image/srgb.js';
import { exifRational } from '../../src/main/demo-writer.js';
import { externalFixture } from './images.js';
import { cachedBytes, renderKey, sourcesHash } from './render-cache.js';

// ---------------------------------------------------------------------------------------------
// Photographs

export const photoNames = ['facade', 'boats', 'fog-pier', 'sky', 'forest', 'meadow', 'dune', 'wood', 'peaks', 'river', 'dandelions', 'dock', 'storm', 'grass'] as const;
export type PhotoName = (typeof photoNames)[number];

/** A photograph as decoded: 8-bit sRGB, 3 channels interleaved. */
export interface Photo {
  readonly name: PhotoName;
  readonly width: number;
  readonly height: number;
  readonly data: Uint8Array;
}

const photoCache = new Map<PhotoName, Promise<Photo>>();

export function loadPhoto(name: PhotoName): Promise<Photo> {
  if (!photoNames.includes(name)) throw new TypeError(`Expected one of ${photoNames.join(', ')} for name but received ${String(name)}`);
  let p = photoCache.get(name);
  if (!p) {
    p = sharp(externalFixture(`photos/${name}.jpg`))
      .toColourspace('srgb')
      .removeAlpha()
      .raw()
      .toBuffer({ resolveWithObject: true })
      .then(({ data, info }) => {
        if (info.channels !== 3) throw new TypeError(`Expected 3 channels for photo ${name} but received ${info.channels}`);
        return { name, width: info.width, height: info.height, data: new Uint8Array(data.buffer, data.byteOffset, data.length) };
      });
    photoCache.set(name, p);
  }
  return p;
}

// ---------------------------------------------------------------------------------------------
// Scene

/** One photograph placed on a panel: cropped to cover the panel, optionally magnified. */
export interface PanelSpec {
  readonly photo: PhotoName;
  /** 1 covers the panel with as much of the photo as fits; 2-3 shows a smaller crop, enlarged. */
  readonly magnification?: number;
  /** Where the crop sits in the photo's free margin, -1 (left/top) .. 1 (right/bottom); 0 centred. */
  readonly offsetX?: number;
  readonly offsetY?: number;
}

/**
 * A regular prism around the camera: walls at distance 1 from the centre (wall i faces yaw
 * i * 360 / N), from height -halfHeight to +halfHeight, each split into equal panels from bottom to
 * top; a ceiling and a floor close it.
 */
export interface SceneSpec {
  readonly walls: readonly (readonly PanelSpec[])[];
  readonly halfHeight: number;
  readonly ceiling: PanelSpec;
  readonly floor: PanelSpec;
}

interface PanelLayout {
  readonly photo: Photo;
  /** Photo pixel of the panel's centre. */
  readonly cx: number;
  readonly cy: number;
  /** Photo pixels per scene unit. */
  readonly scale: number;
}

function cropLayout(photo: Photo, panel: PanelSpec, spanW: number, spanH: number, name: string): PanelLayout {
  const m = panel.magnification ?? 1;
  if (!(m >= 1 && m <= 8)) throw new RangeError(`Expected a magnification in 1..8 for ${name}.magnification but received ${m}`);
  const scale = Math.min(photo.width / spanW, photo.height / spanH) * (1 / m);
  const marginX = (photo.width - spanW * scale) / 2, marginY = (photo.height - spanH * scale) / 2;
  return {
    photo,
    cx: (photo.width - 1) / 2 + (panel.offsetX ?? 0) * marginX,
    cy: (photo.height - 1) / 2 + (panel.offsetY ?? 0) * marginY,
    scale,
  };
}

/** The scene laid out for rendering: flat per-wall vectors and per-panel crops. */
export interface PreparedScene {
  readonly spec: SceneSpec;
  readonly n: number;
  readonly panelsPerWall: number;
  readonly halfHeight: number;
  readonly halfWidth: number;
  /** Wall normals and right vectors (x, z) per wall. */
  readonly nx: Float64Array;
  readonly nz: Float64Array;
  readonly panels: readonly PanelLayout[];
  readonly ceiling: PanelLayout;
  readonly floor: PanelLayout;
}

export async function prepareScene(spec: SceneSpec): Promise<PreparedScene> {
  const n = spec.walls.length;
  if (!Number.isInteger(n) || n < 3) throw new RangeError(`Expected 3 or more walls for scene.walls but received ${n}`);
  const p = spec.walls[0].length;
  if (p < 1 || spec.walls.some((w) => w.length !== p)) throw new RangeError(`Expected the same number of panels (1 or more) on every wall for scene.walls but received ${spec.walls.map((w) => w.length).join(', ')}`);
  if (!(spec.halfHeight > 0)) throw new RangeError(`Expected a positive height for scene.halfHeight but received ${spec.halfHeight}`);
  const halfWidth = Math.tan(Math.PI / n);
  const nx = new Float64Array(n), nz = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = (2 * Math.PI * i) / n;
    nx[i] = Math.sin(t);
    nz[i] = Math.cos(t);
  }
  const panelH = (2 * spec.halfHeight) / p;
  const panels: PanelLayout[] = [];
  for (let i = 0; i < n; i++) for (let k = 0; k < p; k++) panels.push(cropLayout(await loadPhoto(spec.walls[i][k].photo), spec.walls[i][k], 2 * halfWidth, panelH, `scene.walls[${i}][${k}]`));
  const span = 2 / Math.cos(Math.PI / n);
  return {
    spec,
    n,
    panelsPerWall: p,
    halfHeight: spec.halfHeight,
    halfWidth,
    nx,
    nz,
    panels,
    ceiling: cropLayout(await loadPhoto(spec.ceiling.photo), spec.ceiling, span, span, 'scene.ceiling'),
    floor: cropLayout(await loadPhoto(spec.floor.photo), spec.floor, span, span, 'scene.floor'),
  };
}

/** Adds w times the bilinear sample (linear light) of photo pixel (px, py) into acc[0..2]; edges clamp. */
function addSample(l: PanelLayout, px: number, py: number, w: number, acc: Float64Array): void {
  const { width, height, data } = l.photo;
  if (px < 0) px = 0;
  else if (px > width - 1) px = width - 1;
  if (py < 0) py = 0;
  else if (py > height - 1) py = height - 1;
  const x0 = Math.min(width - 2, Math.floor(px)), y0 = Math.min(height - 2, Math.floor(py));
  const fx = px - x0, fy = py - y0;
  const w00 = (1 - fx) * (1 - fy) * w, w10 = fx * (1 - fy) * w, w01 = (1 - fx) * fy * w, w11 = fx * fy * w;
  const i00 = (y0 * width + x0) * 3, i01 = i00 + width * 3;
  for (let c = 0; c < 3; c++) {
    acc[c] += w00 * linearOf8bit[data[i00 + c]] + w10 * linearOf8bit[data[i00 + 3 + c]] + w01 * linearOf8bit[data[i01 + c]] + w11 * linearOf8bit[data[i01 + 3 + c]];
  }
}

/** Adds w times the scene's radiance along world direction (dx, dy, dz) into acc. */
function addRay(s: PreparedScene, dx: number, dy: number, dz: number, w: number, acc: Float64Array): void {
  let best = -Infinity, wall = 0;
  for (let i = 0; i < s.n; i++) {
    const d = s.nx[i] * dx + s.nz[i] * dz;
    if (d > best) {
      best = d;
      wall = i;
    }
  }
  // Distance along the ray to the wall plane (n . p = 1) and to the ceiling or floor.
  const tWall = best > 0 ? 1 / best : Infinity;
  const tCap = dy !== 0 ? s.halfHeight / Math.abs(dy) : Infinity;
  if (tCap < tWall) {
    const hx = dx * tCap, hz = dz * tCap;
    const l = dy > 0 ? s.ceiling : s.floor;
    addSample(l, l.cx + hx * l.scale, l.cy + (dy > 0 ? hz : -hz) * l.scale, w, acc);
    return;
  }
  const hx = dx * tWall, hy = dy * tWall, hz = dz * tWall;
  // Along the wall: its right-hand direction (cos t, 0, -sin t) = (nz, 0, -nx).
  const u = hx * s.nz[wall] - hz * s.nx[wall];
  const panelH = (2 * s.halfHeight) / s.panelsPerWall;
  let k = Math.floor((hy + s.halfHeight) / panelH);
  if (k < 0) k = 0;
  else if (k >= s.panelsPerWall) k = s.panelsPerWall - 1;
  const l = s.panels[wall * s.panelsPerWall + k];
  const yc = -s.halfHeight + (k + 0.5) * panelH;
  addSample(l, l.cx + u * l.scale, l.cy - (hy - yc) * l.scale, w, acc);
}

// ---------------------------------------------------------------------------------------------
// Lens

/**
 * Undistorted radius r_u from distorted radius r_d (both over the focal length) under
 * r_d = r_u (1 + k1 r_u^2 + k2 r_u^4): Newton's method from r_u = r_d, a fixed number of steps.
 */
export function undistortRadius(rd: number, k1: number, k2: number): number {
  let r = rd;
  for (let i = 0; i < 8; i++) {
    const r2 = r * r;
    const f = r * (1 + r2 * (k1 + k2 * r2)) - rd;
    const df = 1 + r2 * (3 * k1 + 5 * k2 * r2);
    r -= f / df;
  }
  return r;
}

/** Distorted radius from undistorted radius (Brown's radial model). */
export const distortRadius = (ru: number, k1: number, k2: number): number => ru * (1 + k1 * ru * ru + k2 * ru ** 4);

/** Falloff of light towards the corners. */
export type Vignetting =
  /** cos^4 of the ray's angle to the axis, raised to `strength` (1 = the natural cos^4 law). */
  | { readonly model: 'cos4'; readonly strength: number }
  /** 1 + a2 rho^2 + a4 rho^4, rho the distance from the centre over the half diagonal. */
  | { readonly model: 'poly'; readonly a2: number; readonly a4: number };

// ---------------------------------------------------------------------------------------------
// Frames and sequences

export interface FrameSpec {
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly rollDeg: number;
  /** Exposure the frame received, in EV against the sequence's base (what the pixels show). */
  readonly ev?: number;
  /** Exposure bias written to EXIF (ExposureBiasValue); default 0. */
  readonly evBias?: number;
  /** Motion blur: length in pixels and direction in degrees (0 = along +x, 90 = along +y). */
  readonly blurPx?: number;
  readonly blurDirDeg?: number;
  /** Seconds after the sequence's first frame (DateTimeOriginal + SubSecTimeOriginal). */
  readonly time: number;
}

export interface SequenceSpec {
  readonly width: number;
  readonly height: number;
  /** Focal length of the lens in mm on a 36 mm wide sensor (square pixels). */
  readonly focalLengthMm: number;
  /** Focal length written to EXIF, in mm (default: the true one, to 0.1 mm). */
  readonly exifFocalLengthMm?: number;
  readonly k1?: number;
  readonly k2?: number;
  readonly vignetting?: Vignetting;
  /** Sensor noise in linear light: sigma = sqrt(read^2 + gain * value), per channel, seeded. */
  readonly noise?: { readonly read: number; readonly gain: number };
  /** JPEG quality, 75-92 typical (default 90). */
  readonly jpegQuality?: number;
  /** Shutter time at the sequence's base exposure, s (default 1/125); frames with ev change it. */
  readonly baseExposureTime?: number;
  readonly fNumber?: number;
  readonly iso?: number;
  /** CIPA DC-008 ExposureMode: 0 auto, 1 manual, 2 auto bracket (default 1). */
  readonly exposureMode?: 0 | 1 | 2;
  readonly make?: string;
  readonly model?: string;
  readonly seed: number;
  readonly scene: SceneSpec;
  readonly frames: readonly FrameSpec[];
  /** File names (default IMG_0001.jpg ...). */
  readonly names?: readonly string[];
  /** A 1x1 image without EXIF written beside the frames under this name. */
  readonly stray1x1?: string;
  /** Byte-identical copies: of frame index `of`, under `name`. */
  readonly duplicates?: readonly { readonly of: number; readonly name: string }[];
}

export const frameName = (i: number): string => `IMG_${String(i + 1).padStart(4, '0')}.jpg`;

export interface FrameTruth {
  readonly file: string;
  readonly yawDeg: number;
  readonly pitchDeg: number;
  readonly rollDeg: number;
  readonly focalPx: number;
  readonly focalLengthMm: number;
  readonly exifFocalLengthMm: number;
  readonly k1: number;
  readonly k2: number;
  readonly ev: number;
  readonly evBias: number;
  readonly exposureTime: number;
  readonly blurPx: number;
  readonly blurDirDeg: number;
  readonly time: number;
}

export function sequenceNames(spec: SequenceSpec): string[] {
  if (spec.names && spec.names.length !== spec.frames.length) throw new RangeError(`Expected ${spec.frames.length} names for spec.names but received ${spec.names.length}`);
  return spec.frames.map((_, i) => spec.names?.[i] ?? frameName(i));
}

export function camera(spec: SequenceSpec): CameraModel {
  return cameraModel(spec.width, spec.height, spec.focalLengthMm);
}

export function framesTruth(spec: SequenceSpec): FrameTruth[] {
  const names = sequenceNames(spec);
  const f = focalLengthPx(camera(spec));
  const base = spec.baseExposureTime ?? 1 / 125;
  return spec.frames.map((fr, i) => ({
    file: names[i],
    yawDeg: fr.yawDeg,
    pitchDeg: fr.pitchDeg,
    rollDeg: fr.rollDeg,
    focalPx: f,
    focalLengthMm: spec.focalLengthMm,
    exifFocalLengthMm: spec.exifFocalLengthMm ?? Math.round(spec.focalLengthMm * 10) / 10,
    k1: spec.k1 ?? 0,
    k2: spec.k2 ?? 0,
    ev: fr.ev ?? 0,
    evBias: fr.evBias ?? 0,
    exposureTime: base * Math.pow(2, fr.ev ?? 0),
    blurPx: fr.blurPx ?? 0,
    blurDirDeg: fr.blurDirDeg ?? 0,
    time: fr.time,
  }));
}

function expectLens(spec: SequenceSpec, rdMax: number): void {
  const k1 = spec.k1 ?? 0, k2 = spec.k2 ?? 0;
  const ru = undistortRadius(rdMax, k1, k2);
  const r2 = ru * ru;
  const slope = 1 + r2 * (3 * k1 + 5 * k2 * r2);
  if (!(slope > 0.05) || Math.abs(distortRadius(ru, k1, k2) - rdMax) > 1e-9) {
    throw new RangeError(`Expected a distortion that stays one-to-one over the frame for k1, k2 but received ${k1}, ${k2}`);
  }
}

/**
 * Renders one frame into linear light, RGB interleaved, before noise and clipping: 2x2 supersampled
 * rays through the lens, vignetting and exposure applied, motion blur along a line.
 */
export function renderLinear(scene: PreparedScene, spec: SequenceSpec, frame: FrameSpec): Float32Array {
  const { width: w, height: h } = spec;
  const cam = camera(spec);
  const f = focalLengthPx(cam);
  const cx = (w - 1) / 2, cy = (h - 1) / 2;
  const k1 = spec.k1 ?? 0, k2 = spec.k2 ?? 0;
  const distorted = k1 !== 0 || k2 !== 0;
  const rdMax = Math.hypot(cx + 0.5, cy + 0.5) / f;
  expectLens(spec, rdMax);
  const pose: Pose = { yawDeg: frame.yawDeg, pitchDeg: frame.pitchDeg, rollDeg: frame.rollDeg };
  const r = worldToCamera(pose);
  const gain = Math.pow(2, frame.ev ?? 0);
  const vig = spec.vignetting;
  const out = new Float32Array(w * h * 3);
  const acc = new Float64Array(3);
  const sub = [-0.25, 0.25];
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      acc[0] = 0;
      acc[1] = 0;
      acc[2] = 0;
      let shade = 0;
      for (let sy = 0; sy < 2; sy++) {
        for (let sx = 0; sx < 2; sx++) {
          let u = (x + sub[sx] - cx) / f, v = (y + sub[sy] - cy) / f;
          const rd = Math.sqrt(u * u + v * v);
          let ru = rd;
          if (distorted && rd > 0) {
            ru = undistortRadius(rd, k1, k2);
            const s = ru / rd;
            u *= s;
            v *= s;
          }
          // Camera ray (u, v, 1) in world coordinates: u right + v down + forward (rows of R).
          addRay(scene, r[0] * u + r[3] * v + r[6], r[1] * u + r[4] * v + r[7], r[2] * u + r[5] * v + r[8], 0.25, acc);
          if (!vig) shade += 0.25;
          else if (vig.model === 'cos4') shade += 0.25 * Math.pow(1 + ru * ru, -2 * vig.strength);
          else {
            const rho2 = (rd * rd) / (rdMax * rdMax);
            shade += 0.25 * (1 + rho2 * (vig.a2 + vig.a4 * rho2));
          }
        }
      }
      const o = (y * w + x) * 3, k = gain * shade;
      out[o] = acc[0] * k;
      out[o + 1] = acc[1] * k;
      out[o + 2] = acc[2] * k;
    }
  }
  const blur = frame.blurPx ?? 0;
  return blur > 0 ? motionBlur(out, w, h, blur, frame.blurDirDeg ?? 0) : out;
}

/** Averages the image along a straight line of `length` px centred on each pixel (bilinear taps, edges clamp). */
export function motionBlur(src: Float32Array, w: number, h: number, length: number, dirDeg: number): Float32Array {
  const taps = Math.max(2, Math.ceil(length) + 1);
  const dx = Math.cos((dirDeg * Math.PI) / 180), dy = Math.sin((dirDeg * Math.PI) / 180);
  const out = new Float32Array(src.length);
  for (let t = 0; t < taps; t++) {
    const s = (t / (taps - 1) - 0.5) * length;
    const ox = s * dx, oy = s * dy;
    for (let y = 0; y < h; y++) {
      let py = y + oy;
      py = py < 0 ? 0 : py > h - 1 ? h - 1 : py;
      const y0 = Math.min(h - 2, Math.floor(py)), fy = py - y0;
      for (let x = 0; x < w; x++) {
        let px = x + ox;
        px = px < 0 ? 0 : px > w - 1 ? w - 1 : px;
        const x0 = Math.min(w - 2, Math.floor(px)), fx = px - x0;
        const i00 = (y0 * w + x0) * 3, i01 = i00 + w * 3, o = (y * w + x) * 3;
        const w00 = (1 - fx) * (1 - fy) / taps, w10 = fx * (1 - fy) / taps, w01 = (1 - fx) * fy / taps, w11 = fx * fy / taps;
        for (let c = 0; c < 3; c++) out[o + c] += w00 * src[i00 + c] + w10 * src[i00 + 3 + c] + w01 * src[i01 + c] + w11 * src[i01 + 3 + c];
      }
    }
  }
  return out;
}

/** 16-bit linear code to 8-bit sRGB: fine enough that the table adds well under a tenth of a level. */
const srgbOf16 = ((): Uint8Array => {
  const t = new Uint8Array(65536);
  for (let i = 0; i < 65536; i++) t[i] = Math.round(255 * linearToSrgb(i / 65535));
  return t;
})();

/** The sensor's output: noise (seeded), clipping, sRGB encoding to 8 bits. */
export function toSensor8bit(lin: Float32Array, noise: SequenceSpec['noise'], seed: number): Uint8Array {
  const out = new Uint8Array(lin.length);
  const rnd = createRandom(seed);
  // Normal deviates drawn from a seeded table by seeded indices: Box-Muller per value costs more
  // than the rest of the frame, and 65536 deviates in random order are as good as fresh ones here.
  const table = new Float32Array(65536);
  for (let i = 0; i < table.length; i++) table[i] = rnd.normal();
  let state = (seed ^ 0x5bd1e995) >>> 0 || 1;
  const read2 = noise ? noise.read * noise.read : 0, gain = noise?.gain ?? 0;
  for (let i = 0; i < lin.length; i++) {
    let v = lin[i];
    if (noise) {
      // xorshift32 (Marsaglia 2003) for the table index.
      state ^= state << 13;
      state ^= state >>> 17;
      state ^= state << 5;
      v += Math.sqrt(read2 + gain * (v > 0 ? v : 0)) * table[(state >>> 8) & 0xffff];
    }
    out[i] = srgbOf16[v <= 0 ? 0 : v >= 1 ? 65535 : Math.round(v * 65535)];
  }
  return out;
}

const pad2 = (n: number): string => String(n).padStart(2, '0');

/** EXIF of one frame, as sharp's withExif takes it (IFD0 the image, IFD2 the Exif sub-IFD). */
export function frameExif(spec: SequenceSpec, t: FrameTruth): { IFD0: Record<string, string>; IFD2: Record<string, string> } {
  // Local capture time from a fixed start, 2026-05-14 10:00:00.
  const ms = Math.round(t.time * 1000);
  const total = 10 * 3600 + Math.floor(ms / 1000);
  const dateTime = `2026:05:14 ${pad2(Math.floor(total / 3600))}:${pad2(Math.floor(total / 60) % 60)}:${pad2(total % 60)}`;
  // 36 mm wide sensor of the frame's aspect: the 35 mm equivalent scales by the diagonals.
  const f35 = (t.exifFocalLengthMm * Math.hypot(36, 24)) / Math.hypot(36, (36 * spec.height) / spec.width);
  return {
    IFD0: { Make: spec.make ?? 'Seamscout', Model: spec.model ?? 'Photo-wall camera', DateTime: dateTime },
    IFD2: {
      ExposureTime: exifRational(t.exposureTime, 100000),
      FNumber: exifRational(spec.fNumber ?? 8),
      ISOSpeedRatings: String(spec.iso ?? 100),
      ExposureBiasValue: exifRational(t.evBias, 100),
      ExposureMode: String(spec.exposureMode ?? 1),
      FocalLength: exifRational(t.exifFocalLengthMm, 100),
      FocalLengthIn35mmFilm: String(Math.round(f35)),
      DateTimeOriginal: dateTime,
      SubSecTimeOriginal: String(ms % 1000).padStart(3, '0'),
    },
  };
}

export function encodeFrame(pixels: Uint8Array, spec: SequenceSpec, t: FrameTruth): Promise<Buffer> {
  return sharp(Buffer.from(pixels.buffer, pixels.byteOffset, pixels.byteLength), { raw: { width: spec.width, height: spec.height, channels: 3 } })
    .withExif(frameExif(spec, t))
    .withMetadata({ orientation: 1 })
    .jpeg({ quality: spec.jpegQuality ?? 90, mozjpeg: false })
    .toBuffer();
}

export interface WrittenSequence {
  readonly folder: string;
  readonly files: readonly string[];
  readonly frames: readonly FrameTruth[];
  readonly elapsedMs: number;
}

let rendererSources: string | null = null;

/**
 * renderLinear's output for one frame, from the render cache (test/helpers/render-cache.ts) when
 * an earlier file or run rendered the same frame: keyed by everything renderLinear reads, so
 * frames shared by scenarios (a subset, renamed, retimed) are rendered once. Noise, clipping and
 * encoding are redone, being cheap and depending on the frame's index and time.
 */
async function cachedLinear(spec: SequenceSpec, frame: FrameSpec, render: () => Promise<Float32Array>): Promise<Float32Array> {
  rendererSources ??= sourcesHash(['test/helpers/photo-sequences.ts'], ['test/fixtures/external/photos']);
  const key = renderKey(rendererSources, {
    kind: 'photo-linear',
    scene: spec.scene,
    width: spec.width,
    height: spec.height,
    focalLengthMm: spec.focalLengthMm,
    k1: spec.k1 ?? 0,
    k2: spec.k2 ?? 0,
    vignetting: spec.vignetting ?? null,
    pose: [frame.yawDeg, frame.pitchDeg, frame.rollDeg],
    ev: frame.ev ?? 0,
    blur: [frame.blurPx ?? 0, frame.blurDirDeg ?? 0],
  });
  const bytes = await cachedBytes(key, async () => {
    const lin = await render();
    return new Uint8Array(lin.buffer, lin.byteOffset, lin.byteLength);
  });
  return new Float32Array(bytes.buffer, bytes.byteOffset, bytes.byteLength / 4);
}

/**
 * Renders and writes a sequence into `folder`, which must be missing or empty: nothing is written
 * anywhere else and nothing is overwritten. Encoding of one frame overlaps rendering of the next.
 */
export async function writeSequence(folder: string, spec: SequenceSpec): Promise<WrittenSequence> {
  const started = performance.now();
  await mkdir(folder, { recursive: true });
  const present = await readdir(folder);
  if (present.length > 0) throw new Error(`Expected an empty folder for folder but received ${folder} holding ${present.length} entries`);
  const truth = framesTruth(spec);
  let scene: Promise<PreparedScene> | null = null;
  const files: string[] = [];
  const buffers: Buffer[] = [];
  let pending: Promise<void> = Promise.resolve();
  for (let i = 0; i < spec.frames.length; i++) {
    const lin = await cachedLinear(spec, spec.frames[i], async () => renderLinear(await (scene ??= prepareScene(spec.scene)), spec, spec.frames[i]));
    const px = toSensor8bit(lin, spec.noise, (spec.seed * 7919 + i * 104729) >>> 0);
    await pending;
    const t = truth[i];
    pending = encodeFrame(px, spec, t).then(async (buf) => {
      buffers[i] = buf;
      await writeFile(join(folder, t.file), buf, { flag: 'wx' });
      files.push(t.file);
    });
  }
  await pending;
  for (const d of spec.duplicates ?? []) {
    if (!buffers[d.of]) throw new RangeError(`Expected a frame index for duplicates.of but received ${d.of}`);
    await writeFile(join(folder, d.name), buffers[d.of], { flag: 'wx' });
    files.push(d.name);
  }
  if (spec.stray1x1) {
    const one = await sharp({ create: { width: 1, height: 1, channels: 3, background: { r: 128, g: 128, b: 128 } } }).jpeg({ quality: 90 }).toBuffer();
    await writeFile(join(folder, spec.stray1x1), one, { flag: 'wx' });
    files.push(spec.stray1x1);
  }
  return { folder, files, frames: truth, elapsedMs: performance.now() - started };
}

// ---------------------------------------------------------------------------------------------
// Exact geometry of the truth

/** Maps pixels of frame a to frame b through the lens and the rotation; null when behind b. */
export function pixelMapper(spec: SequenceSpec, a: Pose, b: Pose): (x: number, y: number) => [number, number] | null {
  const f = focalLengthPx(camera(spec));
  const cx = (spec.width - 1) / 2, cy = (spec.height - 1) / 2;
  const k1 = spec.k1 ?? 0, k2 = spec.k2 ?? 0;
  const ra = worldToCamera(a), rb = worldToCamera(b);
  return (x, y) => {
    let u = (x - cx) / f, v = (y - cy) / f;
    const rd = Math.sqrt(u * u + v * v);
    if (rd > 0) {
      const s = undistortRadius(rd, k1, k2) / rd;
      u *= s;
      v *= s;
    }
    const dx = ra[0] * u + ra[3] * v + ra[6], dy = ra[1] * u + ra[4] * v + ra[7], dz = ra[2] * u + ra[5] * v + ra[8];
    const bx = rb[0] * dx + rb[1] * dy + rb[2] * dz, by = rb[3] * dx + rb[4] * dy + rb[5] * dz, bz = rb[6] * dx + rb[7] * dy + rb[8] * dz;
    if (bz <= 1e-9) return null;
    const ub = bx / bz, vb = by / bz;
    const ru = Math.sqrt(ub * ub + vb * vb);
    const s = ru > 0 ? distortRadius(ru, k1, k2) / ru : 1;
    return [cx + ub * s * f, cy + vb * s * f];
  };
}

/** Share of frame a's area that frame b also sees (grid of 64 x 64 samples). */
export function trueOverlap(spec: SequenceSpec, a: Pose, b: Pose): number {
  const n = 64;
  const map = pixelMapper(spec, a, b);
  let inside = 0;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const p = map(((i + 0.5) / n) * spec.width - 0.5, ((j + 0.5) / n) * spec.height - 0.5);
      if (p && p[0] >= -0.5 && p[0] <= spec.width - 0.5 && p[1] >= -0.5 && p[1] <= spec.height - 0.5) inside++;
    }
  }
  return inside / (n * n);
}

// ---------------------------------------------------------------------------------------------
// The catalogue of scenarios

/** A finding the check should make: a flag code on a frame, on a pair, or a hole where to aim. */
export interface ExpectedFinding {
  readonly code: string;
  readonly frame?: string;
  readonly pair?: readonly [string, string];
  /** For coverage holes: where to aim, degrees, in the truth's yaw and pitch. */
  readonly yawDeg?: number;
  readonly pitchDeg?: number;
}

export interface ScenarioTruth {
  /** ok for clean controls; the worst verdict a fault should get otherwise (null: not stated). */
  readonly verdict: 'ok' | 'weak' | 'reshoot' | null;
  /** Every flag the check should raise; nothing else should be flagged. */
  readonly findings: readonly ExpectedFinding[];
  /** Files that must be kept out of the sequence, with the skip code when one exists. */
  readonly setApart: readonly { readonly file: string; readonly code: string | null }[];
  /** Overlap of each planned neighbour pair in shooting order (exact, from the geometry), by pair. */
  readonly neighbourOverlaps: readonly { readonly a: string; readonly b: string; readonly overlap: number }[];
}

export interface Scenario {
  readonly name: string;
  readonly kind: 'clean' | 'fault';
  readonly description: string;
  readonly spec: SequenceSpec;
  readonly truth: ScenarioTruth;
}

/**
 * Six walls of two panels each, a ceiling and a floor: fourteen photographs, each used once, so that
 * no two places of the scene share content (a photo shown twice, even at another scale, gives
 * frames that match where they do not overlap). Soft ones (storm, wood, fog, dune) sit beside or
 * below textured ones, so that every neighbour pair of a row at pitch -20, 0 or +20 sees some texture.
 */
export const mixedScene: SceneSpec = {
  halfHeight: 1,
  walls: [
    [{ photo: 'meadow' }, { photo: 'facade' }],
    [{ photo: 'storm' }, { photo: 'boats' }],
    [{ photo: 'forest' }, { photo: 'peaks' }],
    [{ photo: 'wood', magnification: 2 }, { photo: 'dune' }],
    [{ photo: 'fog-pier', magnification: 1.8, offsetY: 1 }, { photo: 'dock' }],
    [{ photo: 'river' }, { photo: 'dandelions' }],
  ],
  ceiling: { photo: 'sky' },
  floor: { photo: 'grass' },
};

/** Two walls of soft content only (a pier in fog under sky; wood grain magnified under storm clouds), four textured; every photograph once. */
export const softScene: SceneSpec = {
  halfHeight: 1,
  walls: [
    [{ photo: 'meadow' }, { photo: 'facade' }],
    [{ photo: 'fog-pier', magnification: 1.6, offsetY: 1 }, { photo: 'sky' }],
    [{ photo: 'forest' }, { photo: 'dune' }],
    [{ photo: 'boats' }, { photo: 'peaks' }],
    [{ photo: 'wood', magnification: 2.5 }, { photo: 'storm', magnification: 1.5, offsetY: -1 }],
    [{ photo: 'river' }, { photo: 'dandelions' }],
  ],
  ceiling: { photo: 'dock' },
  floor: { photo: 'grass' },
};

const mildNoise = { read: 0.001, gain: 0.0002 } as const;
const strongNoise = { read: 0.004, gain: 0.0015 } as const;

/** Frames of one sweep at a pitch, `dt` seconds apart. */
export function sweep(count: number, stepDeg: number, o: { startDeg?: number; pitchDeg?: number; dt?: number; t0?: number } = {}): FrameSpec[] {
  return Array.from({ length: count }, (_, i) => ({ yawDeg: (o.startDeg ?? 0) + i * stepDeg, pitchDeg: o.pitchDeg ?? 0, rollDeg: 0, time: (o.t0 ?? 0) + i * (o.dt ?? 1.5) }));
}

const poseOf = (f: FrameSpec): Pose => ({ yawDeg: f.yawDeg, pitchDeg: f.pitchDeg, rollDeg: f.rollDeg });

function neighbourOverlaps(spec: SequenceSpec, pairs: readonly (readonly [number, number])[]): ScenarioTruth['neighbourOverlaps'] {
  const names = sequenceNames(spec);
  return pairs.map(([i, j]) => ({ a: names[i], b: names[j], overlap: Math.round(trueOverlap(spec, poseOf(spec.frames[i]), poseOf(spec.frames[j])) * 1000) / 1000 }));
}

const consecutive = (n: number): [number, number][] => Array.from({ length: n - 1 }, (_, i) => [i, i + 1] as [number, number]);

/** The yaw step after which frame b sees `target` of frame a (bisection on the exact overlap). */
function stepForOverlap(spec: SequenceSpec, target: number): number {
  let lo = 1, hi = 89;
  for (let i = 0; i < 30; i++) {
    const mid = (lo + hi) / 2;
    const o = trueOverlap(spec, { yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, { yawDeg: mid, pitchDeg: 0, rollDeg: 0 });
    if (o > target) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

function clean(name: string, description: string, spec: SequenceSpec, pairs: readonly (readonly [number, number])[], setApart: ScenarioTruth['setApart'] = []): Scenario {
  // A file set apart is listed as skipped, which may leave the verdict at weak: not stated then.
  return { name, kind: 'clean', description, spec, truth: { verdict: setApart.length ? null : 'ok', findings: [], setApart, neighbourOverlaps: neighbourOverlaps(spec, pairs) } };
}

function fault(name: string, description: string, spec: SequenceSpec, pairs: readonly (readonly [number, number])[], verdict: ScenarioTruth['verdict'], findings: readonly ExpectedFinding[], setApart: ScenarioTruth['setApart'] = []): Scenario {
  return { name, kind: 'fault', description, spec, truth: { verdict, findings, setApart, neighbourOverlaps: neighbourOverlaps(spec, pairs) } };
}

const base = (seed: number, frames: readonly FrameSpec[], extra: Partial<SequenceSpec> = {}): SequenceSpec => ({
  width: 1500,
  height: 1000,
  focalLengthMm: 28,
  noise: mildNoise,
  jpegQuality: 90,
  seed,
  scene: mixedScene,
  frames,
  ...extra,
});

/** A turn of `count` frames, closing pairs included. */
const turnPairs = (count: number): [number, number][] => [...consecutive(count), [count - 1, 0]];

function twoRow(missingUpperYaw: number | null): { frames: FrameSpec[]; pairs: [number, number][] } {
  const lower = sweep(8, 45, { pitchDeg: -20, dt: 1.5 });
  const upper = sweep(8, 45, { pitchDeg: 20, dt: 1.5, t0: 14 }).filter((f) => f.yawDeg !== missingUpperYaw);
  const frames = [...lower, ...upper];
  const pairs: [number, number][] = [];
  for (let i = 0; i < frames.length; i++) {
    for (let j = i + 1; j < frames.length; j++) {
      const dy = Math.abs(((frames[i].yawDeg - frames[j].yawDeg + 540) % 360) - 180);
      if ((frames[i].pitchDeg === frames[j].pitchDeg && dy === 45) || (frames[i].pitchDeg !== frames[j].pitchDeg && dy === 0)) pairs.push([i, j]);
    }
  }
  return { frames, pairs };
}

/** Every scenario of the corpus: clean controls first, then one planted fault each. */
export function scenarios(): Scenario[] {
  const list: Scenario[] = [];
  const n = frameName;

  list.push(clean('clean-turn-12', 'full turn, 12 frames 30 deg apart, 28 mm, mild noise, q90', base(101, sweep(12, 30)), turnPairs(12)));
  {
    // Hand-held: pitch and roll wander by a degree or two from frame to frame.
    const frames = sweep(8, 35, { startDeg: -120 }).map((f, i) => ({ ...f, pitchDeg: 1.5 * Math.sin(1.7 * i), rollDeg: Math.cos(2.3 * i) }));
    list.push(clean('clean-pan-8', 'hand-held partial pan, 8 frames 35 deg apart, pitch and roll within 1.5 deg, 28 mm, q88', base(102, frames, { jpegQuality: 88 }), consecutive(8)));
  }
  {
    // Three brackets per station, 0 / -2 / +2 EV by shutter time with the bias written, as an auto bracket writes them.
    const frames: FrameSpec[] = [];
    for (let s = 0; s < 8; s++) for (const [k, ev] of [0, -2, 2].entries()) frames.push({ yawDeg: s * 45, pitchDeg: 0, rollDeg: 0, ev, evBias: ev, time: s * 4 + k * 0.3 });
    const refs = Array.from({ length: 8 }, (_, s) => s * 3);
    const pairs = [...refs.slice(1).map((r, i) => [refs[i], r] as [number, number]), [refs[7], refs[0]] as [number, number]];
    list.push(clean('clean-bracket-turn', 'full turn of 8 stations x 3 brackets (0/-2/+2 EV bias, ExposureMode 2), 24 mm', base(103, frames, { focalLengthMm: 24, exposureMode: 2 }), pairs));
  }
  {
    const { frames, pairs } = twoRow(null);
    list.push(clean('clean-two-row', 'two rows at pitch -20 and +20, 8 + 8 frames, 24 mm', base(104, frames, { focalLengthMm: 24 }), pairs));
  }
  list.push(clean('clean-soft', 'full turn where 4 of 12 frames see mostly sky, fog, water or magnified wood; noise, cos^4 vignetting, q85', base(105, sweep(12, 30), { scene: softScene, vignetting: { model: 'cos4', strength: 0.5 }, jpegQuality: 85 }), turnPairs(12)));
  list.push(clean('clean-turn-3000', 'full turn at 3000x2000, 12 frames, noise, polynomial vignetting, q85', base(106, sweep(12, 30), { width: 3000, height: 2000, noise: { read: 0.002, gain: 0.0005 }, vignetting: { model: 'poly', a2: -0.3, a4: 0.05 }, jpegQuality: 85 }), turnPairs(12)));
  // Real lenses: the same turn through Brown's radial model. No flag is the right answer.
  for (const [name, k1, k2] of [['lens-barrel-015', -0.15, 0], ['lens-barrel-008', -0.08, 0.01], ['lens-barrel-003', -0.03, 0], ['lens-pincushion-005', 0.05, 0]] as const) {
    list.push(clean(name, `full turn, 12 frames, 28 mm through k1 = ${k1}, k2 = ${k2}`, base(107, sweep(12, 30), { k1, k2 }), turnPairs(12)));
  }
  list.push(clean('exif-focal-minus3', 'full turn, 12 frames at 33 mm with 32 mm in EXIF (3 % short, rounded to the mm)', base(108, sweep(12, 30), { focalLengthMm: 33, exifFocalLengthMm: 32 }), turnPairs(12)));
  list.push(clean('exif-focal-plus3', 'full turn, 12 frames at 33 mm with 34 mm in EXIF (3 % long)', base(109, sweep(12, 30), { focalLengthMm: 33, exifFocalLengthMm: 34 }), turnPairs(12)));

  {
    // Hand-held pan in auto exposure: frame 5 comes out +1.3 EV by its shutter time alone, 2 s after frame 4.
    const probe = base(110, []);
    const step = stepForOverlap(probe, 0.33);
    const frames = sweep(8, step, { startDeg: -140, dt: 1 }).map((f, i) => ({ ...f, time: i < 4 ? i : i + 1, ev: i === 4 ? 1.3 : 0 }));
    // The eight frames come round: IMG_0008 to IMG_0001 is 360 - 7 steps (47.8 deg), whose exact
    // overlap (28.7 %) is under the 30 % a neighbour pair is aimed at: a true finding on that pair.
    const spec = base(110, frames, { exposureMode: 0 });
    const closing = trueOverlap(spec, poseOf(frames[7]), poseOf(frames[0])) < 0.3 ? [{ code: 'low-overlap', pair: [n(7), n(0)] } as const] : [];
    list.push(fault('fault-ae-jump', `partial pan of 8 frames ${step.toFixed(1)} deg apart (33 % overlap), auto exposure; frame 5 +1.3 EV by shutter time, no bias, 2 s after frame 4`, spec, consecutive(8), 'weak', [
      // One cause, one finding: on frame 5 or on its pairs, and no bracket made of it.
      { code: 'exposure-jump', frame: n(4) },
      ...closing,
    ]));
  }
  {
    const frames = sweep(12, 30).map((f, i) => (i === 6 ? { ...f, blurPx: 14, blurDirDeg: 0 } : f));
    list.push(fault('fault-motion-blur', 'full turn, 12 frames; frame 7 smeared 14 px along the pan', base(111, frames), turnPairs(12), 'reshoot', [{ code: 'blurred', frame: n(6) }]));
  }
  {
    const probe = base(112, [], { focalLengthMm: 28 });
    const gap = stepForOverlap(probe, 0.08);
    const frames = sweep(8, 35, { startDeg: -150 }).map((f, i) => (i >= 4 ? { ...f, yawDeg: f.yawDeg + gap - 35 } : f));
    list.push(fault('fault-gap-8pc', `partial pan of 8 frames 35 deg apart but ${gap.toFixed(1)} deg between frames 4 and 5 (8 % overlap); strong noise, cos^4 vignetting, q80`, base(112, frames, { noise: strongNoise, vignetting: { model: 'cos4', strength: 1 }, jpegQuality: 80 }), consecutive(8), 'reshoot', [
      { code: 'low-overlap', pair: [n(3), n(4)] },
    ]));
  }
  {
    const { frames, pairs } = twoRow(135);
    list.push(fault('fault-two-row-missing', 'two rows at -20 / +20 deg, 8 + 7 frames: the upper frame at yaw 135 is missing', base(113, frames, { focalLengthMm: 24 }), pairs, 'reshoot', [
      { code: 'coverage-hole', yawDeg: 135, pitchDeg: 20 },
    ]));
  }
  list.push(fault('fault-short-turn', 'a turn that stops short: 10 frames 30 deg apart (0..270), about 24 deg of the horizon never seen', base(114, sweep(10, 30)), consecutive(10), 'reshoot', [
    { code: 'no-closure', pair: [n(9), n(0)] },
  ]));
  list.push(clean('stray-1x1', 'clean full turn of 12 frames plus a 1x1 JPEG without EXIF among them', base(115, sweep(12, 30), { stray1x1: 'IMG_0006_1x1.jpg' }), turnPairs(12), [{ file: 'IMG_0006_1x1.jpg', code: null }]));
  list.push(clean('duplicates', 'clean full turn of 12 frames plus byte-identical copies of frames 4 and 9', base(116, sweep(12, 30), { duplicates: [{ of: 3, name: 'IMG_0004_1.jpg' }, { of: 8, name: 'IMG_0009_1.jpg' }] }), turnPairs(12), [
    { file: 'IMG_0004_1.jpg', code: 'duplicate' },
    { file: 'IMG_0009_1.jpg', code: 'duplicate' },
  ]));
  // File names follow the frames as shot.
  return list.map((s) => (s.spec.names ? s : { ...s, spec: { ...s.spec, names: s.spec.frames.map((_, i) => n(i)) } }));
}
