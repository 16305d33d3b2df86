import type { AnalysisResult, AnalyzeOptions } from '../../../analysis/index';

// What the bare pool page (main.ts) offers the browser test and the benchmark, as `poolHarness`.

export interface PoolFailure {
  name: string;
  message: string;
  code: string | null;
}

export type SplitChoice = 'auto' | 'always' | 'never';

export interface PoolHarness {
  size: number;
  started(): number;
  both(name: string, options?: AnalyzeOptions, split?: SplitChoice): Promise<{ single: AnalysisResult; pooled: AnalysisResult }>;
  failure(name: string, split?: SplitChoice): Promise<PoolFailure | null>;
  /** Milliseconds of each of `runs` analyses of the file on this thread ('single') or in the pool. */
  time(name: string, way: 'single' | SplitChoice, runs: number): Promise<number[]>;
  /** The same from inside a worker, as the live bench measures: in that worker, or by a pool nested in it. */
  timeNested(name: string, runs: number): Promise<{ inWorker: number[]; oneNested: number[]; splitNested: number[] }>;
}
