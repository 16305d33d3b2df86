import { z } from 'zod';
import { stimulusSchema, type AnalysisResult, type ChannelResult } from './analysis-result';
import { powerFromDbv } from './power';

// The headline figures of one capture, flattened from the engine's per-channel result so lists,
// the signal-path table, comparisons and spec checks all read the same numbers.
// Which channel a figure comes from:
// - a driven capture (tone/sweep with a driven channel): level, THD, THD+N, SINAD and noise of
//   the driven channel, since that is the stage's signal;
// - otherwise (silence, programme): the worst channel for each figure (highest noise, highest
//   level), so a fault in either channel shows;
// - clicks and hum: always the worst channel, since crackle or hum in one channel is the fault;
// - separation: the lowest of the measured pairs.

const num = z.number().nullable();

export const sweepFiguresSchema = z.object({
  startHz: z.number(),
  endHz: z.number(),
  referenceHz: z.number(),
  channels: z.array(z.object({ channel: z.number().int(), frequencyHz: z.array(z.number()), responseDb: z.array(z.number()) })),
});
export type SweepFigures = z.infer<typeof sweepFiguresSchema>;

/** The test tone's narrow-band level in every channel, at the frequency found in the capture. */
export const toneLevelsSchema = z.object({
  frequencyHz: z.number(),
  channels: z.array(
    z.object({
      channel: z.number().int(),
      /** Power in the tone's window lobe, dBFS. */
      levelDbfs: num,
      /** Noise expected in the same lobe from the bins around it, dBFS. */
      noiseDbfs: num,
    }),
  ),
});
export type ToneLevels = z.infer<typeof toneLevelsSchema>;

export const captureFiguresSchema = z.object({
  stimulus: stimulusSchema,
  drivenChannel: z.number().int().nullable(),
  fundamentalHz: num,
  levelDbfs: num,
  levelDbv: num,
  levelDbu: num,
  thdPct: num,
  thdDb: num,
  thdnDb: num,
  sinadDb: num,
  noiseDbfs: num,
  noiseDbfsA: num,
  noiseDbvA: num,
  noiseDbuA: num,
  humDbfs: num,
  /** True when mains hum stands clear of the noise in any channel; humDbfs is reported either way.
   *  Optional: figures stored before it was added lack it. */
  humDetected: z.boolean().optional(),
  clickCount: z.number().int(),
  clicksPerMinute: z.number(),
  /** Channel whose clicks are reported (the one with the most). */
  clicksChannel: z.number().int().nullable(),
  separationDb: num,
  /** True when the separation is a lower bound (the leaked tone is lost in the noise). */
  separationNoiseLimited: z.boolean(),
  /** Output power across the stated dummy load from the calibrated RMS level, P = V²/R. */
  powerW: num,
  loadOhms: num,
  /** A log-sweep capture's response per channel (the driven one when known), in dB relative to
   *  referenceHz. Optional: figures stored before it was added lack it. */
  response: sweepFiguresSchema.nullable().optional(),
  /** A tone capture's narrow-band tone level per channel, for input crosstalk. Optional: figures
   *  stored before it was added lack it. */
  tone: toneLevelsSchema.nullable().optional(),
});
export type CaptureFigures = z.infer<typeof captureFiguresSchema>;

type Pick = (c: ChannelResult) => number | null;

function worst(channels: ChannelResult[], pick: Pick): ChannelResult | null {
  let best: ChannelResult | null = null;
  for (const c of channels) {
    const v = pick(c);
    if (v === null) continue;
    const current = best ? pick(best) : null;
    if (current === null || v > current) best = c;
  }
  return best;
}

export function figuresFromResult(result: AnalysisResult, options: { loadOhms: number | null }): CaptureFigures {
  const channels = result.channels;
  const driven = result.drivenChannel === null ? null : (channels.find((c) => c.index === result.drivenChannel) ?? null);
  // The same channel for every level figure, so level, dBV and power agree with each other.
  const levelChannel = driven ?? worst(channels, (c) => c.rmsDbfs);
  const noiseChannel = driven ?? worst(channels, (c) => c.noiseDbfsA ?? c.noiseDbfs);
  const humChannel = worst(channels, (c) => c.humDbfs);
  let clicksChannel: ChannelResult | null = null;
  for (const c of channels) if (!clicksChannel || c.clicks.count > clicksChannel.clicks.count) clicksChannel = c;

  let separation: AnalysisResult['separation'][number] | null = null;
  for (const s of result.separation) {
    if (s.db === null) continue;
    if (!separation || s.db < (separation.db as number)) separation = s;
  }

  const levelDbv = levelChannel?.levelDbv ?? null;
  const toneHz = channels.find((c) => c.fundamentalHz !== null)?.fundamentalHz ?? null;
  return {
    stimulus: result.stimulus,
    drivenChannel: result.drivenChannel,
    fundamentalHz: driven?.fundamentalHz ?? null,
    levelDbfs: levelChannel?.rmsDbfs ?? null,
    levelDbv,
    levelDbu: levelChannel?.levelDbu ?? null,
    thdPct: driven?.thdPct ?? null,
    thdDb: driven?.thdDb ?? null,
    thdnDb: driven?.thdnDb ?? null,
    sinadDb: driven?.sinadDb ?? null,
    noiseDbfs: noiseChannel?.noiseDbfs ?? null,
    noiseDbfsA: noiseChannel?.noiseDbfsA ?? null,
    noiseDbvA: noiseChannel?.noiseDbvA ?? null,
    noiseDbuA: noiseChannel?.noiseDbuA ?? null,
    humDbfs: humChannel?.humDbfs ?? null,
    humDetected: channels.some((c) => c.hum.detected),
    clickCount: clicksChannel?.clicks.count ?? 0,
    clicksPerMinute: clicksChannel?.clicks.perMinute ?? 0,
    clicksChannel: clicksChannel && clicksChannel.clicks.count > 0 ? clicksChannel.index : null,
    separationDb: separation?.db ?? null,
    separationNoiseLimited: separation?.noiseLimited ?? false,
    // Power is a steady sine's: the noise or a sweep across the load is not an output power.
    powerW: result.stimulus === 'tone' ? powerFromDbv(levelDbv, options.loadOhms) : null,
    loadOhms: options.loadOhms,
    response: result.sweep
      ? {
          startHz: result.sweep.startHz,
          endHz: result.sweep.endHz,
          referenceHz: result.sweep.referenceHz,
          channels: result.sweep.channels
            .filter((c) => result.drivenChannel === null || c.channel === result.drivenChannel)
            .map(({ channel, frequencyHz, responseDb }) => ({ channel, frequencyHz, responseDb })),
        }
      : null,
    tone:
      toneHz === null
        ? null
        : {
            frequencyHz: toneHz,
            channels: channels.map((c) => ({ channel: c.index, levelDbfs: c.fundamentalDbfs, noiseDbfs: c.toneNoiseDbfs ?? null })),
          },
  };
}
