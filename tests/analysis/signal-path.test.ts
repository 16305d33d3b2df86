import { describe, expect, it } from 'vitest';
import { faultCriteria, firstFaultyStage, stageFaults, TRADE_SEPARATION_THRESHOLD_DB, type StageInput } from '../../shared/signal-path';
import { figures } from './measurement-figures';

const stage = (testPointId: number, position: number, f: StageInput['figures']): StageInput => ({ testPointId, position, name: `TP${position}`, figures: f });
const trade = faultCriteria(null);

describe('stageFaults', () => {
  it('clicks and low separation each make a stage faulty', () => {
    expect(stageFaults(figures(), trade)).toEqual([]);
    expect(stageFaults(figures({ clickCount: 36, clicksPerMinute: 720, separationDb: 30 }), trade)).toEqual([
      { kind: 'clicks', message: '36 clicks (720.0 per minute)' },
      { kind: 'separation', message: 'separation 30.0 dB, below 50 dB' },
    ]);
    expect(stageFaults(figures({ clickCount: 1, clicksPerMinute: 20 }), trade)[0]!.message).toBe('1 click (20.0 per minute)');
  });

  it('a separation limited by the noise floor is a lower bound, not a fault', () => {
    expect(stageFaults(figures({ separationDb: 45, separationNoiseLimited: true }), trade)).toEqual([]);
  });

  it('the threshold is the spec sheet figure when there is one, else 50 dB trade practice', () => {
    expect(TRADE_SEPARATION_THRESHOLD_DB).toBe(50);
    expect(trade).toMatchObject({ separationThresholdDb: 50, separationSource: 'trade_practice' });
    expect(trade.note).toMatch(/trade practice, not a standard/);
    const spec = faultCriteria(60);
    expect(spec).toMatchObject({ separationThresholdDb: 60, separationSource: 'spec_sheet' });
    const at55 = figures({ separationDb: 55 });
    expect(stageFaults(at55, trade)).toEqual([]);
    expect(stageFaults(at55, spec).map((f) => f.kind)).toEqual(['separation']);
    // Exactly at the threshold passes.
    expect(stageFaults(figures({ separationDb: 50 }), trade)).toEqual([]);
  });
});

describe('firstFaultyStage', () => {
  it('finds the first faulty stage in signal order, not in the order given', () => {
    const stages = [
      stage(30, 3, figures({ separationDb: 20 })),
      stage(10, 1, figures()),
      stage(20, 2, figures({ clickCount: 4, clicksPerMinute: 80 })),
    ];
    expect(firstFaultyStage(stages, trade)).toMatchObject({ testPointId: 20, position: 2, cleanStagesBefore: 1, faults: [{ kind: 'clicks' }] });
  });

  it('skips stages that were not measured and counts only measured clean ones', () => {
    const stages = [stage(1, 1, null), stage(2, 2, figures()), stage(3, 3, null), stage(4, 4, figures({ separationDb: 30 }))];
    expect(firstFaultyStage(stages, trade)).toMatchObject({ testPointId: 4, cleanStagesBefore: 1 });
  });

  it('is null when every measured stage is clean, or nothing is measured', () => {
    expect(firstFaultyStage([stage(1, 1, figures()), stage(2, 2, figures())], trade)).toBeNull();
    expect(firstFaultyStage([stage(1, 1, null)], trade)).toBeNull();
    expect(firstFaultyStage([], trade)).toBeNull();
  });
});

describe('input crosstalk in the signal path', () => {
  // Limits: the spec sheet's input crosstalk figure, else 40 dB (DIN 45500 part 6 crosstalk minimum at 1 kHz, historic).
  const leak = (db: number, noiseLimited = false) => ({ driven: 'Tuner', selected: 'Disc', db, noiseLimited });

  it('another input heard less far down than the limit marks the stage; a bound does not', () => {
    expect(trade.crosstalkThresholdDb).toBe(40);
    expect(stageFaults(figures(), trade, leak(29))).toEqual([{ kind: 'crosstalk', message: 'Tuner heard 29.0 dB below the selected Disc input, less than 40 dB' }]);
    expect(stageFaults(figures(), trade, leak(40))).toEqual([]);
    expect(stageFaults(figures(), trade, leak(30, true))).toEqual([]);
    expect(stageFaults(figures(), faultCriteria(null, 65), leak(62)).map((f) => f.kind)).toEqual(['crosstalk']);
  });

  it('a stage measured only for crosstalk can be the first faulty one', () => {
    const stages: StageInput[] = [
      stage(1, 1, figures()),
      { testPointId: 2, position: 2, name: 'TP2', figures: null, crosstalk: leak(29) },
      stage(3, 3, figures({ clickCount: 4, clicksPerMinute: 80 })),
    ];
    expect(firstFaultyStage(stages, trade)).toMatchObject({ testPointId: 2, cleanStagesBefore: 1, faults: [{ kind: 'crosstalk' }] });
  });
});
