import type {
  AnalysisResult,
  AnalyzeOptions,
  ChannelResult,
  Separation,
  Spectrogram,
  WavInfo,
} from '../shared/analysis-result';
import type { ClickFigures } from './clicks';
import { detectMains, HUM_HARMONICS, measureHum, type HumFigures } from './hum';
import type { LevelFigures } from './levels';
import { localNoisePerBin, noiseMeanSquare } from './noise';
import { measureSeparation } from './separation';
import { summarizeSpectrum, type AveragedSpectrum } from './spectrum';
import { detectStimulus, isTone, toneCandidates, type ToneCandidate } from './stimulus';
import { sweepResponse } from './sweep';
import { bandBins, lobeCentroidHz, measureTone, type ToneFigures } from './thd';
import {
  dbfsToDbv,
  dbvAtFullScale,
  dbvToDbu,
  meanSquareToDbfs,
  powerRatioDb,
  roundTo,
  type Calibration,
} from './units';
import { mainLobeHalfWidthBins } from './window';

// Turns the streaming pass's raw figures into the result JSON (shared/analysis-result.ts).

export const MEASUREMENT_WINDOW = 'blackman-harris-7' as const;
/** Lobe half-width used for every narrow-band figure: the window's main lobe plus one bin for drift. */
export const LOBE_HALF_WIDTH = mainLobeHalfWidthBins(MEASUREMENT_WINDOW) + 1;
/** AES17 measurement band. */
const BAND_LOW_HZ = 20;
const BAND_HIGH_HZ = 20_000;

export interface Measured {
  engineVersion: string;
  info: WavInfo;
  options: AnalyzeOptions;
  levels: LevelFigures[];
  clicks: ClickFigures[];
  spectrum: AveragedSpectrum | null;
  sweepSpectrum: AveragedSpectrum | null;
  spectrogram: Spectrogram | null;
}

const ratioDb = (ratio: number | null): number | null => (ratio === null ? null : powerRatioDb(ratio * ratio));
const pct = (ratio: number | null): number | null => (ratio === null ? null : ratio * 100);
const minus = (a: number, b: number | null): number | null => (b === null ? null : a - b);

function toneAnalysis(m: Measured, spectrum: AveragedSpectrum, channel: number, peakBin: number) {
  const fs = m.info.sampleRate;
  const fundamentalHz = lobeCentroidHz(spectrum.power[channel]!, spectrum.binHz, peakBin, LOBE_HALF_WIDTH);
  const band = bandBins(spectrum.binHz, spectrum.power[0]!.length, BAND_LOW_HZ, Math.min(BAND_HIGH_HZ, fs / 2));
  const perChannel = spectrum.power.map((power) =>
    measureTone({ power, binHz: spectrum.binHz, sampleRate: fs, fundamentalHz, halfWidth: LOBE_HALF_WIDTH, band }),
  );
  return { fundamentalHz, perChannel };
}

export function buildResult(m: Measured): AnalysisResult {
  const { info, options, levels, spectrum } = m;
  const fs = info.sampleRate;
  const warnings: string[] = [];
  const cal: Calibration | null = options.voltsAtFullScale
    ? { voltsAtFullScale: options.voltsAtFullScale, probeAttenuation: options.probeAttenuation ?? 1 }
    : null;
  if (!cal && options.probeAttenuation !== undefined) warnings.push('probeAttenuation ignored: no voltsAtFullScale given');
  const bandHighHz = Math.min(BAND_HIGH_HZ, fs / 2);
  const referenceDbfs = options.referenceDbfs ?? 0;
  if (!spectrum) warnings.push('capture too short for spectral figures (fewer than 64 frames)');
  else if (spectrum.binHz > 2) {
    warnings.push(`short capture: ${spectrum.binHz.toFixed(2)} Hz frequency resolution, so hum and low tones are less certain`);
  }

  const candidates = spectrum ? toneCandidates(spectrum, LOBE_HALF_WIDTH, fs, options.toneHz) : [];
  const given = options.drivenChannel;
  // The tone's reference channel: the driven one when given, else the one carrying most tone.
  let reference: ToneCandidate | null = given !== undefined ? candidates[given] ?? null : null;
  if (given === undefined) for (const c of candidates) if (!reference || c.lobePower > reference.lobePower) reference = c;
  const stimulus =
    options.stimulus ??
    detectStimulus({ levels, sampleRate: fs, tone: reference, binHz: spectrum?.binHz ?? 1, sweepPossible: m.sweepSpectrum !== null });

  const mainsDetected = spectrum ? detectMains(spectrum.power, spectrum.binHz) : null;
  const mainsHz = options.mainsHz ?? mainsDetected ?? 50;

  let tone: ReturnType<typeof toneAnalysis> | null = null;
  if (stimulus === 'tone' && spectrum && reference) {
    if (!isTone(reference, spectrum.binHz)) warnings.push('no clear tone peak found; tone figures refer to the highest peak');
    tone = toneAnalysis(m, spectrum, reference.channel, reference.peakBin);
    if (tone.perChannel.some((t) => t.thdRatio === null)) {
      warnings.push('tone too low for the frequency resolution: THD not measured');
    }
  }

  const channels = levels.map((lv, c) => buildChannel(m, c, lv, stimulus, tone?.perChannel[c] ?? null, mainsHz, cal, referenceDbfs));
  levels.forEach((lv, c) => {
    if (lv.clippedSamples > 0) warnings.push(`channel ${c}: ${lv.clippedSamples} samples at full scale (clipping?)`);
  });

  let separation: Separation[] = [];
  let drivenChannel: number | null = given ?? null;
  if (tone && spectrum && info.channels > 1 && reference) {
    const driven = given ?? reference.channel;
    drivenChannel = driven;
    const drivenPower = tone.perChannel[driven]!.fundamentalPower;
    const others: number[] = [];
    for (let c = 0; c < info.channels; c++) {
      if (c === driven) continue;
      // Without a given driven channel, a channel within 6 dB of it is taken as driven too.
      if (given === undefined && tone.perChannel[c]!.fundamentalPower * 4 > drivenPower) {
        warnings.push(`channels ${driven} and ${c} both carry the tone: no separation figure (give the driven channel to force one)`);
      } else others.push(c);
    }
    separation = measureSeparation({
      spectrum,
      driven,
      lobe: tone.perChannel[driven]!.excluded[0]!,
      frequencyHz: tone.fundamentalHz,
      excluded: tone.perChannel[driven]!.excluded,
      others,
    });
  } else if (tone && reference) drivenChannel = given ?? reference.channel;

  let sweep: AnalysisResult['sweep'] = null;
  if (stimulus === 'sweep') {
    const startHz = options.sweepStartHz ?? 20;
    const endHz = options.sweepEndHz ?? Math.min(20_000, 0.45 * fs);
    const ss = m.sweepSpectrum;
    const responses = ss ? ss.power.map((power) => sweepResponse({ power, binHz: ss.binHz, startHz, endHz })) : [];
    const first = responses.find((r) => r !== null);
    if (!first) warnings.push('sweep response not measured: capture or sweep range too short');
    else {
      sweep = {
        startHz,
        endHz,
        referenceHz: first.referenceHz,
        channels: responses.flatMap((r, channel) => {
          if (!r) return [];
          const { frequencyHz, responseDb, lowMinus3dbHz, highMinus3dbHz } = r;
          return [{ channel, frequencyHz, responseDb, lowMinus3dbHz, highMinus3dbHz }];
        }),
      };
    }
  }

  return {
    engineVersion: m.engineVersion,
    file: {
      container: info.container,
      format: info.format,
      extensible: info.extensible,
      sampleRate: fs,
      bitsPerSample: info.bitsPerSample,
      validBitsPerSample: info.validBitsPerSample,
      channels: info.channels,
      frames: info.frames,
      durationS: info.durationS,
    },
    stimulus,
    stimulusSource: options.stimulus ? 'given' : 'detected',
    drivenChannel,
    drivenSource: given !== undefined ? 'given' : drivenChannel !== null ? 'detected' : null,
    mainsHz,
    mainsSource: options.mainsHz ? 'given' : mainsDetected ? 'detected' : 'default',
    calibration: cal ? { ...cal, dbvAtFullScale: dbvAtFullScale(cal) } : null,
    snrReferenceDbfs: referenceDbfs,
    measurement: {
      bandLowHz: BAND_LOW_HZ,
      bandHighHz,
      window: MEASUREMENT_WINDOW,
      fftSize: spectrum?.fftSize ?? 0,
      binHz: spectrum?.binHz ?? 0,
      fftFrames: spectrum?.frames ?? 0,
    },
    channels,
    separation,
    sweep,
    spectrogram: m.spectrogram,
    warnings,
  };
}

function buildChannel(
  m: Measured,
  c: number,
  lv: LevelFigures,
  stimulus: AnalysisResult['stimulus'],
  tone: ToneFigures | null,
  mainsHz: 50 | 60,
  cal: Calibration | null,
  referenceDbfs: number,
): ChannelResult {
  const spectrum = m.spectrum;
  const fs = m.info.sampleRate;
  const p = spectrum?.power[c] ?? null;
  const band = spectrum ? bandBins(spectrum.binHz, spectrum.power[0]!.length, BAND_LOW_HZ, Math.min(BAND_HIGH_HZ, fs / 2)) : null;
  const excluded = tone ? tone.excluded : [];
  const noiseApplies = spectrum && p && band && (stimulus === 'tone' || stimulus === 'silence');
  const noise = noiseApplies ? noiseMeanSquare({ power: p, binHz: spectrum.binHz, band, excluded }) : null;
  const noiseA = noiseApplies ? noiseMeanSquare({ power: p, binHz: spectrum.binHz, band, excluded, weighting: 'A' }) : null;
  const noiseDbfs = noise === null ? null : meanSquareToDbfs(noise);
  const noiseDbfsA = noiseA === null ? null : meanSquareToDbfs(noiseA);

  const humApplies = spectrum && p && (stimulus === 'tone' || stimulus === 'silence');
  const hum: HumFigures | null = humApplies
    ? measureHum({ power: p, binHz: spectrum.binHz, mainsHz, halfWidth: LOBE_HALF_WIDTH, excluded })
    : null;

  const fundamentalDbfs = tone ? meanSquareToDbfs(tone.fundamentalPower) : null;
  // The same lobe width as the fundamental's, so tone and noise compare power for power.
  const toneNoiseDbfs =
    tone && p && spectrum
      ? meanSquareToDbfs(localNoisePerBin(p, Math.round(tone.fundamentalHz / spectrum.binHz), LOBE_HALF_WIDTH, tone.excluded.slice(1)) * (2 * LOBE_HALF_WIDTH + 1))
      : null;
  const thdnDb = tone ? ratioDb(tone.thdnRatio) : null;
  const dbv = (dbfs: number | null): number | null => dbfsToDbv(dbfs, cal);

  const markers: ChannelResult['spectrum']['markers'] = [];
  if (tone) {
    markers.push({ kind: 'fundamental', order: 1, frequencyHz: roundTo(tone.fundamentalHz, 3), levelDbfs: fundamentalDbfs });
    for (const h of tone.harmonics) {
      markers.push({ kind: 'harmonic', order: h.order, frequencyHz: roundTo(h.frequencyHz, 3), levelDbfs: meanSquareToDbfs(h.power) });
    }
  }
  for (const h of hum?.harmonics ?? []) {
    if (h.power !== null) markers.push({ kind: 'hum', order: h.order, frequencyHz: h.frequencyHz, levelDbfs: meanSquareToDbfs(h.power) });
  }
  const summary =
    spectrum && p
      ? summarizeSpectrum(spectrum, p, Math.max(10, 2 * spectrum.binHz), fs / 2)
      : { frequencyHz: [], levelDbfs: [], floorDbfs: -200 };
  const clicks = m.clicks[c]!;

  return {
    index: c,
    rmsDbfs: lv.rmsDbfs,
    peakDbfs: lv.peakDbfs,
    crestFactorDb: lv.crestFactorDb,
    dcOffset: lv.dcOffset,
    clippedSamples: lv.clippedSamples,
    fundamentalHz: tone ? tone.fundamentalHz : null,
    fundamentalDbfs,
    toneNoiseDbfs,
    thdPct: tone ? pct(tone.thdRatio) : null,
    thdDb: tone ? ratioDb(tone.thdRatio) : null,
    thdnPct: tone ? pct(tone.thdnRatio) : null,
    thdnDb,
    sinadDb: thdnDb === null ? null : -thdnDb,
    harmonics: (tone?.harmonics ?? []).map((h) => ({
      order: h.order,
      frequencyHz: h.frequencyHz,
      levelDbfs: meanSquareToDbfs(h.power),
      relativeDb: tone && tone.fundamentalPower > 0 ? powerRatioDb(h.power / tone.fundamentalPower) : null,
    })),
    noiseDbfs,
    noiseDbfsA,
    snrDb: minus(referenceDbfs, noiseDbfs),
    snrDbA: minus(referenceDbfs, noiseDbfsA),
    levelDbv: dbv(lv.rmsDbfs),
    levelDbu: dbvToDbu(dbv(lv.rmsDbfs)),
    fundamentalDbv: dbv(fundamentalDbfs),
    fundamentalDbu: dbvToDbu(dbv(fundamentalDbfs)),
    noiseDbv: dbv(noiseDbfs),
    noiseDbu: dbvToDbu(dbv(noiseDbfs)),
    noiseDbvA: dbv(noiseDbfsA),
    noiseDbuA: dbvToDbu(dbv(noiseDbfsA)),
    humDbfs: hum ? meanSquareToDbfs(hum.totalPower) : null,
    hum: {
      mainsHz,
      detected: hum?.detected ?? false,
      harmonics: Array.from({ length: HUM_HARMONICS }, (_, i) => {
        const h = hum?.harmonics[i];
        return {
          order: i + 1,
          frequencyHz: (i + 1) * mainsHz,
          levelDbfs: h && h.power !== null ? meanSquareToDbfs(h.power) : null,
          aboveNoiseDb: h?.aboveNoiseDb ?? null,
        };
      }),
    },
    clicks: {
      count: clicks.count,
      perMinute: clicks.perMinute,
      eventsTruncated: clicks.eventsTruncated,
      events: clicks.events.map((e) => ({
        timeS: roundTo(e.timeS, 5),
        peakDbfs: e.peakDbfs === null ? null : roundTo(e.peakDbfs, 2),
        durationMs: roundTo(e.durationMs, 3),
      })),
    },
    spectrum: { ...summary, markers },
    waveform: lv.waveform,
  };
}
