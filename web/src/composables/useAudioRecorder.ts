import { computed, onBeforeUnmount, readonly, ref, shallowRef } from 'vue';
import type { CaptureSummary } from '@shared/captures';
import type { RecordingFormat, RecordingOpenInput, RecordingSummary } from '@shared/recordings';
import { recordingsApi } from '@/api/recordings';
import { capturesApi } from '@/api/captures';
import { ApiRequestError } from '@/api/http';
import type { LiveAnalysis } from './useLiveAnalysis';

// A soak test: record for a set time while the live view counts clicks, streaming the samples to
// the server chunk by chunk (one a second) so a closed tab loses at most the chunk in flight, then
// save the recording as a capture on the job and follow its analysis.

export type SoakState = 'idle' | 'recording' | 'saving' | 'measuring' | 'done' | 'failed';

/** 24-bit PCM: a 10-minute stereo 48 kHz soak is 173 MB, within the default capture limit. */
const FORMAT: RecordingFormat = 'pcm24';
const CHUNK_SECONDS = 1;
const RETRY_DELAYS_MS = [250, 500, 1000, 2000, 4000, 8000];

const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));
const message = (err: unknown) => (err instanceof Error ? err.message : String(err));

export function useAudioRecorder(live: LiveAnalysis) {
  const state = ref<SoakState>('idle');
  const error = ref<string | null>(null);
  const recordingRow = shallowRef<RecordingSummary | null>(null);
  const capture = shallowRef<CaptureSummary | null>(null);
  const plannedSeconds = ref(0);
  const sentSeconds = ref(0);
  const queued = ref(0);
  /** Clicks the live view counted over the whole recording, per channel. */
  const liveClicks = ref<number[] | null>(null);
  let queue: { seq: number; bytes: Uint8Array; frames: number }[] = [];
  let pumping: Promise<void> | null = null;
  let sampleRate = 48000;
  let disposed = false;

  async function sendWithRetry(id: number, seq: number, bytes: Uint8Array): Promise<void> {
    for (let attempt = 0; ; attempt++) {
      try {
        await recordingsApi.putChunk(id, seq, bytes);
        return;
      } catch (err) {
        // 4xx other than a timeout will not get better by trying again.
        const status = err instanceof ApiRequestError ? err.status : 0;
        const retryable = status === 0 || status === 408 || status === 429 || status >= 500;
        if (!retryable || attempt >= RETRY_DELAYS_MS.length) throw err;
        await wait(RETRY_DELAYS_MS[attempt]!);
      }
    }
  }

  function pump(): Promise<void> {
    pumping ??= (async () => {
      try {
        while (queue.length > 0 && recordingRow.value) {
          const next = queue[0]!;
          await sendWithRetry(recordingRow.value.id, next.seq, next.bytes);
          queue.shift();
          queued.value = queue.length;
          sentSeconds.value += next.frames / sampleRate;
        }
      } finally {
        pumping = null;
      }
    })();
    return pumping;
  }

  async function followAnalysis(id: number): Promise<void> {
    state.value = 'measuring';
    for (;;) {
      if (disposed) return;
      const c = await capturesApi.get(id);
      capture.value = c;
      if (c.state === 'done' || c.state === 'failed') break;
      await wait(1000);
    }
    state.value = capture.value?.state === 'done' ? 'done' : 'failed';
    if (capture.value?.state === 'failed') error.value = capture.value.error ?? 'The analysis failed';
  }

  async function finish(clicks: number[]): Promise<void> {
    liveClicks.value = clicks;
    state.value = 'saving';
    try {
      await pump();
      const saved = await recordingsApi.finish(recordingRow.value!.id);
      recordingRow.value = saved.recording;
      capture.value = saved.capture;
      await followAnalysis(saved.capture.id);
    } catch (err) {
      state.value = 'failed';
      error.value = `${message(err)}. The part that reached the server is kept as an unfinished recording; finish or discard it below.`;
    }
  }

  /** Opens the recording on the server, then starts sending the input's samples to it. */
  async function start(meta: Omit<RecordingOpenInput, 'sampleRate' | 'channels' | 'format' | 'plannedSeconds'>, input: { sampleRate: number; channels: number }, seconds: number): Promise<void> {
    reset();
    sampleRate = input.sampleRate;
    plannedSeconds.value = seconds;
    try {
      recordingRow.value = await recordingsApi.open({ ...meta, sampleRate: input.sampleRate, channels: input.channels, format: FORMAT, plannedSeconds: seconds });
    } catch (err) {
      state.value = 'failed';
      error.value = message(err);
      return;
    }
    state.value = 'recording';
    live.startRecording(
      { format: FORMAT, chunkSeconds: CHUNK_SECONDS, seconds },
      {
        onChunk(seq, bytes, frames) {
          queue.push({ seq, bytes, frames });
          queued.value = queue.length;
          pump().catch((err: unknown) => {
            state.value = 'failed';
            error.value = `Chunk ${seq} could not be sent: ${message(err)}`;
            live.stopRecording();
          });
        },
        onDone(result) {
          if (state.value === 'recording') void finish(result.clicks);
        },
      },
    );
  }

  /** Ends the soak test early; what was recorded is saved. */
  function stop(): void {
    if (state.value === 'recording') live.stopRecording();
  }

  function reset(): void {
    queue = [];
    queued.value = 0;
    sentSeconds.value = 0;
    state.value = 'idle';
    error.value = null;
    recordingRow.value = null;
    capture.value = null;
    liveClicks.value = null;
  }

  onBeforeUnmount(() => {
    disposed = true;
  });

  const recordedSeconds = computed(() => live.recording.value?.seconds ?? (state.value === 'recording' ? 0 : sentSeconds.value));
  const runningClicks = computed(() => live.recording.value?.clicks ?? liveClicks.value);

  return {
    state: readonly(state),
    error: readonly(error),
    recording: recordingRow,
    capture,
    plannedSeconds: readonly(plannedSeconds),
    sentSeconds: readonly(sentSeconds),
    queued: readonly(queued),
    recordedSeconds,
    runningClicks,
    liveClicks: readonly(liveClicks),
    start,
    stop,
    reset,
  };
}
