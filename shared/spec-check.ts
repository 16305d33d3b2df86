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
  if (!nearLoad(f.loadOhms, nominal)) return { value: null, note: `needs a capture across ${nominal === 8 ? 'an' : 'a'} ${nominal} Ω dummy load` };
  if (f.powerW === null) return { value: null, note: 'needs a calibration profile to turn the level into volts' };
  return { value: f.powerW, note: `P = V²/R across ${f.loadOhms} Ω` };
}

export function readingFor(metric: SpecMetric, f: CaptureFigures): Reading {
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
    default:
      return { value: null, note: 'not measured from a single capture' };
  }
}

export function checkFiguresAgainstSpec(figures: CaptureFigures, published: PublishedFigure[]): SpecCheckRow[] {
  return published.map((p) => {
    const reading = readingFor(p.metric, figures);
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
