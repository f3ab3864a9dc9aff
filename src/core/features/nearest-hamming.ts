import { descriptorWords } from './binary-descriptor.js';
import { nearestHammingWasm } from './nearest-hamming-wasm.js';

/**
 * Brute-force nearest neighbours under Hamming distance between two sets of 256-bit descriptors,
 * in both directions from one pass over all pairs: for each descriptor of a its nearest in b
 * (`best`, -1 when b is empty) with the best and second-best distances, and for each descriptor of
 * b the nearest in a (`bestOfB`) with its distance. Distances of 0xffff mean "none". Ties keep the
 * earlier index.
 */
export interface Nearest {
  readonly best: Int32Array;
  readonly bestD: Int32Array;
  readonly secondD: Int32Array;
  readonly bestOfB: Int32Array;
  readonly bestDOfB: Int32Array;
}

export type NearestKernel = 'wasm' | 'loop';

function allocate(na: number, nb: number): Nearest {
  return {
    best: new Int32Array(na).fill(-1),
    bestD: new Int32Array(na).fill(0xffff),
    secondD: new Int32Array(na).fill(0xffff),
    bestOfB: new Int32Array(nb).fill(-1),
    bestDOfB: new Int32Array(nb).fill(0xffff),
  };
}

/** The kernel in TypeScript: the reference, and the fallback where WebAssembly SIMD is missing. */
function nearestByLoop(da: Uint32Array, db: Uint32Array): Nearest {
  const na = (da.length / descriptorWords) | 0;
  const nb = (db.length / descriptorWords) | 0;
  const out = allocate(na, nb);
  const { best, bestD, secondD, bestOfB, bestDOfB } = out;
  for (let i = 0; i < na; i++) {
    const o = i * 8;
    const a0 = da[o], a1 = da[o + 1], a2 = da[o + 2], a3 = da[o + 3];
    const a4 = da[o + 4], a5 = da[o + 5], a6 = da[o + 6], a7 = da[o + 7];
    let b1 = 0xffff, b2 = 0xffff, bi = -1;
    for (let j = 0, q = 0; j < nb; j++, q += 8) {
      // Hamming distance: the SWAR bit count (Warren, "Hacker's Delight", 2nd ed., section 5-1),
      // the words' counts summed as 4-bit and then 8-bit fields before one horizontal add. Written
      // out here, not called: the engine does not inline a function this long.
      let v: number, t: number, acc: number;
      v = a0 ^ db[q]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a1 ^ db[q + 1]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc = (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      v = a2 ^ db[q + 2]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a3 ^ db[q + 3]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc += (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      v = a4 ^ db[q + 4]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a5 ^ db[q + 5]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc += (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      v = a6 ^ db[q + 6]; v -= (v >>> 1) & 0x55555555; t = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      v = a7 ^ db[q + 7]; v -= (v >>> 1) & 0x55555555; t += (v & 0x33333333) + ((v >>> 2) & 0x33333333);
      acc += (t & 0x0f0f0f0f) + ((t >>> 4) & 0x0f0f0f0f);
      // Each byte now holds at most 64: add them in 16-bit fields so that 256 does not wrap.
      acc = (acc & 0x00ff00ff) + ((acc >>> 8) & 0x00ff00ff);
      const d = (acc & 0xffff) + (acc >>> 16);
      if (d < b2) {
        if (d < b1) {
          b2 = b1;
          b1 = d;
          bi = j;
        } else b2 = d;
      }
      if (d < bestDOfB[j]) {
        bestDOfB[j] = d;
        bestOfB[j] = i;
      }
    }
    best[i] = bi;
    bestD[i] = b1;
    secondD[i] = b2;
  }
  return out;
}

// The WebAssembly interface is part of every engine the core runs in, but not of ES2023's type
// library: the little used here, declared locally.
interface WasmInstance {
  readonly exports: {
    readonly memory: { readonly buffer: ArrayBuffer; grow(pages: number): number };
    nearest(na: number, nb: number, pa: number, pb: number, pBest: number, pBestD: number, pSecond: number, pBestOfB: number, pBestDOfB: number): void;
  };
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object) => WasmInstance;
}

let instance: WasmInstance | null | undefined;

/** This thread's instance of the SIMD kernel, or null where the engine cannot run it. */
function wasmKernel(): WasmInstance | null {
  if (instance !== undefined) return instance;
  const api = (globalThis as unknown as { WebAssembly?: WasmApi }).WebAssembly;
  instance = api && api.validate(nearestHammingWasm) ? new api.Instance(new api.Module(nearestHammingWasm)) : null;
  return instance;
}

/** The kernel in WebAssembly SIMD (nearest-hamming.wat), about three times the loop's speed. */
function nearestByWasm(kernel: WasmInstance, da: Uint32Array, db: Uint32Array): Nearest {
  const na = (da.length / descriptorWords) | 0;
  const nb = (db.length / descriptorWords) | 0;
  const pa = 0, pb = pa + 32 * na, pOut = pb + 32 * nb;
  const need = pOut + 4 * (3 * na + 2 * nb);
  const memory = kernel.exports.memory;
  if (memory.buffer.byteLength < need) memory.grow(Math.ceil((need - memory.buffer.byteLength) / 65536));
  const words = new Uint32Array(memory.buffer);
  words.set(da.subarray(0, 8 * na), pa >> 2);
  words.set(db.subarray(0, 8 * nb), pb >> 2);
  const at = [pOut, pOut + 4 * na, pOut + 8 * na, pOut + 12 * na, pOut + 12 * na + 4 * nb];
  kernel.exports.nearest(na, nb, pa, pb, at[0], at[1], at[2], at[3], at[4]);
  const view = (p: number, n: number): Int32Array => new Int32Array(memory.buffer, p, n).slice();
  return { best: view(at[0], na), bestD: view(at[1], na), secondD: view(at[2], na), bestOfB: view(at[3], nb), bestDOfB: view(at[4], nb) };
}

/** Nearest neighbours both ways, with the fastest kernel this engine runs unless one is named. */
export function nearestNeighbours(da: Uint32Array, db: Uint32Array, kernel?: NearestKernel): Nearest {
  if (descriptorWords !== 8) throw new Error('the nearest-neighbour kernels are written for 256-bit descriptors');
  const wasm = kernel === 'loop' ? null : wasmKernel();
  if (kernel === 'wasm' && !wasm) throw new Error('this engine cannot run the WebAssembly SIMD kernel');
  return wasm ? nearestByWasm(wasm, da, db) : nearestByLoop(da, db);
}
