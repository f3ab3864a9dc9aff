/**
 * Orders indices 0..n-1 by a non-negative float32 key, descending, ties by index ascending, with
 * the native numeric sort instead of a comparator callback (several times faster on tens of
 * thousands of corners). The bit pattern of a non-negative float32 orders like its value, so
 * key bits * 2^21 + (2^21 - 1 - index) is an exact double that sorts as wanted; n < 2^21.
 */
export function orderByKeyDescending(keys: Float32Array, n: number): Int32Array {
  if (n >= 1 << 21) throw new RangeError(`Expected fewer than ${1 << 21} keys for orderByKeyDescending but received ${n}`);
  const bits = new Uint32Array(keys.buffer, keys.byteOffset, keys.length);
  const packed = new Float64Array(n);
  const span = 1 << 21;
  for (let i = 0; i < n; i++) {
    const b = keys[i] > 0 ? bits[i] : 0;
    packed[i] = b * span + (span - 1 - i);
  }
  packed.sort();
  const order = new Int32Array(n);
  for (let k = 0; k < n; k++) {
    const v = packed[n - 1 - k];
    order[k] = span - 1 - (v % span);
  }
  return order;
}
