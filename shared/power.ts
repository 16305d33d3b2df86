// Level and power conversions (DESIGN.md: 0 dBu = 0.7746 V RMS, 0 dBV = 1 V RMS, P = V²/R).

/** 0 dBu: the voltage that dissipates 1 mW in 600 Ω, √0.6 V RMS. */
export const DBU_REFERENCE_V = Math.sqrt(0.6);

export const voltsFromDbv = (dbv: number): number => 10 ** (dbv / 20);
export const voltsFromDbu = (dbu: number): number => DBU_REFERENCE_V * 10 ** (dbu / 20);
export const dbvFromVolts = (volts: number): number => 20 * Math.log10(volts);

/** Power in watts dissipated by an RMS voltage across a resistive load, P = V²/R. */
export function wattsFromVolts(voltsRms: number, loadOhms: number): number {
  if (!(loadOhms > 0)) throw new RangeError(`load must be a positive resistance, got ${loadOhms} Ω`);
  return (voltsRms * voltsRms) / loadOhms;
}

/** RMS voltage that delivers a given power into a resistive load, V = √(P·R). */
export function voltsForWatts(watts: number, loadOhms: number): number {
  if (!(loadOhms > 0)) throw new RangeError(`load must be a positive resistance, got ${loadOhms} Ω`);
  if (!(watts >= 0)) throw new RangeError(`power must not be negative, got ${watts} W`);
  return Math.sqrt(watts * loadOhms);
}

/** Output power from a calibrated level in dBV across a dummy load; null when either is missing. */
export function powerFromDbv(levelDbv: number | null, loadOhms: number | null): number | null {
  if (levelDbv === null || loadOhms === null || !(loadOhms > 0)) return null;
  return wattsFromVolts(voltsFromDbv(levelDbv), loadOhms);
}
