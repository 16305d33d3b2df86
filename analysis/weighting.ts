// A-frequency-weighting, IEC 61672-1:2013 Annex E closed form:
// A(f) = 20·lg[f4²·f⁴ / ((f²+f1²)·√(f²+f2²)·√(f²+f3²)·(f²+f4²))] − A1000,
// f1 = 20.598997 Hz, f2 = 107.65265 Hz, f3 = 737.86223 Hz, f4 = 12194.217 Hz, A1000 = −2.000 dB.

const F1 = 20.598997;
const F2 = 107.65265;
const F3 = 737.86223;
const F4 = 12194.217;
const A1000_DB = -2.0;
const A1000_POWER = 10 ** (A1000_DB / 10);
const F4_POW4 = F4 * F4 * F4 * F4;

/** Power gain |A(f)|² of the A-weighting (1 at 1 kHz, 0 at DC). */
export function aWeightingPowerGain(frequencyHz: number): number {
  const f2 = frequencyHz * frequencyHz;
  const f4 = f2 * f2;
  // Squared magnitude of the closed form: f4⁴·f⁸ / ((f²+f1²)²·(f²+f2²)·(f²+f3²)·(f²+f4²)²).
  // Products, not `**`: this runs for every bin of every noise figure, and a power call costs
  // several times as much.
  const a = f2 + F1 * F1;
  const d = f2 + F4 * F4;
  const num = F4_POW4 * (f4 * f4);
  const den = a * a * (f2 + F2 * F2) * (f2 + F3 * F3) * (d * d);
  return num / den / A1000_POWER;
}

/** A-weighting in dB (−Infinity at 0 Hz). */
export function aWeightingDb(frequencyHz: number): number {
  return 10 * Math.log10(aWeightingPowerGain(frequencyHz));
}
