import type { CaptureFigures } from '../../shared/capture-figures';

/** A capture's figures with everything at a clean, neutral reading; override what a test needs. */
export function figures(over: Partial<CaptureFigures> = {}): CaptureFigures {
  return {
    stimulus: 'tone',
    drivenChannel: 0,
    fundamentalHz: 997,
    levelDbfs: -10,
    levelDbv: null,
    levelDbu: null,
    thdPct: 0.004,
    thdDb: 20 * Math.log10(0.004 / 100),
    thdnDb: -85,
    sinadDb: 85,
    noiseDbfs: -110,
    noiseDbfsA: -112,
    noiseDbvA: null,
    noiseDbuA: null,
    humDbfs: null,
    humDetected: false,
    clickCount: 0,
    clicksPerMinute: 0,
    clicksChannel: null,
    separationDb: 80,
    separationNoiseLimited: false,
    powerW: null,
    loadOhms: null,
    ...over,
  };
}
