import type { Separation } from '../shared/analysis-result';
import { localNoisePerBin } from './noise';
import { sumBins, type AveragedSpectrum } from './spectrum';
import type { BinRange } from './thd';
import { meanSquareToDbfs, powerRatioDb } from './units';

// Channel separation (crosstalk), narrow-band: the test tone's power in the driven channel over the
// same tone's power in another channel, both summed over the same window main lobe, in dB
// (IEC 60268-3 form 20·lg(U_driven/U_undriven)). Narrow-band because broadband noise in the idle
// channel would otherwise set the figure.

export function measureSeparation(options: {
  spectrum: AveragedSpectrum;
  driven: number;
  lobe: BinRange;
  frequencyHz: number;
  excluded: readonly BinRange[];
  /** Channels to compare against the driven one. */
  others: readonly number[];
}): Separation[] {
  const { spectrum, driven, lobe, frequencyHz, excluded, others } = options;
  const drivenPower = sumBins(spectrum.power[driven]!, lobe[0], lobe[1]);
  const halfWidth = (lobe[1] - lobe[0]) / 2;
  const centre = lobe[0] + halfWidth;
  return others.map((other) => {
    const p = spectrum.power[other]!;
    const otherPower = sumBins(p, lobe[0], lobe[1]);
    const noise = localNoisePerBin(p, centre, halfWidth, excluded) * (lobe[1] - lobe[0] + 1);
    return {
      driven,
      other,
      frequencyHz,
      drivenDbfs: meanSquareToDbfs(drivenPower),
      otherDbfs: meanSquareToDbfs(otherPower),
      db: otherPower > 0 ? powerRatioDb(drivenPower / otherPower) : null,
      // 6 dB: below that the lobe holds about as much noise as tone, so the figure is a lower bound.
      noiseLimited: otherPower < 4 * noise,
    };
  });
}
