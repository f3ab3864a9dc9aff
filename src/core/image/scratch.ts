/**
 * Reusable scratch buffers, so kernels allocate once per image size rather than per call.
 * A pool hands out a view of at least the requested length under a name; asking again under the
 * same name returns the same memory (grown when needed). One pool per worker, never shared.
 */
export interface ScratchPool {
  float32(name: string, length: number): Float32Array;
  float64(name: string, length: number): Float64Array;
  int32(name: string, length: number): Int32Array;
  uint8(name: string, length: number): Uint8Array;
}

type Ctor<T> = new (n: number) => T;

export function createScratchPool(): ScratchPool {
  const buffers = new Map<string, Float32Array | Float64Array | Int32Array | Uint8Array>();
  function get<T extends Float32Array | Float64Array | Int32Array | Uint8Array>(ctor: Ctor<T>, name: string, length: number): T {
    const key = `${ctor.name}:${name}`;
    let buf = buffers.get(key) as T | undefined;
    if (!buf || buf.length < length) {
      buf = new ctor(Math.max(length, 1));
      buffers.set(key, buf);
    }
    return buf.subarray(0, length) as T;
  }
  return {
    float32: (name, n) => get(Float32Array, name, n),
    float64: (name, n) => get(Float64Array, name, n),
    int32: (name, n) => get(Int32Array, name, n),
    uint8: (name, n) => get(Uint8Array, name, n),
  };
}
