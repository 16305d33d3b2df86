// The click detector's screen (clicks.ts, step 1): the 4th difference of the samples, its energy
// and its peak per run. pass.ts fuses the same arithmetic into the level meter's loop.

/**
 * The screen over x[from, to): Σd² and max|d| accumulate in st[4], st[5]; st[0…3] carry x[n−1]
 * and the last 1st/2nd/3rd differences between runs. With accumulate false (the first four
 * samples, which have no history) d counts as zero.
 */
export function fourthDifference(x: Float64Array, from: number, to: number, st: Float64Array, accumulate: boolean): void {
  // Four cascaded first differences equal the [1, −4, 6, −4, 1] filter, without multiplies.
  let x1 = st[0]!;
  let e1p = st[1]!;
  let e2p = st[2]!;
  let e3p = st[3]!;
  let sq = st[4]!;
  let mx = st[5]!;
  for (let k = from; k < to; k++) {
    const v = x[k]!;
    const e1 = v - x1;
    const e2 = e1 - e1p;
    const e3 = e2 - e2p;
    const d = accumulate ? e3 - e3p : 0;
    x1 = v;
    e1p = e1;
    e2p = e2;
    e3p = e3;
    sq += d * d;
    // Math.abs is branch-free; a `d < 0` test mispredicts half the time on noise.
    const a = Math.abs(d);
    if (a > mx) mx = a;
  }
  st[0] = x1;
  st[1] = e1p;
  st[2] = e2p;
  st[3] = e3p;
  st[4] = sq;
  st[5] = mx;
}
