// Live figures on screen: a real minus sign, fixed decimals per kind of figure, an em dash for
// "not measured". Kept beside the live components so the bench page reads like the rest.

export const NONE = '—';
const minus = (s: string) => s.replace(/^-/, '−');

export function num(v: number | null | undefined, digits = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return NONE;
  return minus(v.toFixed(digits));
}

/** THD in %: three significant figures, never rounded to zero. */
export function pct(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return NONE;
  if (v === 0) return '0';
  const digits = Math.max(0, Math.min(6, 2 - Math.floor(Math.log10(Math.abs(v)))));
  return minus(v.toFixed(digits));
}

export function hz(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return NONE;
  return v >= 1000 ? `${(v / 1000).toFixed(3)} k` : v.toFixed(1);
}

/** 0:00 style clock for soak tests. */
export function clock(seconds: number): string {
  const s = Math.max(0, Math.floor(seconds));
  return `${Math.floor(s / 60)}:${String(s % 60).padStart(2, '0')}`;
}

export const channelName = (i: number, count: number) => (count === 2 ? (i === 0 ? 'Left' : 'Right') : `Channel ${i + 1}`);
