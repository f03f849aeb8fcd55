/**
 * Stable ordering of row indices by a numeric key, for tables of millions of rows: an LSD radix
 * sort over the key's IEEE-754 bits (four 16-bit passes), linear in the rows, where a comparator
 * sort is n·log n with a function call per comparison. Ties keep the input order; NaN sorts last.
 */

/**
 * `indices` reordered by `values[index]`, ascending or descending, stable (equal keys keep
 * their order in `indices`), NaN last either way. Returns a new array.
 */
export function argsortByValue(
  indices: Uint32Array,
  values: ArrayLike<number>,
  descending = false
): Uint32Array {
  // NaN rows go last in their input order; the rest are radix-sorted.
  const real: number[] = [];
  const nan: number[] = [];
  for (let j = 0; j < indices.length; j++) {
    (Number.isNaN(values[indices[j]]) ? nan : real).push(indices[j]);
  }
  const keys = Uint32Array.from(real);
  const n = keys.length;
  // Sortable 64-bit keys as four 16-bit digits: flip the sign bit of positives and every bit of
  // negatives, so unsigned order equals numeric order (common practice for float radix sorts).
  const digits = new Uint16Array(n * 4);
  const scratch = new Float64Array(1);
  const words = new Uint32Array(scratch.buffer);
  for (let j = 0; j < n; j++) {
    const value = values[keys[j]];
    // Descending is ascending on the negated value; + 0 turns −0 into 0 so the two tie.
    scratch[0] = (descending ? -value : value) + 0;
    if (words[1] & 0x80000000) {
      words[0] = ~words[0];
      words[1] = ~words[1];
    } else {
      words[1] |= 0x80000000;
    }
    digits[j * 4] = words[0] & 0xffff;
    digits[j * 4 + 1] = words[0] >>> 16;
    digits[j * 4 + 2] = words[1] & 0xffff;
    digits[j * 4 + 3] = words[1] >>> 16;
  }
  let order = new Uint32Array(n);
  for (let j = 0; j < n; j++) {
    order[j] = j;
  }
  let next = new Uint32Array(n);
  const counts = new Uint32Array(65537);
  for (let pass = 0; pass < 4; pass++) {
    counts.fill(0);
    for (let j = 0; j < n; j++) {
      counts[digits[j * 4 + pass] + 1]++;
    }
    for (let d = 0; d < 65536; d++) {
      counts[d + 1] += counts[d];
    }
    for (let j = 0; j < n; j++) {
      const position = order[j];
      next[counts[digits[position * 4 + pass]]++] = position;
    }
    [order, next] = [next, order];
  }
  const out = new Uint32Array(indices.length);
  for (let j = 0; j < n; j++) {
    out[j] = keys[order[j]];
  }
  out.set(nan, n);
  return out;
}
