import { analyzeWavBytes } from '../../../analysis/index';
import { AnalysisPool } from '../../../web/src/workers/analysis-pool';
import type { PoolHarness } from './harness';
import type { NestedTask, NestedTimes } from './nested.worker';

// A bare page for checking and timing the browser's analysis pool in Chromium: it analyses WAV
// files served beside it through the pool and through one analyzeWavBytes on this thread.

// ?workers=N sets the pool's size (the default follows the machine's cores).
const pool = new AnalysisPool(Number(new URLSearchParams(location.search).get('workers')) || undefined);

async function fetchWav(name: string): Promise<Uint8Array> {
  const res = await fetch(`/wav/${name}`);
  if (!res.ok) throw new Error(`${name}: HTTP ${res.status}`);
  return new Uint8Array(await res.arrayBuffer());
}

const harness: PoolHarness = {
  size: pool.size,
  started: () => pool.started,
  async both(name, options = {}, split = 'auto') {
    const bytes = await fetchWav(name);
    return { single: analyzeWavBytes(bytes, options), pooled: await pool.analyse(bytes, options, { split }) };
  },
  async failure(name, split = 'auto') {
    const bytes = await fetchWav(name);
    try {
      await pool.analyse(bytes, {}, { split });
      return null;
    } catch (err) {
      const e = err as Error & { code?: string };
      return { name: e.name, message: e.message, code: e.code ?? null };
    }
  },
  async time(name, way, runs) {
    const bytes = await fetchWav(name);
    const ms: number[] = [];
    for (let i = 0; i < runs; i++) {
      const t0 = performance.now();
      if (way === 'single') analyzeWavBytes(bytes);
      else await pool.analyse(bytes, {}, { split: way });
      ms.push(performance.now() - t0);
    }
    return ms;
  },
  async timeNested(name, runs) {
    const bytes = await fetchWav(name);
    const worker = new Worker(new URL('./nested.worker.ts', import.meta.url), { type: 'module' });
    try {
      return await new Promise<NestedTimes>((resolve, reject) => {
        worker.onmessage = (e: MessageEvent<NestedTimes>) => resolve(e.data);
        worker.onerror = (e) => reject(new Error(e.message));
        worker.postMessage({ bytes, runs } satisfies NestedTask);
      });
    } finally {
      worker.terminate();
    }
  },
};

(globalThis as unknown as { poolHarness: PoolHarness }).poolHarness = harness;
document.getElementById('state')!.textContent = 'ready';
