/**
 * Input crosstalk matrix from synthetic captures with leak levels known by construction.
 * Truth: each leak capture holds the reference tone scaled by −X dB, so the figure in the
 * IEC 60268-3 form 20·lg(U_driven/U_undriven) is X (analytic). Captures go through the whole
 * engine (WAV bytes → analysis → stored figures) with the options the worker uses.
 */
import { describe, expect, it } from 'vitest';
import { analyzeWavBytes, encodeWav, generateNoise, generateSine, mixInto } from '../../analysis/index';
import { figuresFromResult } from '../../shared/capture-figures';
import { buildCrosstalkMatrix, cellAt, CROSSTALK_TONE_HZ, formatCrosstalk, type CrosstalkCapture } from '../../shared/input-crosstalk';
import { compareCrosstalk } from '../../shared/input-crosstalk-compare';

const FS = 48_000;
const SECONDS = 2;
const TONE_HZ = 997; // AES17 test frequency
const REF_DBFS = [-10, -12] as const; // reference level per channel

interface Extras {
  /** 50 Hz mains hum added to every channel, dBFS. */
  humDbfs?: number;
  /** White noise added to every channel, dBFS. */
  noiseDbfs?: number;
  /** 16-bit with TPDF dither instead of 32-bit float. */
  dither16?: boolean;
}

/** A stereo capture of the test tone at the given level per channel (null = no tone), plus extras. */
function capture(levels: readonly (number | null)[], x: Extras, seed: number): Uint8Array {
  const channels = levels.map((dbfs, c) => {
    const ch = dbfs === null ? new Float64Array(FS * SECONDS) : generateSine({ sampleRate: FS, seconds: SECONDS, frequencyHz: TONE_HZ, levelDbfs: dbfs })[0]!;
    if (x.humDbfs !== undefined) mixInto(ch, generateSine({ sampleRate: FS, seconds: SECONDS, frequencyHz: 50, levelDbfs: x.humDbfs, phaseRad: c })[0]!);
    if (x.noiseDbfs !== undefined) mixInto(ch, generateNoise({ sampleRate: FS, seconds: SECONDS, levelDbfs: x.noiseDbfs, seed: seed * 10 + c })[0]!);
    return ch;
  });
  return x.dither16 ? encodeWav(channels, FS, 16, { dither: 'tpdf', seed }) : encodeWav(channels, FS, 'float32');
}

let nextId = 1;
/** Measured as the worker measures a capture tagged with inputs. */
function measured(bytes: Uint8Array, selectedInput: string, drivenInput: string, phase: 'before' | 'after' = 'before'): CrosstalkCapture {
  const result = analyzeWavBytes(bytes, { stimulus: 'tone', toneHz: CROSSTALK_TONE_HZ });
  const figures = figuresFromResult(result, { loadOhms: null });
  const id = nextId++;
  return { id, phase, selectedInput, drivenInput, createdAt: `2026-01-01T00:00:${String(id).padStart(2, '0')}Z`, tone: figures.tone };
}

/** Leak per selected input, dB below the reference; the right channel leaks 3 dB more. */
const LEAKS: Record<string, number> = { Phono: 30, Tuner: 55, Aux: 70, Recorder: 90 };

function matrixFor(x: Extras) {
  const caps = [measured(capture(REF_DBFS, x, 1), 'Disc', 'Disc')];
  let seed = 2;
  for (const [selected, db] of Object.entries(LEAKS)) {
    caps.push(measured(capture([REF_DBFS[0] - db, REF_DBFS[1] - (db - 3)], x, seed++), selected, 'disc'));
  }
  return buildCrosstalkMatrix({ captures: caps, phase: 'before', inputOrder: ['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder'] });
}

describe('input crosstalk matrix against leaks of known level', () => {
  const cases: [string, Extras][] = [
    ['clean float capture', {}],
    ['50 Hz hum at −40 dBFS', { humDbfs: -40 }],
    ['16-bit with TPDF dither', { dither16: true }],
    ['hum and dither together', { humDbfs: -40, dither16: true }],
  ];
  it.each(cases)('%s: every cell within 0.5 dB of the built-in leak, none flagged', (_name, x) => {
    const m = matrixFor(x);
    expect(m.driven).toEqual(['Disc']);
    expect(m.selected).toEqual(['Phono', 'Tuner', 'Aux', 'Recorder']);
    expect(m.channels).toEqual([0, 1]);
    expect(m.missingReference).toEqual([]);
    for (const [selected, db] of Object.entries(LEAKS)) {
      const left = cellAt(m, 'Disc', selected, 0)!;
      const right = cellAt(m, 'Disc', selected, 1)!;
      expect(Math.abs(left.db! - db), `${selected} left`).toBeLessThan(0.5);
      expect(Math.abs(right.db! - (db - 3)), `${selected} right`).toBeLessThan(0.5);
      expect(left.noiseLimited).toBe(false);
      expect(right.noiseLimited).toBe(false);
    }
  });

  it('a leak buried in the noise is flagged and given as a bound the truth lies beyond', () => {
    // White noise at −70 dBFS: in a lobe of ~50 Hz that is about −97 dBFS, so a tone at −100 dBFS
    // (90 dB below) cannot be read, while one at −80 dBFS (70 dB below) stands ~17 dB clear.
    const x: Extras = { noiseDbfs: -70 };
    const caps = [
      measured(capture(REF_DBFS, x, 1), 'Disc', 'Disc'),
      measured(capture([REF_DBFS[0] - 70, REF_DBFS[1] - 70], x, 2), 'Aux', 'Disc'),
      measured(capture([REF_DBFS[0] - 90, REF_DBFS[1] - 90], x, 3), 'Recorder', 'Disc'),
      measured(capture([null, null], x, 4), 'Tuner', 'Disc'),
    ];
    const m = buildCrosstalkMatrix({ captures: caps, phase: 'before' });
    for (const ch of [0, 1]) {
      const aux = cellAt(m, 'Disc', 'Aux', ch)!;
      expect(aux.noiseLimited).toBe(false);
      expect(Math.abs(aux.db! - 70)).toBeLessThan(0.5);
      for (const selected of ['Recorder', 'Tuner']) {
        const cell = cellAt(m, 'Disc', selected, ch)!;
        expect(cell.noiseLimited, `${selected} ${ch}`).toBe(true);
        // The bound is what the noise lets through: short of the truth (90 dB, or no leak at all).
        expect(cell.db!).toBeLessThan(90);
        expect(cell.db!).toBeGreaterThan(75);
        expect(formatCrosstalk(cell)).toMatch(/^better than \d+\.\d dB$/);
      }
    }
  });

  it('an entered reference level stands in for a missing reference capture', () => {
    const leak = measured(capture([-10 - 55, -10 - 55], {}, 5), 'Aux', 'Tuner');
    const without = buildCrosstalkMatrix({ captures: [leak], phase: 'before' });
    expect(without.missingReference).toEqual(['Tuner']);
    expect(cellAt(without, 'Tuner', 'Aux', 0)!.db).toBeNull();
    const withLevel = buildCrosstalkMatrix({ captures: [leak], phase: 'before', enteredReferenceDbfs: { tuner: -10 } });
    expect(Math.abs(cellAt(withLevel, 'Tuner', 'Aux', 0)!.db! - 55)).toBeLessThan(0.5);
    expect(withLevel.references[0]).toMatchObject({ driven: 'Tuner', captureId: null, levelDbfs: -10 });
  });
});

describe('before and after', () => {
  it('judges each side against the published figure and says it in one sentence', () => {
    const caps = [
      measured(capture([-10, -10], {}, 1), 'Tuner', 'Tuner', 'before'),
      measured(capture([-10 - 29, -10 - 31], { humDbfs: -50 }, 2), 'Disc', 'Tuner', 'before'),
      measured(capture([-10, -10], {}, 3), 'Tuner', 'Tuner', 'after'),
      measured(capture([-10 - 71, -10 - 74], { dither16: true }, 4), 'Disc', 'Tuner', 'after'),
    ];
    const c = compareCrosstalk({ captures: caps, publishedDb: 60 });
    expect(c.limitSource).toBe('spec_sheet');
    expect(c.rows).toHaveLength(1);
    const row = c.rows[0]!;
    // Worse channel on each side: 29 dB before, 71 dB after.
    expect(Math.abs(row.before!.db! - 29)).toBeLessThan(0.5);
    expect(Math.abs(row.after!.db! - 71)).toBeLessThan(0.5);
    expect(row.beforeVerdict).toBe('short');
    expect(row.afterVerdict).toBe('meets');
    expect(Math.abs(row.changeDb! - 42)).toBeLessThan(1);
    expect(c.sentence).toBe('Tuner is now heard 71 dB below the selected disc input; before the repair it was 29 dB below.');
    // Without a published figure the trade minimum (40 dB) is the limit.
    expect(compareCrosstalk({ captures: caps }).limitDb).toBe(40);
  });
});
