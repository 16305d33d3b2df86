import { describe, expect, it } from 'vitest';
import { generateNoise, generateSine } from '../../analysis/generate';
import { planWelch, SpectrumAccumulator } from '../../analysis/spectrum';
import { highestSideLobeDb, makeWindow, scallopLossDb, windowProperties, type WindowKind } from '../../analysis/window';

// Source: F. J. Harris, "On the use of windows for harmonic analysis with the discrete Fourier
// transform", Proc. IEEE 66(1), 1978, Table 1 (periodic windows, large N). The table gives
// coherent gain and ENBW to 2 decimals, scallop loss to 2 decimals and side lobes to whole dB, so
// each tolerance is half the last printed digit (plus 0.01 dB of margin for the dB columns).
const HARRIS: { kind: WindowKind; gain: number; enbw: number; scallopDb: number; sideLobeDb: number }[] = [
  { kind: 'rectangular', gain: 1.0, enbw: 1.0, scallopDb: 3.92, sideLobeDb: -13 },
  { kind: 'hann', gain: 0.5, enbw: 1.5, scallopDb: 1.42, sideLobeDb: -32 },
  { kind: 'hamming', gain: 0.54, enbw: 1.36, scallopDb: 1.75, sideLobeDb: -43 },
  { kind: 'blackman-harris-4', gain: 0.36, enbw: 2.0, scallopDb: 0.83, sideLobeDb: -92 },
];

describe('DFT windows against Harris 1978, Table 1', () => {
  for (const row of HARRIS) {
    it(`${row.kind}: coherent gain, ENBW, scallop loss, highest side lobe`, () => {
      const w = makeWindow(row.kind, 4096);
      const p = windowProperties(w);
      expect(p.coherentGain).toBeCloseTo(row.gain, 2);
      expect(Math.abs(p.enbwBins - row.enbw)).toBeLessThanOrEqual(0.005);
      expect(Math.abs(scallopLossDb(w) - row.scallopDb)).toBeLessThanOrEqual(0.015);
      // Hann's highest side lobe is −31.47 dB, printed as −32 in the table: allow 0.6 dB.
      expect(Math.abs(highestSideLobeDb(w) - row.sideLobeDb)).toBeLessThanOrEqual(0.6);
    });
  }

  it('7-term Blackman-Harris used for measurement: side lobes below −170 dB', () => {
    // From memory: the published 7-term window has side lobes near −180 dB (not in REFERENCES.md).
    expect(highestSideLobeDb(makeWindow('blackman-harris-7', 1024))).toBeLessThan(-170);
  });
});

describe('averaged spectrum normalisation', () => {
  const fs = 48_000;
  const frames = 4 * 65_536;

  it('Parseval: the bins of white noise sum to its mean square (within 1 %)', () => {
    const [x] = generateNoise({ sampleRate: fs, seconds: frames / fs, levelDbfs: -20, seed: 5 });
    const plan = planWelch(fs, frames)!;
    const acc = new SpectrumAccumulator(plan, 1, fs, 'blackman-harris-7');
    acc.collector.push([x!], 0, frames);
    const spec = acc.result();
    const total = spec.power[0]!.reduce((a, b) => a + b, 0);
    const meanSquare = x!.reduce((a, v) => a + v * v, 0) / frames;
    // Variance of the window-weighted estimate over ~10⁵ independent bins: well under 1 %.
    expect(Math.abs(total / meanSquare - 1)).toBeLessThan(0.01);
  });

  it('a sine’s main-lobe sum equals A²/2 wherever it falls between bins (scalloping removed)', () => {
    const plan = planWelch(fs, frames)!;
    const binHz = fs / plan.fftSize;
    for (const offset of [0, 0.25, 0.5]) {
      const f = (1000 + offset) * binHz;
      const [x] = generateSine({ sampleRate: fs, frequencyHz: f, levelDbfs: -6, seconds: frames / fs });
      const acc = new SpectrumAccumulator(plan, 1, fs, 'blackman-harris-7');
      acc.collector.push([x!], 0, frames);
      const p = acc.result().power[0]!;
      let lobe = 0;
      for (let k = 992; k <= 1008; k++) lobe += p[k]!;
      const expected = 10 ** (-6 / 10) / 2; // A²/2 for A = 10^(−6/20)
      expect(Math.abs(lobe / expected - 1)).toBeLessThan(1e-9);
    }
  });
});
