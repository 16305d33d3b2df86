import type { SignalRequest } from '@shared/signals';
import { qs } from './query';

/** The server's copy of a test signal (same generator as the page): a link for scripts and other tools. */
export const signalsApi = {
  url: (s: SignalRequest) =>
    `/api/signals${qs({
      kind: s.kind,
      channels: s.channels,
      frequencyHz: s.kind === 'sine' ? s.frequencyHz : undefined,
      levelDbfs: s.kind === 'silence' ? undefined : s.levelDbfs,
      seconds: s.seconds,
      sampleRate: s.sampleRate,
      format: s.format,
      dither: s.format === 'float32' ? undefined : s.dither,
      startHz: s.kind === 'sweep' ? s.startHz : undefined,
      endHz: s.kind === 'sweep' ? s.endHz : undefined,
    })}`,
};
