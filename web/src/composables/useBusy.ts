import { ref } from 'vue';
import { useToast } from 'primevue/usetoast';
import { ApiRequestError } from '@/api/http';

export const errorText = (err: unknown) =>
  err instanceof ApiRequestError ? err.message : err instanceof Error ? err.message : 'Something went wrong';

/**
 * Runs one action at a time for a form or panel: `busy` while it runs, the server's message as a
 * toast when it fails (the caller gets undefined back and keeps its inputs).
 */
export function useBusy() {
  const toast = useToast();
  const busy = ref(false);
  async function run<T>(action: () => Promise<T>, success?: string): Promise<T | undefined> {
    busy.value = true;
    try {
      const result = await action();
      if (success) toast.add({ severity: 'success', summary: success, life: 2500 });
      return result;
    } catch (err) {
      toast.add({ severity: 'error', summary: 'Not saved', detail: errorText(err), life: 6000 });
      return undefined;
    } finally {
      busy.value = false;
    }
  }
  return { busy, run };
}
