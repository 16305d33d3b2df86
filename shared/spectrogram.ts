import type { Spectrogram } from './analysis-result';
import { base64ToBytes } from './byte-text';

// Reading the stored spectrogram (shared/analysis-result.ts spectrogramSchema) back into numbers:
// used by the measurements page, the evidence PDF and the tests.

export interface SpectrogramGrid {
  columns: number;
  rows: number;
  /** dBFS per cell, [column·rows + row]; floorDb for cells at or below the floor. */
  db: Float32Array;
}

export function spectrogramGrid(s: Spectrogram, channel: number): SpectrogramGrid {
  const entry = s.channels.find((c) => c.index === channel);
  if (!entry) throw new RangeError(`the spectrogram has no channel ${channel}`);
  const bytes = base64ToBytes(entry.levels);
  if (bytes.length !== s.columns * s.rows) throw new RangeError(`spectrogram channel ${channel}: ${bytes.length} cells for ${s.columns}×${s.rows}`);
  const db = new Float32Array(bytes.length);
  for (let i = 0; i < bytes.length; i++) db[i] = s.floorDb + bytes[i]! * s.stepDb;
  return { columns: s.columns, rows: s.rows, db };
}

/** Lower edge of row f (f = rows gives the top edge), on the log axis. */
export function spectrogramRowHz(s: Pick<Spectrogram, 'lowHz' | 'highHz' | 'rows'>, f: number): number {
  return s.lowHz * (s.highHz / s.lowHz) ** (f / s.rows);
}

/** Row whose band holds the frequency (clamped to the picture). */
export function spectrogramRowOf(s: Pick<Spectrogram, 'lowHz' | 'highHz' | 'rows'>, hz: number): number {
  const f = Math.floor((s.rows * Math.log(hz / s.lowHz)) / Math.log(s.highHz / s.lowHz));
  return Math.min(s.rows - 1, Math.max(0, f));
}
