import type { ClickDetector } from './clicks';
import type { LevelMeter } from './levels';

// The per-channel streaming pass: one loop over each block feeds both the level meter and the
// click detector. Fused because the two together cost about a third less than two separate loops
// over the same samples, and this loop is most of the analysis time on a long capture.

/**
 * Over x[from, to): sums = [Σx, Σx², min, max] for the levels, and the click screen's Σd² and
 * max|d| of the 4th difference (as fourthDifference in click-screen.ts: four cascaded first
 * differences), carried in st between runs.
 */
function levelsAndScreen(x: Float64Array, from: number, to: number, st: Float64Array, sums: Float64Array): void {
  let sum = 0;
  let sq = 0;
  let lo = Infinity;
  let hi = -Infinity;
  let x1 = st[0]!;
  let e1p = st[1]!;
  let e2p = st[2]!;
  let e3p = st[3]!;
  let dsq = st[4]!;
  let dmax = st[5]!;
  for (let k = from; k < to; k++) {
    const v = x[k]!;
    sum += v;
    sq += v * v;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
    const e1 = v - x1;
    const e2 = e1 - e1p;
    const e3 = e2 - e2p;
    const d = e3 - e3p;
    x1 = v;
    e1p = e1;
    e2p = e2;
    e3p = e3;
    dsq += d * d;
    dmax = Math.max(dmax, Math.abs(d));
  }
  st[0] = x1;
  st[1] = e1p;
  st[2] = e2p;
  st[3] = e3p;
  st[4] = dsq;
  st[5] = dmax;
  sums[0] = sum;
  sums[1] = sq;
  sums[2] = lo;
  sums[3] = hi;
}

export class ChannelPass {
  private readonly sums = new Float64Array(4);
  private readonly levels: LevelMeter;
  private readonly clicks: ClickDetector;

  constructor(levels: LevelMeter, clicks: ClickDetector) {
    this.levels = levels;
    this.clicks = clicks;
  }

  process(x: Float64Array, length: number): void {
    const { levels, clicks } = this;
    // Runs stay inside one waveform point, one segment and one click sub-block.
    for (let i = 0; i < length; ) {
      const to = i + Math.min(length - i, levels.room(), clicks.room());
      if (levels.wantsCrossings || clicks.warming) {
        levels.scanRun(x, i, to);
        clicks.scanRun(x, i, to);
      } else {
        levelsAndScreen(x, i, to, clicks.state, this.sums);
        levels.addRun(x, i, to, this.sums);
        clicks.endRun(to - i);
      }
      i = to;
    }
  }
}
