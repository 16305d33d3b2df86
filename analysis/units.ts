// Level conversions. dBFS follows AES17: a full-scale sine (RMS 1/√2) reads 0 dBFS, so
// dBFS = 20·log10(RMS·√2) = 10·log10(2·mean square). 0 dBV = 1 V RMS; 0 dBu = √0.6 V RMS
// (1 mW into 600 Ω), so dBu = dBV + 20·log10(1/√0.6) ≈ dBV + 2.2185 dB.

export const DBU_REFERENCE_VOLTS = Math.sqrt(0.6);
export const DBU_MINUS_DBV = -20 * Math.log10(DBU_REFERENCE_VOLTS);

/** 10·log10(ratio), or null when the ratio is zero, negative or not finite (no dB value exists). */
export function powerRatioDb(ratio: number): number | null {
  return ratio > 0 && Number.isFinite(ratio) ? 10 * Math.log10(ratio) : null;
}

/** dBFS of a mean-square level (AES17). */
export function meanSquareToDbfs(meanSquare: number): number | null {
  return powerRatioDb(2 * meanSquare);
}

/** dBFS of a sample magnitude (peak convention: |x| = 1 is 0 dBFS). */
export function amplitudeToDbfs(amplitude: number): number | null {
  return powerRatioDb(amplitude * amplitude);
}

export interface Calibration {
  /** Volts RMS at the probe that read 0 dBFS. */
  voltsAtFullScale: number;
  /** Probe or divider ratio (10 for 10:1). */
  probeAttenuation: number;
}

/** dBV of the point probed when the converter reads 0 dBFS. */
export function dbvAtFullScale(cal: Calibration): number {
  return 20 * Math.log10(cal.voltsAtFullScale * cal.probeAttenuation);
}

export function dbfsToDbv(dbfs: number | null, cal: Calibration | null): number | null {
  return dbfs === null || cal === null ? null : dbfs + dbvAtFullScale(cal);
}

export function dbvToDbu(dbv: number | null): number | null {
  return dbv === null ? null : dbv + DBU_MINUS_DBV;
}

/** P = V²/R. */
export function wattsIntoLoad(voltsRms: number, ohms: number): number {
  return (voltsRms * voltsRms) / ohms;
}

/** V = √(P·R). */
export function voltsForWatts(watts: number, ohms: number): number {
  return Math.sqrt(watts * ohms);
}

/** Rounds to a fixed number of decimals for compact plot arrays; null stays null. */
export function roundTo(value: number, decimals: number): number {
  const f = 10 ** decimals;
  return Math.round(value * f) / f;
}
