import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { COMPARE_RULES, compareFigures, judge, overallVerdict, type FigureComparison } from '../../shared/compare';
import { figures } from './measurement-figures';

const row = (rows: FigureComparison[], figure: string) => rows.find((r) => r.figure === figure);

describe('judge: direction and dead band', () => {
  const lower = { better: 'lower' as const, deadBand: 0.5 };
  const higher = { better: 'higher' as const, deadBand: 1 };
  it.each([
    [lower, -90, -91, 'better'],
    [lower, -90, -89, 'worse'],
    [lower, -90, -90.5, 'same'], // the band edge itself counts as the same
    [lower, -90, -89.5, 'same'],
    [lower, -90, -89.51, 'same'],
    [lower, -90, -89.4, 'worse'],
    [higher, 30, 70, 'better'],
    [higher, 70, 30, 'worse'],
    [higher, 60, 60.9, 'same'],
    [{ better: 'lower' as const, deadBand: 0 }, 36, 0, 'better'],
    [{ better: 'lower' as const, deadBand: 0 }, 0, 1, 'worse'],
    [{ better: 'none' as const, deadBand: 0.5 }, -10, -4, 'changed'],
    [lower, null, -90, 'missing'],
    [lower, -90, null, 'missing'],
  ] as const)('%o: %s → %s is %s', (rule, before, after, verdict) => {
    expect(judge(rule, before, after)).toBe(verdict);
  });

  it('swapping before and after swaps better and worse (every directed rule)', () => {
    const directed = COMPARE_RULES.filter((r) => r.better !== 'none');
    fc.assert(
      fc.property(fc.constantFrom(...directed), fc.double({ min: -200, max: 200, noNaN: true }), fc.double({ min: -200, max: 200, noNaN: true }), (rule, a, b) => {
        const there = judge(rule, a, b);
        const back = judge(rule, b, a);
        const mirror = { better: 'worse', worse: 'better', same: 'same' } as const;
        expect(back).toBe(mirror[there as keyof typeof mirror]);
      }),
    );
  });
});

describe('compareFigures', () => {
  it('the demo repair: clicks 36 → 0 and separation 30 → 70 dB are better, level is only reported', () => {
    const before = figures({ clickCount: 36, clicksPerMinute: 720, separationDb: 30, humDbfs: -78.6, thdPct: 0.05, thdDb: -66.02 });
    const after = figures({ clickCount: 0, separationDb: 70, humDbfs: null, thdPct: 0.004, thdDb: -87.96, levelDbfs: -10.2 });
    const rows = compareFigures(before, after);
    expect(row(rows, 'clickCount')).toMatchObject({ before: 36, after: 0, change: -36, verdict: 'better', rule: 'lower is better; any change counts' });
    expect(row(rows, 'separationDb')).toMatchObject({ change: 40, verdict: 'better', rule: 'higher is better; within ±1 dB counts as the same' });
    expect(row(rows, 'thdPct')!.verdict).toBe('better');
    expect(row(rows, 'humDbfs')).toMatchObject({ before: -78.6, after: null, change: null, verdict: 'missing' });
    expect(row(rows, 'levelDbfs')).toMatchObject({ verdict: 'same', rule: 'reported, not judged; within ±0.5 dB counts as the same' });
    expect(overallVerdict(rows)).toBe('better');
  });

  it('judges THD on its dB value, so the band means the same at 0.01 % and at 1 %', () => {
    // +0.42 dB (×1.05) is inside ±0.5 dB; +0.83 dB (×1.1) is outside.
    for (const base of [0.01, 1]) {
      const at = (pct: number) => figures({ thdPct: pct, thdDb: 20 * Math.log10(pct / 100) });
      expect(row(compareFigures(at(base), at(base * 1.05)), 'thdPct')!.verdict).toBe('same');
      expect(row(compareFigures(at(base), at(base * 1.1)), 'thdPct')!.verdict).toBe('worse');
    }
  });

  it('leaves out figures neither side has, and works with one side only', () => {
    const silence = figures({ stimulus: 'silence', thdPct: null, thdDb: null, thdnDb: null, separationDb: null, sinadDb: null });
    const rows = compareFigures(silence, silence);
    expect(rows.map((r) => r.figure)).not.toContain('thdPct');
    expect(rows.map((r) => r.figure)).not.toContain('separationDb');
    const oneSided = compareFigures(null, figures());
    expect(oneSided.every((r) => r.verdict === 'missing' && r.before === null)).toBe(true);
    expect(overallVerdict(oneSided)).toBe('missing');
  });

  it('overall: mixed when one figure improves and another gets worse', () => {
    const rows = compareFigures(figures({ clickCount: 5, noiseDbfsA: -112 }), figures({ clickCount: 0, noiseDbfsA: -100 }));
    expect(overallVerdict(rows)).toBe('mixed');
    expect(overallVerdict(compareFigures(figures(), figures()))).toBe('same');
    expect(overallVerdict(compareFigures(figures(), figures({ separationDb: 40 })))).toBe('worse');
  });
});
