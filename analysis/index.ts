// Public surface of the measurement engine. Pure TypeScript: no DOM and no Node APIs, so the
// server, a background worker and the browser all run the same code.

export {
  ENGINE_VERSION,
  AnalyzeOptionsError,
  CaptureAnalyzer,
  analyzeWavBytes,
  analyzeWavStream,
  parseAnalyzeOptions,
  validateResult,
} from './analyze';
export { channelGroups, resultFromShares, type ChannelShare } from './channel-split';
export {
  readWavInfo,
  WavFormatError,
  MAX_HEADER_BYTES,
  MIN_SAMPLE_RATE,
  MAX_SAMPLE_RATE,
  MAX_CHANNELS,
  type WavErrorCode,
} from './wav-header';
export { encodeWav, encodeWavHeader, encodeSamples, bytesPerSample, type SampleFormat, type EncodeOptions } from './wav-encode';
export {
  generateSine,
  generateLogSweep,
  generateSilence,
  generateNoise,
  addClick,
  mixInto,
  seededRandom,
  seededGaussian,
  type SignalShape,
  type SineOptions,
  type SweepOptions,
  type NoiseOptions,
  type ClickShape,
} from './generate';
export { aWeightingDb, aWeightingPowerGain } from './weighting';
export {
  DBU_REFERENCE_VOLTS,
  dbvToDbu,
  dbfsToDbv,
  meanSquareToDbfs,
  wattsIntoLoad,
  voltsForWatts,
  type Calibration,
} from './units';
export { makeWindow, windowProperties, scallopLossDb, highestSideLobeDb, type WindowKind } from './window';
export type {
  AnalysisResult,
  AnalyzeOptions,
  ChannelResult,
  Separation,
  Stimulus,
  WavInfo,
} from '../shared/analysis-result';
