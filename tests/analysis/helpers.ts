import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

// Helpers for checks against Debian's sox: make files with it, and read its `stats` figures.

export const SOX = '/usr/bin/sox';

export interface SoxDir {
  path(name: string): string;
  sox(...args: string[]): void;
  read(name: string): Uint8Array;
  remove(): void;
}

/** A temporary directory for one test file's sox work; call remove() in afterAll. */
export function soxDir(): SoxDir {
  const dir = mkdtempSync(join(tmpdir(), 'quietpath-analysis-'));
  return {
    path: (name) => join(dir, name),
    sox: (...args) => {
      execFileSync(SOX, args, { stdio: ['ignore', 'ignore', 'pipe'] });
    },
    read: (name) => new Uint8Array(readFileSync(join(dir, name))),
    remove: () => rmSync(dir, { recursive: true, force: true }),
  };
}

export interface SoxChannelStats {
  dcOffset: number;
  pkLevDb: number;
  rmsLevDb: number;
  crestFactor: number;
}

/**
 * Per-channel figures of `sox FILE -n stats`. sox prints dB to 2 decimals, the DC offset to 6 and
 * the crest factor (peak/RMS ratio) to 2; for several channels the first column is "Overall".
 */
export function soxStats(file: string): SoxChannelStats[] {
  // stats reports on stderr; the shell folds it into stdout.
  return parseSoxStats(execFileSync('sh', ['-c', '"$0" "$1" -n stats 2>&1', SOX, file], { encoding: 'utf8' }));
}

export function parseSoxStats(text: string): SoxChannelStats[] {
  const lines = text.split('\n');
  const header = lines.find((l) => /^\s+Overall/.test(l));
  const channels = header ? header.trim().split(/\s+/).length - 1 : 1;
  const row = (label: string): string[] => {
    const line = lines.find((l) => l.startsWith(label));
    if (!line) throw new Error(`sox stats output has no "${label}" row:\n${text}`);
    const cells = line.slice(label.length).trim().split(/\s+/);
    return header ? cells.slice(cells.length - channels) : cells.slice(0, 1);
  };
  const dc = row('DC offset');
  const pk = row('Pk lev dB');
  const rms = row('RMS lev dB');
  const crest = row('Crest factor');
  return Array.from({ length: channels }, (_, c) => ({
    dcOffset: Number(dc[c]),
    pkLevDb: Number(pk[c]),
    rmsLevDb: Number(rms[c]),
    crestFactor: Number(crest[c]),
  }));
}

/** 10·log10 of a power ratio. */
export const db10 = (ratio: number): number => 10 * Math.log10(ratio);

/** AES17: dBFS of RMS = 20·log10(RMS·√2), so sox's 20·log10(RMS) reads 3.0103 dB lower. */
export const SOX_RMS_TO_DBFS = 20 * Math.log10(Math.SQRT2);
