import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { addClick, generateNoise, seededGaussian, seededRandom } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { soxDir } from './helpers';

// What the click detector must and must not call crackle (analysis/clicks.ts states the rule).
// Crackle has no standard metric (REFERENCES.md): every signal is built here, so the number,
// times and lengths of the disturbances are known by construction, and the changes that are not
// crackle (level steps, gain ramps, tone bursts, low-frequency square-ish programme) must give 0.
// A few of the zero cases are cross-checked with files made by Debian's sox.

const FS = 48000;
const SECONDS = 3;
const N = FS * SECONDS;
/** −100 dBFS white noise: σ = 10^(−100/20)/√2 (AES17 dBFS of noise, analysis/generate.ts). */
const NOISE_DBFS = -100;
const SIGMA = 10 ** (NOISE_DBFS / 20) / Math.SQRT2;
const W = (2 * Math.PI * 997) / FS;
const gain = (db: number) => 10 ** (db / 20);

function noise(seed: number): Float64Array {
  return generateNoise({ sampleRate: FS, levelDbfs: NOISE_DBFS, seconds: SECONDS, seed })[0]!;
}

function clicksOf(x: Float64Array) {
  return analyzeWavBytes(encodeWav([x], FS, 24)).channels[0]!.clicks;
}

/** A 997 Hz tone whose gain (dBFS) at frame n is level(n), on the noise. */
function shapedTone(level: (n: number) => number, phase = 0.3, seed = 1): Float64Array {
  const x = noise(seed);
  for (let n = 0; n < N; n++) x[n]! += gain(level(n)) * Math.sin(W * n + phase);
  return x;
}

describe('changes that are not crackle give no events', () => {
  const stepFrames = N / 8;
  const cases: [string, () => Float64Array][] = [
    // The reported case: 6 dB steps (a stepped attenuator), seven of them, at arbitrary phase.
    ['7 downward 6 dB level steps off zero crossings', () => shapedTone((n) => -6 - 6 * Math.floor(n / stepFrames))],
    ['7 upward 6 dB level steps off zero crossings', () => shapedTone((n) => -48 + 6 * Math.floor(n / stepFrames), 1.1, 2)],
    [
      '6 dB level steps at rising zero crossings',
      () => {
        // The gain changes at the first rising zero crossing after each eighth of the capture.
        const x = noise(3);
        let level = -6;
        let step = 0;
        for (let n = 0; n < N; n++) {
          const s = Math.sin(W * n);
          if (n > 0 && Math.sin(W * (n - 1)) < 0 && s >= 0 && Math.floor(n / stepFrames) > step) {
            step = Math.floor(n / stepFrames);
            level -= 6;
          }
          x[n]! += gain(level) * s;
        }
        return x;
      },
    ],
    ['a volume pot turned: −10 to −40 dBFS in 1 s', () => shapedTone((n) => -10 - 30 * Math.min(1, Math.max(0, n / FS - 1)), 0.2, 4)],
    ['a detented pot: 1 dB steps every 20 ms', () => shapedTone((n) => -6 - Math.min(40, Math.floor(Math.max(0, n / FS - 0.5) / 0.02)), 1, 5)],
    [
      'tone bursts starting and stopping abruptly',
      () => shapedTone((n) => ((n / FS) % 0.5 > 0.1 && (n / FS) % 0.5 < 0.3 ? -6 : -400), 0.7, 6),
    ],
    [
      'tone bursts with 5 ms raised-cosine onsets and ends',
      () => {
        const x = noise(7);
        const ramp = 0.005 * FS;
        for (let n = 0; n < N; n++) {
          const t = (n / FS) % 0.5;
          if (t <= 0.1 || t >= 0.3) continue;
          const k = Math.min((t - 0.1) * FS, (0.3 - t) * FS);
          const g = k < ramp ? 0.5 - 0.5 * Math.cos((Math.PI * k) / ramp) : 1;
          x[n]! += 0.5 * g * Math.sin(W * n + 0.7);
        }
        return x;
      },
    ],
    [
      'a 50 Hz square wave (straight edges)',
      () => {
        const x = noise(8);
        for (let n = 0; n < N; n++) x[n]! += 0.5 * Math.sign(Math.sin((2 * Math.PI * 50 * n) / FS + 0.1));
        return x;
      },
    ],
    [
      'a 50 Hz square wave band-limited to 20 kHz (odd harmonics, Fourier series)',
      () => {
        const x = noise(9);
        for (let h = 1; h * 50 < 20000; h += 2) {
          for (let n = 0; n < N; n++) x[n]! += ((0.4 * 4) / (Math.PI * h)) * Math.sin((2 * Math.PI * 50 * h * n) / FS);
        }
        return x;
      },
    ],
    [
      'a 60 Hz sine clipped to a third of its peak',
      () => {
        const x = noise(10);
        for (let n = 0; n < N; n++) x[n]! += Math.max(-0.3, Math.min(0.3, 0.9 * Math.sin((2 * Math.PI * 60 * n) / FS)));
        return x;
      },
    ],
  ];
  for (const [name, make] of cases) {
    it(name, () => {
      const c = clicksOf(make());
      expect(c.count).toBe(0);
      expect(c.events).toEqual([]);
    });
  }
});

describe('changes made by sox give no events', () => {
  const dir = soxDir();
  afterAll(() => dir.remove());

  it('a 997 Hz tone cut into 6 dB steps, a tone burst, a 50 Hz square', () => {
    // One continuous tone, trimmed at sample positions that are not zero crossings and rejoined
    // with each part 6 dB down on the last: the phase runs on, only the level steps.
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('tone.wav'), 'synth', '2', 'sine', '997', 'vol', '0.5');
    const parts: string[] = [];
    for (let i = 0; i < 8; i++) {
      const name = dir.path(`part${i}.wav`);
      dir.sox(dir.path('tone.wav'), name, 'trim', `${i * 12000 + 7}s`, '12000s', 'vol', String(0.5 ** i));
      parts.push(name);
    }
    dir.sox(...parts, dir.path('steps.wav'));
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('burst.wav'), 'synth', '0.3', 'sine', '997', 'vol', '0.5', 'pad', '0.4', '0.4');
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('square.wav'), 'synth', '2', 'square', '50', 'vol', '0.5');
    // sox's synth writes exact zeros where the tone is silent: the same −100 dBFS noise is mixed in
    // so the detector meets the background a real capture has.
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('wn.wav'), 'synth', '2', 'whitenoise', 'vol', '0.00001');
    for (const name of ['steps.wav', 'burst.wav', 'square.wav']) {
      dir.sox('-m', dir.path(name), dir.path('wn.wav'), dir.path(`n-${name}`));
      const r = analyzeWavBytes(dir.read(`n-${name}`));
      expect(r.channels[0]!.clicks.count, name).toBe(0);
    }
  });
});

describe('crackle is counted', () => {
  it('20 isolated impulses of mixed polarity, 10–16 σ on −100 dBFS noise: count, times, peaks, one sample each', () => {
    // The noise's own largest sample in the ±100 ms around each impulse is about 4.5 σ, so these
    // stand 7–11 dB above it.
    const x = noise(11);
    const rnd = seededRandom(12);
    const at = Array.from({ length: 20 }, (_, i) => 5000 + i * 6700 + Math.floor(rnd() * 1000));
    const size = at.map((_, i) => (i % 2 ? 1 : -1) * SIGMA * (10 + 6 * rnd()));
    at.forEach((frame, i) => addClick(x, FS, { frame, amplitude: size[i]! }));
    const c = clicksOf(x);
    expect(c.count).toBe(20);
    c.events.forEach((e, i) => {
      expect(Math.abs(e.timeS - at[i]! / FS)).toBeLessThanOrEqual(1 / FS);
      expect(e.durationMs).toBeCloseTo(1000 / FS, 3);
      // Peak = mean of the two prediction errors: the impulse plus noise of about σ/√2 (computed).
      expect(Math.abs(e.peakDbfs! - 20 * Math.log10(Math.abs(size[i]!)))).toBeLessThan(2.5);
    });
  });

  it('16 impulses of mixed polarity, 14–20 σ, on a −10 dBFS 997 Hz tone', () => {
    const x = shapedTone(() => -10, 0, 13);
    const rnd = seededRandom(14);
    const at = Array.from({ length: 16 }, (_, i) => 6000 + i * 8500 + Math.floor(rnd() * 1000));
    at.forEach((frame, i) => addClick(x, FS, { frame, amplitude: (i % 3 ? 1 : -1) * SIGMA * (14 + 6 * rnd()) }));
    const c = clicksOf(x);
    expect(c.count).toBe(16);
    c.events.forEach((e, i) => expect(Math.abs(e.timeS - at[i]! / FS)).toBeLessThanOrEqual(1 / FS));
  });

  it('three dense crackle bursts of 100 ms are three events lasting about 100 ms', () => {
    const x = shapedTone(() => -10, 0, 15);
    const rnd = seededRandom(16);
    const starts = [0.5, 1.5, 2.2];
    for (const start of starts) {
      // Impulses every 0.5–2 ms, mixed polarity, −70 to −40 dBFS, the last one before 100 ms.
      for (let t = 0; t < 0.0995; t += 0.0005 + 0.0015 * rnd()) {
        addClick(x, FS, { frame: Math.round((start + t) * FS), amplitude: (rnd() < 0.5 ? -1 : 1) * gain(-70 + 30 * rnd()) });
      }
    }
    const c = clicksOf(x);
    expect(c.count).toBe(3);
    c.events.forEach((e, i) => {
      expect(Math.abs(e.timeS - starts[i]!)).toBeLessThan(0.0005);
      expect(e.durationMs).toBeGreaterThan(97);
      expect(e.durationMs).toBeLessThanOrEqual(100);
    });
  });

  it('a scratchy pot: five noise bursts while the level falls 20 dB in 1 s are five events with their lengths', () => {
    const x = shapedTone((n) => -10 - 20 * Math.min(1, Math.max(0, n / FS - 1)), 0, 17);
    const bursts: [number, number][] = [
      [1.1, 0.02],
      [1.3, 0.03],
      [1.5, 0.01],
      [1.7, 0.04],
      [1.9, 0.015],
    ];
    const g = seededGaussian(18);
    for (const [start, length] of bursts) {
      for (let n = Math.round(start * FS); n < Math.round((start + length) * FS); n++) x[n]! += gain(-60) * g();
    }
    const c = clicksOf(x);
    expect(c.count).toBe(5);
    c.events.forEach((e, i) => {
      expect(Math.abs(e.timeS - bursts[i]![0])).toBeLessThan(0.0005);
      expect(Math.abs(e.durationMs - bursts[i]![1] * 1000)).toBeLessThan(0.5);
    });
  });
});
