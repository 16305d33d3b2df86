// Writes the invented demo captures to samples-synthetic/ and a README describing each one.
// Everything is synthetic and seeded, so rerunning gives byte-identical files.
//   npm run samples
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import {
  addClick,
  analyzeWavBytes,
  encodeWav,
  generateLogSweep,
  generateNoise,
  generateSilence,
  generateSine,
  mixInto,
  seededRandom,
  type AnalyzeOptions,
} from '../analysis/index';

const OUT = join(import.meta.dirname, '..', 'samples-synthetic');
const FS = 48_000;
const TONE_HZ = 997; // AES17 test frequency: not a sub-multiple of common sample rates

interface Sample {
  file: string;
  about: string;
  expect: string;
  channels: Float64Array[];
  cli?: string;
  options?: AnalyzeOptions;
}

const tone = (levelDbfs: number, seconds: number, harmonics: { order: number; ratio: number }[] = []): Float64Array =>
  generateSine({ sampleRate: FS, frequencyHz: TONE_HZ, levelDbfs, seconds, harmonics })[0]!;
const noise = (levelDbfs: number, seconds: number, seed: number): Float64Array =>
  generateNoise({ sampleRate: FS, levelDbfs, seconds, seed })[0]!;
const sine = (hz: number, levelDbfs: number, seconds: number): Float64Array =>
  generateSine({ sampleRate: FS, frequencyHz: hz, levelDbfs, seconds })[0]!;
const db = (ratio: number): number => 10 ** (ratio / 20);

/** Hum of a mains supply: fundamental plus rectifier harmonics at given dBFS. */
function hum(seconds: number, levels: [number, number, number]): Float64Array {
  const out = sine(50, levels[0], seconds);
  mixInto(out, sine(100, levels[1], seconds));
  return mixInto(out, sine(150, levels[2], seconds));
}

/** Crackle: `count` clicks at seeded times ≥ 40 ms apart, amplitudes spread over a range. */
function crackle(target: Float64Array, count: number, seed: number, loDbfs: number, hiDbfs: number): number[] {
  const rnd = seededRandom(seed);
  const times: number[] = [];
  const margin = Math.round(0.02 * FS);
  while (times.length < count) {
    const t = margin + Math.floor(rnd() * (target.length - 2 * margin));
    if (times.every((u) => Math.abs(u - t) >= 0.04 * FS)) times.push(t);
  }
  times.sort((a, b) => a - b);
  times.forEach((frame, i) => {
    const amplitude = db(loDbfs + rnd() * (hiDbfs - loDbfs)) * (rnd() < 0.5 ? -1 : 1);
    addClick(target, FS, { frame, amplitude, shape: i % 3 === 0 ? 'impulse' : 'burst' });
  });
  return times.map((f) => f / FS);
}

/** Second-order sections from the audio biquad cookbook formulas (Q = 1/√2: Butterworth). */
function biquad(x: Float64Array, kind: 'lowpass' | 'highpass', hz: number): Float64Array {
  const w0 = (2 * Math.PI * hz) / FS;
  const alpha = Math.sin(w0) / (2 * Math.SQRT1_2);
  const cos = Math.cos(w0);
  const b1 = kind === 'lowpass' ? 1 - cos : -(1 + cos);
  const b0 = kind === 'lowpass' ? (1 - cos) / 2 : (1 + cos) / 2;
  const [a0, a1, a2] = [1 + alpha, -2 * cos, 1 - alpha];
  const y = new Float64Array(x.length);
  let [x1, x2, y1, y2] = [0, 0, 0, 0];
  for (let n = 0; n < x.length; n++) {
    const v = (b0 * x[n]! + b1 * x1 + b0 * x2 - a1 * y1 - a2 * y2) / a0;
    [x2, x1, y2, y1] = [x1, x[n]!, y1, v];
    y[n] = v;
  }
  return y;
}

function samples(): Sample[] {
  const list: Sample[] = [];
  list.push({
    file: 'tone-997hz-clean.wav',
    about: 'Mono, 1.5 s: 997 Hz at −10 dBFS plus white noise at −110 dBFS.',
    expect: 'RMS −10.00 dBFS; THD at the noise/quantisation limit; noise ≈ −110.8 dBFS (the −110 dBFS noise in 20 Hz–20 kHz of 24 kHz).',
    channels: [mixInto(tone(-10, 1.5), noise(-110, 1.5, 1))],
  });
  list.push({
    file: 'tone-997hz-harmonics.wav',
    about: 'Mono, 1.5 s: 997 Hz at −10 dBFS with 1 % 2nd and 0.5 % 3rd harmonic, noise −110 dBFS.',
    expect: 'THD = √(1² + 0.5²) % = 1.118 % (−39.03 dB); H2 −40 dBc, H3 −46.02 dBc.',
    channels: [mixInto(tone(-10, 1.5, [{ order: 2, ratio: 0.01 }, { order: 3, ratio: 0.005 }]), noise(-110, 1.5, 2))],
  });
  const withClicks = mixInto(tone(-10, 2), noise(-110, 2, 3));
  const clickTimes = crackle(withClicks, 12, 11, -50, -20);
  list.push({
    file: 'tone-997hz-clicks.wav',
    about: 'Mono, 2 s: 997 Hz at −10 dBFS, noise −110 dBFS, 12 clicks (every third a one-sample impulse, the rest 0.5 ms bursts) between −50 and −20 dBFS.',
    expect:
      `12 clicks (360 per minute) at ${clickTimes.map((t) => t.toFixed(4)).join(', ')} s. ` +
      'The clicks are noise too: THD+N and the noise floor read far above the −110 dBFS background.',
    channels: [withClicks],
  });
  list.push({
    file: 'crosstalk-left-driven.wav',
    about: 'Stereo, 2 s: left 997 Hz at −10 dBFS; right carries the same tone 60 dB lower (−70 dBFS); noise −110 dBFS in both.',
    expect: 'Driven channel 0 (detected); separation 0 → 1 = 60.0 dB.',
    channels: [mixInto(tone(-10, 2), noise(-110, 2, 4)), mixInto(tone(-70, 2), noise(-110, 2, 5))],
  });
  list.push({
    file: 'hum-50hz.wav',
    about: 'Mono, 1.5 s, no test tone: mains hum at 50 Hz −70 dBFS, 100 Hz −76 dBFS, 150 Hz −80 dBFS over noise at −110 dBFS.',
    expect: 'Stimulus silence; mains 50 Hz detected; hum total 10·lg(10^−7 + 10^−7.6 + 10^−8) = −68.7 dBFS.',
    channels: [mixInto(hum(1.5, [-70, -76, -80]), noise(-110, 1.5, 6))],
  });
  list.push({
    file: 'silence-noise-floor.wav',
    about: 'Mono, 1.5 s: a terminated input — white noise at −105 dBFS only.',
    expect: 'Stimulus silence; noise ≈ −105.8 dBFS unweighted, 2.05 dB lower A-weighted (white noise, IEC 61672-1 weighting).',
    channels: [noise(-105, 1.5, 7)],
  });
  const sweep = generateLogSweep({ sampleRate: FS, startHz: 10, endHz: 20_000, seconds: 4, levelDbfs: -10 })[0]!;
  list.push({
    file: 'sweep-10hz-20khz.wav',
    about: 'Mono, 4 s: exponential sweep 10 Hz → 20 kHz at −10 dBFS (starting an octave below the band keeps the sweep\'s start ripple out of it) through a 2nd-order Butterworth high-pass at 40 Hz and low-pass at 15 kHz (an amplifier with a coupling capacitor and an output filter).',
    expect: '−3 dB points at 40 Hz and 15 kHz.',
    cli: '--stimulus sweep',
    channels: [mixInto(biquad(biquad(sweep, 'highpass', 40), 'lowpass', 15_000), noise(-110, 4, 8))],
  });

  // Demo repair job: amplifier with a failing input selector, probed at two test points.
  const s = 3;
  list.push({
    file: 'demo-before-input-socket.wav',
    about: 'Demo job, before repair, test point "input socket": stereo, 3 s. Left driven at 997 Hz −10 dBFS; right carries it 80 dB lower; THD 0.003 %; noise −112 dBFS; no clicks.',
    expect: 'Clean: separation 80 dB, 0 clicks, THD ≈ 0.003 %. The fault is not here yet.',
    channels: [
      mixInto(tone(-10, s, [{ order: 2, ratio: 2e-5 }, { order: 3, ratio: 2.2e-5 }]), noise(-112, s, 21)),
      mixInto(tone(-90, s), noise(-112, s, 22)),
    ],
  });
  const left = mixInto(tone(-10, s, [{ order: 2, ratio: 4e-4 }, { order: 3, ratio: 3e-4 }]), noise(-105, s, 31));
  mixInto(left, hum(s, [-80, -85, -90]));
  const crackleTimes = crackle(left, 36, 32, -40, -22);
  const right = mixInto(mixInto(tone(-40, s), noise(-105, s, 33)), hum(s, [-80, -85, -90]));
  list.push({
    file: 'demo-before-selector-out.wav',
    about: 'Demo job, before repair, test point "selector output": stereo, 3 s. Left 997 Hz −10 dBFS with crackle (36 clicks between −40 and −22 dBFS, left only), THD 0.05 %; right carries the tone 30 dB lower (−40 dBFS); hum 50/100/150 Hz at −80/−85/−90 dBFS in both; noise −105 dBFS.',
    expect:
      'Separation 30 dB; 36 clicks (720 per minute) in channel 0, 0 in channel 1; hum present at 50 Hz (−78.5 dBFS in total built in). ' +
      'The crackle dominates THD+N and the noise floor, and lifts THD to ≈ 0.06 % from the 0.05 % built in (crackle energy ' +
      `falls in the harmonic lobes too). Clicks at ${crackleTimes.map((t) => t.toFixed(3)).join(', ')} s.`,
    channels: [left, right],
  });
  list.push({
    file: 'demo-after-selector-out.wav',
    about: 'Demo job, after repair, test point "selector output": stereo, 3 s. Left 997 Hz −10 dBFS, THD 0.004 %; right carries the tone 70 dB lower; noise −110 dBFS; no hum, no clicks.',
    expect: 'Separation 70 dB, 0 clicks, THD ≈ 0.004 %, no hum.',
    channels: [
      mixInto(tone(-10, s, [{ order: 2, ratio: 3e-5 }, { order: 3, ratio: 2.6e-5 }]), noise(-110, s, 41)),
      mixInto(tone(-80, s), noise(-110, s, 42)),
    ],
  });
  demoCrosstalk(list);
  return list;
}

/**
 * Demo job, input crosstalk at the selector output: the tuner input fed 997 Hz at −10 dBFS (as
 * it reads at the probe with the tuner selected) in both channels, the selector on tuner, disc
 * and aux in turn, before and after the repair. Leak levels are dB below the tuner's own level.
 */
function demoCrosstalk(list: Sample[]): void {
  const s = 1.5;
  const steps: { phase: 'before' | 'after'; selected: string; leak: [number, number] | null; seed: number }[] = [
    { phase: 'before', selected: 'tuner', leak: null, seed: 51 },
    { phase: 'before', selected: 'disc', leak: [29, 31], seed: 53 },
    { phase: 'before', selected: 'aux', leak: [68, 70], seed: 55 },
    { phase: 'after', selected: 'tuner', leak: null, seed: 61 },
    { phase: 'after', selected: 'disc', leak: [71, 74], seed: 63 },
    { phase: 'after', selected: 'aux', leak: [80, 82], seed: 65 },
  ];
  for (const step of steps) {
    const level = (c: 0 | 1) => -10 - (step.leak ? step.leak[c] : 0);
    const channels = ([0, 1] as const).map((c) => {
      const ch = mixInto(tone(level(c), s), noise(step.phase === 'before' ? -105 : -110, s, step.seed + c));
      return step.phase === 'before' ? mixInto(ch, hum(s, [-80, -85, -90])) : ch;
    });
    list.push({
      file: `demo-crosstalk-${step.phase}-${step.selected}-selected.wav`,
      about:
        `Demo job, ${step.phase} repair, test point "selector output", tuner input driven, ${step.selected} selected: stereo, ${s} s. ` +
        (step.leak
          ? `997 Hz at ${level(0)} / ${level(1)} dBFS (left / right), i.e. ${step.leak[0]} / ${step.leak[1]} dB below the tuner's own level`
          : '997 Hz at −10 dBFS in both channels (the reference)') +
        `; noise ${step.phase === 'before' ? '−105 dBFS and hum 50/100/150 Hz at −80/−85/−90 dBFS' : '−110 dBFS'}.`,
      expect: step.leak ? `Input crosstalk tuner → ${step.selected}: ${step.leak[0]} dB left, ${step.leak[1]} dB right.` : 'Tone level −10.00 dBFS in both channels.',
      channels,
      options: { stimulus: 'tone', toneHz: 1000 },
    });
  }
}

function readme(list: Sample[]): string {
  const rows = list.map((x) => `### ${x.file}\n${x.about}\n\nExpected by construction: ${x.expect}\n` + (x.cli ? `\nAnalyse with \`npm run -s analyze -- samples-synthetic/${x.file} ${x.cli}\` (a sweep is also recognised without the flag).\n` : ''));
  return `# Synthetic sample captures

Invented test captures, written by \`npm run samples\` (scripts/make-samples.ts) from seeded
generators: rerunning gives the same bytes. All are 48 kHz, 24-bit PCM WAV, TPDF-dithered.
Levels are dBFS per AES17 (a full-scale sine reads 0 dBFS). 997 Hz is the AES17 test frequency.
Noise is white Gaussian; its level in the 20 Hz–20 kHz measurement band is 10·lg(19 980 / 24 000)
= −0.80 dB below its full-band level.

Analyse any of them with \`npm run -s analyze -- samples-synthetic/FILE.wav\` (add \`--json\` for
the full result).

The three \`demo-*\` files belong to the product's demo repair job: a stereo amplifier with a
failing input selector. Probed at the input socket the signal is clean; at the selector output,
before repair, it shows crackle, poor channel separation and some hum — so the fault first
appears at the selector. After the repair the selector output is clean again.

${rows.join('\n')}`;
}

mkdirSync(OUT, { recursive: true });
const list = samples();
let total = 0;
for (const [i, x] of list.entries()) {
  const bytes = encodeWav(x.channels, FS, 24, { dither: 'tpdf', seed: 100 + i });
  writeFileSync(join(OUT, x.file), bytes);
  total += bytes.length;
  const r = analyzeWavBytes(bytes, x.options ?? (x.cli ? { stimulus: 'sweep' } : {}));
  const c0 = r.channels[0]!;
  const sep = r.separation.map((p) => `${p.db?.toFixed(1)} dB`).join(', ');
  const sw = r.sweep?.channels[0];
  process.stdout.write(
    `${x.file.padEnd(32)} ${r.stimulus.padEnd(9)} RMS ${c0.rmsDbfs?.toFixed(2)} THD ${c0.thdPct?.toPrecision(4) ?? '—'} % ` +
      `noise ${c0.noiseDbfs?.toFixed(1) ?? '—'} hum ${c0.humDbfs?.toFixed(1) ?? '—'} clicks ${r.channels.map((c) => c.clicks.count).join('/')}` +
      (sep ? ` sep ${sep}` : '') +
      (sw ? ` −3 dB ${sw.lowMinus3dbHz} / ${sw.highMinus3dbHz} Hz` : '') +
      '\n',
  );
}
writeFileSync(join(OUT, 'README.md'), readme(list));
process.stdout.write(`${list.length} files, ${(total / 1e6).toFixed(2)} MB in ${OUT}\n`);
