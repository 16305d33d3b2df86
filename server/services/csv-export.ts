import { stringify } from 'csv-stringify/sync';
import type { CaptureSummary } from '../../shared/captures';
import type { CaptureFigures } from '../../shared/capture-figures';
import type { SignalPath, StageCapture } from '../../shared/signal-path';

type Cell = string | number | boolean | null;

/**
 * A text cell that a spreadsheet would run as a formula (starting with = + - @, tab or return)
 * gets a leading apostrophe, the usual guard against formula injection. Numbers are left alone.
 */
export function safeText(value: string): string {
  return /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
}

/** RFC 4180 CSV with CRLF line ends and a header row; empty cells for missing figures. */
export function toCsv(header: string[], rows: Cell[][]): string {
  return stringify([header, ...rows], {
    record_delimiter: 'windows',
    cast: { boolean: (b) => (b ? 'yes' : 'no'), string: (s) => safeText(s) },
  });
}

/** The figures columns, with units in the headers (dBFS per AES17; see analysis/). */
const FIGURE_COLUMNS: [keyof CaptureFigures, string][] = [
  ['fundamentalHz', 'Fundamental (Hz)'],
  ['levelDbfs', 'Level (dBFS)'],
  ['levelDbv', 'Level (dBV)'],
  ['levelDbu', 'Level (dBu)'],
  ['thdPct', 'THD (%)'],
  ['thdDb', 'THD (dB)'],
  ['thdnDb', 'THD+N (dB)'],
  ['sinadDb', 'SINAD (dB)'],
  ['noiseDbfs', 'Noise 20 Hz-20 kHz (dBFS)'],
  ['noiseDbfsA', 'Noise A-weighted (dBFS)'],
  ['noiseDbvA', 'Noise A-weighted (dBV)'],
  ['noiseDbuA', 'Noise A-weighted (dBu)'],
  ['humDbfs', 'Hum (dBFS)'],
  ['clickCount', 'Clicks'],
  ['clicksPerMinute', 'Clicks per minute'],
  ['separationDb', 'Separation (dB)'],
  ['separationNoiseLimited', 'Separation is a lower bound'],
  ['powerW', 'Power (W)'],
  ['loadOhms', 'Load (ohms)'],
];

/** One row per measured capture of the job, oldest first, every headline figure in its own column. */
export function figuresCsv(reference: string, list: CaptureSummary[]): string {
  const measured = list.filter((c) => c.state === 'done' && c.figures).sort((a, b) => a.createdAt.localeCompare(b.createdAt) || a.id - b.id);
  const header = ['Job', 'Capture', 'File', 'Test point position', 'Test point', 'Phase', 'Stimulus', 'Selected input', 'Driven input', 'Driven channel', 'Recorded at (UTC)', 'Engine version', ...FIGURE_COLUMNS.map(([, label]) => label)];
  const rows = measured.map((c) => {
    const f = c.figures!;
    return [
      reference,
      c.id,
      c.originalName,
      c.testPointPosition,
      c.testPointName,
      c.phase,
      c.stimulus,
      c.selectedInput,
      c.drivenInput,
      f.drivenChannel,
      c.createdAt,
      c.engineVersion,
      ...FIGURE_COLUMNS.map(([key]) => {
        const v = f[key];
        return typeof v === 'number' || typeof v === 'boolean' ? v : null;
      }),
    ];
  });
  return toCsv(header, rows);
}

const stageCells = (s: StageCapture | null): Cell[] =>
  s ? [s.captureId, s.originalName, s.thdPct, s.noiseDbfsA, s.separationDb, s.separationNoiseLimited, s.clickCount, s.faults.map((f) => f.message).join('; ')] : [null, null, null, null, null, null, null, null];

/** The signal-path table: each test point in order with its latest before and after figures. */
export function signalPathCsv(reference: string, path: SignalPath): string {
  const side = (phase: string) => [
    `${phase} capture`,
    `${phase} file`,
    `${phase} THD (%)`,
    `${phase} noise A-weighted (dBFS)`,
    `${phase} separation (dB)`,
    `${phase} separation is a lower bound`,
    `${phase} clicks`,
    `${phase} faults`,
  ];
  const header = ['Job', 'Position', 'Test point', 'Description', ...side('Before'), ...side('After'), 'First fault before repair', 'First fault after repair'];
  const rows = path.rows.map((r) => [
    reference,
    r.position,
    r.name,
    r.description,
    ...stageCells(r.before),
    ...stageCells(r.after),
    path.firstFault.before?.testPointId === r.testPointId,
    path.firstFault.after?.testPointId === r.testPointId,
  ]);
  return toCsv(header, rows);
}
