import { onBeforeUnmount, readonly, ref, shallowRef } from 'vue';
import type { RecordingFormat } from '@shared/recordings';
import type { FromWorker, LiveFigures, LiveSettings, RecordProgress, ToWorker } from '@/workers/live-protocol';

// The page's side of the analysis worker: figures as reactive state, and the soak recorder's and
// calibration's requests as callbacks and promises.

export interface RecordHandlers {
  onChunk(seq: number, bytes: Uint8Array, frames: number): void;
  onDone(result: { frames: number; chunks: number; clicks: number[] }): void;
}

export function useLiveAnalysis() {
  const figures = shallowRef<LiveFigures | null>(null);
  const recording = shallowRef<RecordProgress | null>(null);
  const error = ref<string | null>(null);
  const updates = ref(0);
  let worker: Worker | null = null;
  let record: RecordHandlers | null = null;
  let level: { resolve(v: (number | null)[]): void; reject(e: Error): void } | null = null;

  function post(msg: ToWorker, transfer: Transferable[] = []): void {
    worker?.postMessage(msg, transfer);
  }

  function onMessage(e: MessageEvent<FromWorker>): void {
    const msg = e.data;
    switch (msg.type) {
      case 'figures':
        figures.value = msg.figures;
        recording.value = msg.recording;
        updates.value++;
        return;
      case 'chunk':
        record?.onChunk(msg.seq, new Uint8Array(msg.bytes), msg.frames);
        return;
      case 'record-done': {
        const r = record;
        record = null;
        recording.value = null;
        r?.onDone({ frames: msg.frames, chunks: msg.chunks, clicks: msg.clicks });
        return;
      }
      case 'level':
        level?.resolve(msg.rmsDbfs);
        level = null;
        return;
      case 'error':
        error.value = msg.message;
        level?.reject(new Error(msg.message));
        level = null;
        return;
    }
  }

  function start(input: { port: MessagePort; sampleRate: number; channels: number }, settings: LiveSettings): void {
    if (!worker) {
      worker = new Worker(new URL('../workers/live-analysis.worker.ts', import.meta.url), { type: 'module' });
      worker.onmessage = onMessage;
      worker.onerror = (e) => {
        error.value = `The measuring worker stopped: ${e.message}`;
      };
    }
    error.value = null;
    figures.value = null;
    post({ type: 'start', port: input.port, sampleRate: input.sampleRate, channels: input.channels, settings: { ...settings } }, [input.port]);
  }

  /** Stops the input side; a soak test in progress ends with what has been recorded. */
  function stop(): void {
    post({ type: 'stop' });
  }

  function setSettings(settings: LiveSettings): void {
    post({ type: 'settings', settings: { ...settings } });
  }

  function resetClicks(): void {
    post({ type: 'reset-clicks' });
  }

  function startRecording(o: { format: RecordingFormat; chunkSeconds: number; seconds: number }, handlers: RecordHandlers): void {
    record = handlers;
    post({ type: 'record-start', ...o });
  }

  function stopRecording(): void {
    post({ type: 'record-stop' });
  }

  /** RMS level of each channel over the next `seconds`, AES17 dBFS, measured by the engine. */
  function measureLevel(seconds: number): Promise<(number | null)[]> {
    level?.reject(new Error('A new measurement was started'));
    return new Promise((resolve, reject) => {
      level = { resolve, reject };
      post({ type: 'measure-level', seconds });
    });
  }

  onBeforeUnmount(() => {
    worker?.terminate();
    worker = null;
  });

  return {
    figures,
    recording,
    updates: readonly(updates),
    error: readonly(error),
    start,
    stop,
    setSettings,
    resetClicks,
    startRecording,
    stopRecording,
    measureLevel,
  };
}
export type LiveAnalysis = ReturnType<typeof useLiveAnalysis>;
