import { z } from 'zod';
import type { CaptureFigures } from './capture-figures';
import { checkAgainstSpec, formatSpecValue, specMetricSchema, SPEC_METRIC_INFO, type SpecMetric } from './specs';

// A capture's figures against the unit's published ones. The judging rule per metric is
// shared/specs.ts checkAgainstSpec; this file only says which capture figure answers which
// published metric, and under what condition.

export const specCheckRowSchema = z.object({
  metric: specMetricSchema,
  label: z.string(),
  published: z.number(),
  publishedText: z.string(),
  condition: z.string(),
  source: z.string(),
  measured: z.number().nullable(),
  /** null when this capture cannot answer the metric (see note). */
  within: z.boolean().nullable(),
  margin: z.number().nullable(),
  marginUnit: z.enum(['dB', 'octaves']).nullable(),
  note: z.string(),
});
export type SpecCheckRow = z.infer<typeof specCheckRowSchema>;

export interface PublishedFigure {
  metric: SpecMetric;
  value: number;
  condition: string;
  source: string;
}

interface Reading {
  value: number | null;
  note: string;
}

/** A load counts as "8 Ω" within ±5 %, the usual tolerance of a dummy-load resistor. */
const nearLoad = (load: number | null, nominal: number) => load !== null && Math.abs(load - nominal) <= nominal * 0.05;

function powerReading(f: CaptureFigures, nominal: number): Reading {
  if (f.stimulus !== 'tone') return { value: null, note: 'needs a test-tone capture at rated output' };
  if (!nearLoad(f.loadOhms, nominal)) return { value: null, note: `needs a capture across ${nominal === 8 ? 'an' : 'a'} ${nominal} Ω dummy load` };
  if (f.powerW === null) return { value: null, note: 'needs a calibration profile to turn the level into volts' };
  return { value: f.powerW, note: `P = V²/R across ${f.loadOhms} Ω` };
}

/** A frequency as the sheet writes one ("56.1 Hz", "12.5 kHz"). */
const hz = (v: number) => formatSpecValue('response_high_hz', Number(v.toPrecision(3)));
const publishedValue = (published: readonly PublishedFigure[], metric: SpecMetric) => published.find((p) => p.metric === metric)?.value ?? null;

/**
 * SNR: the rated output against the A-weighted noise of a capture taken with no signal. Sheets
 * refer SNR to the rated output unless they say otherwise (trade practice; the figure's own
 * condition on the sheet rules). The rated output is the rated power at its load (V = √(P·R)),
 * else the maximum output level.
 */
function snrReading(f: CaptureFigures, published: readonly PublishedFigure[]): Reading {
  if (f.stimulus !== 'silence') return { value: null, note: 'needs a capture of the output with no signal (input terminated)' };
  if (f.noiseDbvA === null) return { value: null, note: 'needs a calibration profile to turn the noise into volts' };
  const p8 = publishedValue(published, 'power_8ohm_w');
  const p4 = publishedValue(published, 'power_4ohm_w');
  const vMax = publishedValue(published, 'max_output_v');
  const ref =
    p8 !== null ? { volts: Math.sqrt(p8 * 8), text: `${p8} W into 8 Ω` } : p4 !== null ? { volts: Math.sqrt(p4 * 4), text: `${p4} W into 4 Ω` } : vMax !== null ? { volts: vMax, text: 'the maximum output level' } : null;
  if (!ref) return { value: null, note: 'needs the rated power or maximum output level on the spec sheet, to refer the noise to' };
  return {
    value: 20 * Math.log10(ref.volts) - f.noiseDbvA,
    note: `A-weighted noise against ${ref.text} (${ref.volts.toPrecision(3)} V); for the input selected when the capture was taken`,
  };
}

type Curve = { channel: number; frequencyHz: number[]; responseDb: number[] };

/**
 * Walks a response curve from its reference point towards one end while it stays within ±tol dB.
 * Returns where it leaves the band (log-interpolated between the last point inside and the first
 * outside), or null with the last frequency reached when it never does.
 */
function edgeOf(curve: Curve, referenceHz: number, tol: number, step: 1 | -1): { leavesAt: number | null; reached: number } {
  const f = curve.frequencyHz;
  const db = curve.responseDb;
  let i = 0;
  for (let k = 1; k < f.length; k++) if (Math.abs(Math.log(f[k]! / referenceHz)) < Math.abs(Math.log(f[i]! / referenceHz))) i = k;
  for (let k = i + step; k >= 0 && k < f.length; k += step) {
    if (Math.abs(db[k]!) > tol) {
      const j = k - step;
      const bound = db[k]! > 0 ? tol : -tol;
      const t = (bound - db[j]!) / (db[k]! - db[j]!);
      return { leavesAt: Math.exp(Math.log(f[j]!) + t * (Math.log(f[k]!) - Math.log(f[j]!))), reached: f[j]! };
    }
  }
  return { leavesAt: null, reached: f[step === 1 ? f.length - 1 : 0]! };
}

/** The low or high end of the response, judged at the sheet's ± tolerance (−3 dB points when it gives none). */
function responseEdgeReading(f: CaptureFigures, published: readonly PublishedFigure[], end: 'low' | 'high'): Reading {
  const r = f.response;
  if (!r || r.channels.length === 0) return { value: null, note: 'needs a log-sweep capture' };
  const sheetTol = publishedValue(published, 'response_tolerance_db');
  const tol = sheetTol ?? 3;
  const tolText = sheetTol === null ? '−3 dB point (the sheet gives no tolerance; trade practice)' : `±${tol} dB`;
  const step = end === 'low' ? -1 : 1;
  // The worst channel: the highest low end, the lowest high end.
  let worst: { channel: number; leavesAt: number | null; reached: number } | null = null;
  const worse = (a: number, b: number) => (end === 'low' ? a > b : a < b);
  for (const c of r.channels) {
    const e = edgeOf(c, r.referenceHz, tol, step);
    const at = e.leavesAt ?? e.reached;
    if (!worst || worse(at, worst.leavesAt ?? worst.reached)) worst = { channel: c.channel, ...e };
  }
  const w = worst!;
  if (w.leavesAt !== null) return { value: w.leavesAt, note: `${tolText} of channel ${w.channel + 1}, from ${hz(r.referenceHz)}` };
  const target = publishedValue(published, end === 'low' ? 'response_low_hz' : 'response_high_hz');
  const beyond = target === null || (end === 'low' ? w.reached <= target : w.reached >= target);
  if (beyond) return { value: w.reached, note: `inside ${tolText} as far as the sweep reached: the response is at least this wide` };
  return {
    value: null,
    note: `inside ${tolText} ${end === 'low' ? 'down' : 'up'} to ${hz(w.reached)}, as far as the sweep reached: sweep ${end === 'low' ? 'lower' : 'higher'} to check the published figure`,
  };
}

/** The largest deviation from the reference level within the published band (or the sweep's reach). */
function responseToleranceReading(f: CaptureFigures, published: readonly PublishedFigure[]): Reading {
  const r = f.response;
  if (!r || r.channels.length === 0) return { value: null, note: 'needs a log-sweep capture' };
  const lo = publishedValue(published, 'response_low_hz');
  const hi = publishedValue(published, 'response_high_hz');
  let largest = 0;
  let reachLo = Infinity;
  let reachHi = 0;
  for (const c of r.channels) {
    c.frequencyHz.forEach((fr, k) => {
      if ((lo !== null && fr < lo) || (hi !== null && fr > hi)) return;
      largest = Math.max(largest, Math.abs(c.responseDb[k]!));
      reachLo = Math.min(reachLo, fr);
      reachHi = Math.max(reachHi, fr);
    });
  }
  if (reachHi === 0) return { value: null, note: 'the sweep does not reach the published band' };
  const short = (lo !== null && reachLo > lo * 1.06) || (hi !== null && reachHi < hi / 1.06);
  return {
    value: largest,
    note: `largest deviation from the ${hz(r.referenceHz)} level between ${hz(reachLo)} and ${hz(reachHi)}${short ? ', as far as the sweep reached' : ''}`,
  };
}

/**
 * The capture's answer to one published metric. `published` is the whole sheet: some answers
 * depend on its other figures (SNR on the rated output, the response ends on the ± tolerance).
 */
export function readingFor(metric: SpecMetric, f: CaptureFigures, published: readonly PublishedFigure[] = []): Reading {
  switch (metric) {
    case 'separation_1k_db': {
      if (f.separationDb === null) return { value: null, note: 'needs a tone in one channel of a two-channel capture' };
      const notes: string[] = [];
      if (f.fundamentalHz !== null && Math.abs(f.fundamentalHz - 1000) > 100) notes.push(`measured at ${Math.round(f.fundamentalHz)} Hz, not 1 kHz`);
      if (f.separationNoiseLimited) notes.push('limited by the noise floor: the real figure is at least this');
      return { value: f.separationDb, note: notes.join('; ') };
    }
    case 'thd_pct':
      return f.thdPct === null ? { value: null, note: 'needs a test-tone capture' } : { value: f.thdPct, note: '' };
    case 'thdn_pct':
      return f.thdnDb === null ? { value: null, note: 'needs a test-tone capture' } : { value: 100 * 10 ** (f.thdnDb / 20), note: '' };
    case 'power_8ohm_w':
      return powerReading(f, 8);
    case 'power_4ohm_w':
      return powerReading(f, 4);
    case 'snr_line_db':
    case 'snr_phono_db':
      return snrReading(f, published);
    case 'response_low_hz':
      return responseEdgeReading(f, published, 'low');
    case 'response_high_hz':
      return responseEdgeReading(f, published, 'high');
    case 'response_tolerance_db':
      return responseToleranceReading(f, published);
    case 'input_crosstalk_1k_db':
      return { value: null, note: 'read from several captures: see the input crosstalk table' };
    default:
      return { value: null, note: 'not measured from a single capture' };
  }
}

export function checkFiguresAgainstSpec(figures: CaptureFigures, published: PublishedFigure[], sheet: readonly PublishedFigure[] = published): SpecCheckRow[] {
  return published.map((p) => {
    const reading = readingFor(p.metric, figures, sheet);
    const base = {
      metric: p.metric,
      label: SPEC_METRIC_INFO[p.metric].label,
      published: p.value,
      publishedText: formatSpecValue(p.metric, p.value),
      condition: p.condition,
      source: p.source,
      note: reading.note,
    };
    // Ratio metrics need a reading above zero; a THD of exactly 0 cannot be judged as a ratio.
    if (reading.value === null || (SPEC_METRIC_INFO[p.metric].marginKind !== 'db' && reading.value <= 0)) {
      return { ...base, measured: reading.value, within: null, margin: null, marginUnit: null };
    }
    const check = checkAgainstSpec(p.metric, reading.value, { metric: p.metric, value: p.value });
    return { ...base, measured: reading.value, within: check.within, margin: check.margin, marginUnit: check.marginUnit };
  });
}
