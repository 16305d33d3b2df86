import { z } from 'zod';
import { inputListSchema } from './inputs';

/**
 * Published figures a spec sheet may hold, with the rule for judging a measurement against each.
 * Power is one metric per load, because sheets publish one line per load.
 */
export const SPEC_METRICS = [
  'power_8ohm_w',
  'power_4ohm_w',
  'snr_line_db',
  'snr_phono_db',
  'separation_1k_db',
  'input_crosstalk_1k_db',
  'thd_pct',
  'thdn_pct',
  'response_low_hz',
  'response_high_hz',
  'response_tolerance_db',
  'max_output_v',
  'phono_overload_mv',
] as const;
export const specMetricSchema = z.enum(SPEC_METRICS);
export type SpecMetric = z.infer<typeof specMetricSchema>;

export type SpecDirection = 'higher_is_better' | 'lower_is_better';
/**
 * How the margin is expressed: figures already in dB are subtracted; power and amplitude ratios
 * become dB (10·lg and 20·lg); frequencies become octaves (lg2), since "half an octave short" reads
 * better than a ratio of hertz.
 */
export type SpecMarginKind = 'db' | 'power_ratio' | 'amplitude_ratio' | 'octaves';

export interface SpecMetricInfo {
  label: string;
  unit: string;
  direction: SpecDirection;
  marginKind: SpecMarginKind;
  /** What the measured value given to checkAgainstSpec must be. */
  measure: string;
}

export const SPEC_METRIC_INFO: Record<SpecMetric, SpecMetricInfo> = {
  power_8ohm_w: { label: 'Rated power into 8 Ω', unit: 'W', direction: 'higher_is_better', marginKind: 'power_ratio', measure: 'continuous power per channel into an 8 Ω dummy load, P = V²/R' },
  power_4ohm_w: { label: 'Rated power into 4 Ω', unit: 'W', direction: 'higher_is_better', marginKind: 'power_ratio', measure: 'continuous power per channel into a 4 Ω dummy load, P = V²/R' },
  snr_line_db: { label: 'SNR, line input', unit: 'dB', direction: 'higher_is_better', marginKind: 'db', measure: 'SNR in dB against the rated output, input terminated' },
  snr_phono_db: { label: 'SNR, phono input', unit: 'dB', direction: 'higher_is_better', marginKind: 'db', measure: 'SNR in dB against the rated output, phono input terminated' },
  separation_1k_db: { label: 'Channel separation at 1 kHz', unit: 'dB', direction: 'higher_is_better', marginKind: 'db', measure: 'driven-channel tone level minus the same tone in the undriven channel, dB' },
  input_crosstalk_1k_db: { label: 'Input crosstalk at 1 kHz', unit: 'dB', direction: 'higher_is_better', marginKind: 'db', measure: 'how far below the driven input\'s own level its tone is heard with another input selected, dB' },
  thd_pct: { label: 'THD', unit: '%', direction: 'lower_is_better', marginKind: 'amplitude_ratio', measure: 'THD in % of the fundamental' },
  thdn_pct: { label: 'THD+N', unit: '%', direction: 'lower_is_better', marginKind: 'amplitude_ratio', measure: 'THD+N in %' },
  response_low_hz: { label: 'Frequency response, low end', unit: 'Hz', direction: 'lower_is_better', marginKind: 'octaves', measure: 'lowest frequency still inside the published ± tolerance' },
  response_high_hz: { label: 'Frequency response, high end', unit: 'Hz', direction: 'higher_is_better', marginKind: 'octaves', measure: 'highest frequency still inside the published ± tolerance' },
  response_tolerance_db: { label: 'Frequency response tolerance (±)', unit: 'dB', direction: 'lower_is_better', marginKind: 'db', measure: 'largest deviation from the 1 kHz level within the published band, dB' },
  max_output_v: { label: 'Maximum output level', unit: 'V', direction: 'higher_is_better', marginKind: 'amplitude_ratio', measure: 'output V RMS at clipping' },
  phono_overload_mv: { label: 'Phono overload at 1 kHz', unit: 'mV', direction: 'higher_is_better', marginKind: 'amplitude_ratio', measure: 'input mV RMS at 1 kHz where the output clips' },
};

export interface SpecFigureValue {
  metric: SpecMetric;
  value: number;
}

export interface SpecCheck {
  within: boolean;
  /** Positive = better than published, negative = short of it; in marginUnit. */
  margin: number;
  marginUnit: 'dB' | 'octaves';
  direction: SpecDirection;
}

/** Lets a reading that equals the published figure (up to binary rounding) count as within. */
const EDGE = 1e-9;

/**
 * Judges one measured value against a published figure of the same metric. Higher-is-better
 * figures (SNR, separation, power, bandwidth top) pass at or above; lower-is-better (THD, the
 * bottom of the response, the ± tolerance) at or below. Ratio metrics need values above zero.
 */
export function checkAgainstSpec(metric: SpecMetric, measured: number, figure: SpecFigureValue): SpecCheck {
  if (figure.metric !== metric) throw new RangeError(`The figure is for ${figure.metric}, not ${metric}`);
  if (!Number.isFinite(measured) || !Number.isFinite(figure.value)) throw new RangeError('Values must be finite numbers');
  const info = SPEC_METRIC_INFO[metric];
  const sign = info.direction === 'higher_is_better' ? 1 : -1;
  let margin: number;
  if (info.marginKind === 'db') {
    margin = sign * (measured - figure.value);
  } else {
    if (measured <= 0 || figure.value <= 0) throw new RangeError(`${info.label} needs values above zero`);
    const ratio = measured / figure.value;
    const scale = info.marginKind === 'power_ratio' ? 10 * Math.log10(ratio) : info.marginKind === 'amplitude_ratio' ? 20 * Math.log10(ratio) : Math.log2(ratio);
    margin = sign * scale;
  }
  if (Object.is(margin, -0)) margin = 0;
  return {
    within: margin >= -EDGE * Math.max(1, Math.abs(figure.value)),
    margin,
    marginUnit: info.marginKind === 'octaves' ? 'octaves' : 'dB',
    direction: info.direction,
  };
}

/** A figure as people read it: "70 W", "0.05 %", "50 kHz", "±1 dB". */
export function formatSpecValue(metric: SpecMetric, value: number): string {
  const unit = SPEC_METRIC_INFO[metric].unit;
  const num = (v: number) => String(Number(v.toPrecision(6)));
  if (unit === 'Hz' && value >= 1000) return `${num(value / 1000)} kHz`;
  if (metric === 'response_tolerance_db') return `±${num(value)} dB`;
  return `${num(value)} ${unit}`;
}

const text = (max: number) => z.string().trim().max(max);

export const specFigureInputSchema = z
  .object({
    metric: specMetricSchema,
    value: z.number().finite().positive('Published figures are above zero').max(10_000_000),
    /** Conditions as published, e.g. "both channels driven, 20 Hz–20 kHz" or "A-weighted". */
    condition: text(300).default(''),
    source: text(300).min(1, 'Say where the figure comes from'),
  })
  .strict();
export type SpecFigureInput = z.infer<typeof specFigureInputSchema>;

export const specSheetInputSchema = z
  .object({
    maker: text(120).min(1, 'Maker is required'),
    model: text(120).min(1, 'Model is required'),
    notes: text(2000).default(''),
    /** Source inputs the model has, as published. */
    inputs: inputListSchema.default([]),
    figures: z.array(specFigureInputSchema).max(SPEC_METRICS.length),
  })
  .strict()
  .superRefine((v, ctx) => {
    const seen = new Set<string>();
    v.figures.forEach((f, i) => {
      if (seen.has(f.metric)) {
        ctx.addIssue({ code: 'custom', path: ['figures', i, 'metric'], message: `${SPEC_METRIC_INFO[f.metric].label} is listed twice` });
      }
      seen.add(f.metric);
    });
  });
export type SpecSheetInput = z.infer<typeof specSheetInputSchema>;

export const specFigureSchema = z.object({
  id: z.number().int(),
  metric: specMetricSchema,
  value: z.number(),
  condition: z.string(),
  source: z.string(),
});
export type SpecFigure = z.infer<typeof specFigureSchema>;

export const specSheetSchema = z.object({
  id: z.number().int(),
  maker: z.string(),
  model: z.string(),
  notes: z.string(),
  inputs: z.array(z.string()),
  figures: z.array(specFigureSchema),
  createdAt: z.string(),
});
export type SpecSheet = z.infer<typeof specSheetSchema>;

export const specSheetSummarySchema = specSheetSchema.omit({ figures: true, notes: true, inputs: true }).extend({ figureCount: z.number().int() });
export type SpecSheetSummary = z.infer<typeof specSheetSummarySchema>;

export const specSheetListQuerySchema = z.object({ q: z.string().trim().max(200).default('') }).strict();
