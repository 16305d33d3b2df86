import type { Stimulus } from '@shared/analysis-result';
import type { RecordingFormat } from '@shared/recordings';

// Messages between the live bench page and its analysis worker.

export interface LiveSettings {
  /** The stimulus to analyse for; undefined lets the engine decide from the signal. */
  stimulus?: Stimulus;
  /** Expected tone; the engine looks for the fundamental within ±5 % of it. */
  toneHz?: number;
  mainsHz?: 50 | 60;
}

export type ToWorker =
  | { type: 'start'; port: MessagePort; sampleRate: number; channels: number; settings: LiveSettings }
  | { type: 'settings'; settings: LiveSettings }
  | { type: 'reset-clicks' }
  | { type: 'record-start'; format: RecordingFormat; chunkSeconds: number; seconds: number }
  | { type: 'record-stop' }
  | { type: 'measure-level'; seconds: number }
  | { type: 'stop' };

export interface LiveChannel {
  index: number;
  rmsDbfs: number | null;
  peakDbfs: number | null;
  fundamentalHz: number | null;
  fundamentalDbfs: number | null;
  thdPct: number | null;
  thdnDb: number | null;
  noiseDbfs: number | null;
  noiseDbfsA: number | null;
  humDbfs: number | null;
  clippedSamples: number;
  /** Clicks since the counter was last reset. */
  clicks: number;
}

export interface LiveSpectrum {
  frequencyHz: number[];
  /** One row per channel, aligned with frequencyHz. */
  levelDbfs: number[][];
  markers: { channel: number; kind: 'fundamental' | 'harmonic' | 'hum'; frequencyHz: number; levelDbfs: number | null }[];
}

export interface LiveFigures {
  /** Stream position of the window's end, seconds since the input started. */
  atS: number;
  windowS: number;
  sampleRate: number;
  stimulus: Stimulus;
  drivenChannel: number | null;
  channels: LiveChannel[];
  separation: { driven: number; other: number; db: number | null; noiseLimited: boolean }[];
  spectrum: LiveSpectrum;
  warnings: string[];
  /** Time the engine took for this window, for the page to show when the machine is struggling. */
  analysisMs: number;
  /** True when windows were skipped to keep up: the click counter may have missed stretches. */
  fellBehind: boolean;
}

export interface RecordProgress {
  frames: number;
  seconds: number;
  /** Clicks counted in the recorded stretch so far, per channel. */
  clicks: number[];
}

export type FromWorker =
  | { type: 'figures'; figures: LiveFigures; recording: RecordProgress | null }
  | { type: 'chunk'; seq: number; bytes: ArrayBuffer; frames: number }
  | { type: 'record-done'; frames: number; chunks: number; clicks: number[] }
  | { type: 'level'; rmsDbfs: (number | null)[]; seconds: number }
  | { type: 'error'; message: string };
