import { analyzeWavBytes } from '../../../analysis/index';
import { AnalysisPool } from '../../../web/src/workers/analysis-pool';

// The live bench's case for the benchmark: a worker (as the live bench's measuring worker is) that
// analyses a window itself, or hands it to a pool of workers nested inside it.

export interface NestedTask {
  bytes: Uint8Array;
  runs: number;
}

export interface NestedTimes {
  /** Milliseconds per run: analyzeWavBytes in this worker, one nested worker, the channels split. */
  inWorker: number[];
  oneNested: number[];
  splitNested: number[];
}

interface WorkerScope {
  postMessage(message: NestedTimes): void;
  onmessage: ((e: MessageEvent<NestedTask>) => void) | null;
}
const scope = self as unknown as WorkerScope;
const pool = new AnalysisPool();

async function times(runs: number, once: () => unknown): Promise<number[]> {
  const ms: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    await once();
    ms.push(performance.now() - t0);
  }
  return ms;
}

scope.onmessage = async (e) => {
  const { bytes, runs } = e.data;
  // A first round of each warms the compilers and starts the nested workers.
  await times(2, () => pool.analyse(bytes, {}, { split: 'always' }));
  const inWorker = await times(runs + 2, () => analyzeWavBytes(bytes));
  const oneNested = await times(runs + 2, () => pool.analyse(bytes, {}, { split: 'never' }));
  const splitNested = await times(runs, () => pool.analyse(bytes, {}, { split: 'always' }));
  scope.postMessage({ inWorker: inWorker.slice(2), oneNested: oneNested.slice(2), splitNested });
};
