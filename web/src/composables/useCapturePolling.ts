import { onBeforeUnmount, ref, readonly, shallowReadonly } from 'vue';
import type { CaptureSummary } from '@shared/captures';
import { capturesApi } from '@/api/captures';
import { errorText } from './useBusy';

const POLL_MS = 1500;

/**
 * A job's captures, reloaded every 1.5 s while any is waiting or being measured, and left alone
 * once all are settled. `onSettled` runs when a capture finishes, to refresh views built on them.
 */
export function useCapturePolling(jobId: () => number, onSettled: () => void) {
  const captures = ref<CaptureSummary[]>([]);
  const error = ref('');
  const loaded = ref(false);
  let timer: ReturnType<typeof setTimeout> | null = null;
  let stopped = false;

  const busy = (list: CaptureSummary[]) => list.filter((c) => c.state === 'queued' || c.state === 'running').map((c) => c.id);

  async function refresh(): Promise<void> {
    if (timer) clearTimeout(timer);
    timer = null;
    const before = new Set(busy(captures.value));
    try {
      captures.value = await capturesApi.list(jobId());
      error.value = '';
    } catch (err) {
      error.value = errorText(err);
    } finally {
      loaded.value = true;
    }
    const now = busy(captures.value);
    if ([...before].some((id) => !now.includes(id))) onSettled();
    if (!stopped && (now.length > 0 || error.value)) timer = setTimeout(refresh, POLL_MS);
  }

  onBeforeUnmount(() => {
    stopped = true;
    if (timer) clearTimeout(timer);
  });
  return { captures: shallowReadonly(captures), error: readonly(error), loaded: readonly(loaded), refresh };
}
