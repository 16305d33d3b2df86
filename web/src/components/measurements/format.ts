import type { CaptureState } from '@shared/captures';
import type { Verdict } from '@shared/compare';

// How figures read on screen: a real minus sign, a fixed number of decimals per kind of figure,
// and an em dash for "not measured".

export const NONE = '—';
export const minus = (s: string) => s.replace(/^-/, '−');

export function fmtNumber(v: number | null | undefined, digits = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return NONE;
  return minus(v.toFixed(digits));
}

export function fmtDb(v: number | null | undefined, unit = 'dB', digits = 1): string {
  const n = fmtNumber(v, digits);
  return n === NONE ? n : `${n} ${unit}`;
}

/** THD in %: three significant figures, never rounded to 0 (0.0042 %, 0.064 %, 1.12 %). */
export function fmtPct(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return NONE;
  if (v === 0) return '0 %';
  const digits = Math.max(0, Math.min(6, 2 - Math.floor(Math.log10(Math.abs(v)))));
  return `${minus(v.toFixed(digits))} %`;
}

export function fmtSigned(v: number | null | undefined, unit: string, digits = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return NONE;
  const s = v.toFixed(digits);
  // A change that rounds to zero reads "0.0", not "−0.0" or "+0.0".
  const signed = Number(s) === 0 ? s.replace(/^-/, '') : v > 0 ? `+${s}` : minus(s);
  return unit ? `${signed} ${unit}` : signed;
}

export function fmtWatts(v: number | null | undefined): string {
  if (v === null || v === undefined) return NONE;
  return v >= 10 ? `${v.toFixed(1)} W` : v >= 1 ? `${v.toFixed(2)} W` : `${(v * 1000).toFixed(0)} mW`;
}

export function fmtSeconds(s: number): string {
  return s < 60 ? `${s.toFixed(s < 10 ? 2 : 1)} s` : `${Math.floor(s / 60)} min ${Math.round(s % 60)} s`;
}

export function fmtHz(v: number | null | undefined): string {
  if (v === null || v === undefined) return NONE;
  return v >= 1000 ? `${Number((v / 1000).toPrecision(4))} kHz` : `${Number(v.toPrecision(4))} Hz`;
}

type Severity = 'success' | 'info' | 'warn' | 'danger' | 'secondary' | 'contrast';

export const STATE_SEVERITY: Record<CaptureState, Severity> = {
  queued: 'secondary',
  running: 'info',
  done: 'success',
  failed: 'danger',
};

export const VERDICT_SEVERITY: Record<Verdict, Severity> = {
  better: 'success',
  same: 'secondary',
  worse: 'danger',
  changed: 'info',
  missing: 'contrast',
};

export const VERDICT_LABEL: Record<Verdict, string> = {
  better: 'Better',
  same: 'Same',
  worse: 'Worse',
  changed: 'Changed',
  missing: 'Not on both',
};

/** Chart colours from our theme: oxide green traces, amber marks, warm greys around them. */
export const CHART = {
  trace: '#327f71',
  traceFill: 'rgba(50, 127, 113, 0.18)',
  second: '#7f796d',
  mark: '#e9b949',
  markText: '#8a6a17',
  grid: '#e0ddd5',
  axis: '#615c52',
  font: '12px "Source Sans 3", system-ui, sans-serif',
};
