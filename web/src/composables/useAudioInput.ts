import { onBeforeUnmount, readonly, ref, shallowRef } from 'vue';
import workletUrl from '@/workers/capture.worklet.ts?worker&url';

// The bench's audio input: a chosen device opened raw (no echo cancelling, noise suppression or
// automatic gain, which would all falsify a measurement), played into an AudioWorklet that hands
// its samples to the analysis worker over a MessagePort.

export interface InputDevice {
  deviceId: string;
  label: string;
}

export interface OpenInput {
  /** Port the worklet posts sample blocks to; give it to the analysis worker. */
  port: MessagePort;
  sampleRate: number;
  channels: number;
}

export interface InputInfo {
  label: string;
  /** Rate the samples arrive at (the audio context's). */
  sampleRate: number;
  /** Rate the device reports, when it says. */
  deviceSampleRate: number | null;
  channels: number;
  sampleSize: number | null;
}

function describe(err: unknown): string {
  const name = (err as { name?: string })?.name;
  if (name === 'NotAllowedError') return 'The browser was not allowed to use the audio input; allow it in the address bar and try again';
  if (name === 'NotFoundError' || name === 'OverconstrainedError') return 'That audio input is not available; choose another';
  if (name === 'NotReadableError') return 'The audio input is busy or failed to start; close other programs using it';
  return err instanceof Error ? err.message : String(err);
}

export function useAudioInput() {
  const devices = ref<InputDevice[]>([]);
  const deviceId = ref<string>('');
  const running = ref(false);
  const error = ref<string | null>(null);
  const info = shallowRef<InputInfo | null>(null);
  let ctx: AudioContext | null = null;
  let stream: MediaStream | null = null;
  let node: AudioWorkletNode | null = null;

  async function refreshDevices(): Promise<void> {
    if (!navigator.mediaDevices?.enumerateDevices) {
      error.value = 'This browser cannot list audio inputs (a secure https or localhost address is needed)';
      return;
    }
    const all = await navigator.mediaDevices.enumerateDevices();
    devices.value = all
      .filter((d) => d.kind === 'audioinput')
      .map((d, i) => ({ deviceId: d.deviceId, label: d.label || `Audio input ${i + 1} (name shown once allowed)` }));
    if (!devices.value.some((d) => d.deviceId === deviceId.value)) deviceId.value = devices.value[0]?.deviceId ?? '';
  }

  async function start(): Promise<OpenInput> {
    stop();
    error.value = null;
    try {
      stream = await navigator.mediaDevices.getUserMedia({
        audio: {
          deviceId: deviceId.value ? { exact: deviceId.value } : undefined,
          echoCancellation: false,
          noiseSuppression: false,
          autoGainControl: false,
          channelCount: { ideal: 2 },
        },
      });
      const track = stream.getAudioTracks()[0]!;
      const settings = track.getSettings();
      const channels = Math.min(2, Math.max(1, settings.channelCount ?? 2));
      // Run the context at the device's own rate where the browser allows, so no resampler sits
      // between the converter and the measurement; 'playback' latency buys larger buffers, so a
      // busy machine is less likely to drop input (nothing here needs a quick answer).
      try {
        ctx = new AudioContext({ latencyHint: 'playback', ...(settings.sampleRate ? { sampleRate: settings.sampleRate } : {}) });
      } catch {
        ctx = new AudioContext({ latencyHint: 'playback' });
      }
      await ctx.audioWorklet.addModule(workletUrl);
      const source = ctx.createMediaStreamSource(stream);
      node = new AudioWorkletNode(ctx, 'quietpath-bench-capture', {
        numberOfInputs: 1,
        numberOfOutputs: 1,
        outputChannelCount: [1],
        channelCount: channels,
        channelCountMode: 'explicit',
        channelInterpretation: 'discrete',
      });
      // A silent path to the output keeps the graph pulling the worklet in every browser.
      const mute = ctx.createGain();
      mute.gain.value = 0;
      source.connect(node);
      node.connect(mute).connect(ctx.destination);
      const channel = new MessageChannel();
      node.port.postMessage({ type: 'connect', port: channel.port1 }, [channel.port1]);
      await ctx.resume();
      track.onended = () => {
        error.value = 'The audio input went away (unplugged or taken by another program)';
        stop();
      };
      info.value = {
        label: track.label,
        sampleRate: ctx.sampleRate,
        deviceSampleRate: settings.sampleRate ?? null,
        channels,
        sampleSize: settings.sampleSize ?? null,
      };
      running.value = true;
      if (!deviceId.value && settings.deviceId) deviceId.value = settings.deviceId;
      await refreshDevices(); // labels are shown once the input is allowed
      return { port: channel.port2, sampleRate: ctx.sampleRate, channels };
    } catch (err) {
      stop();
      error.value = describe(err);
      throw new Error(error.value);
    }
  }

  function stop(): void {
    node?.port.postMessage({ type: 'stop' });
    node?.disconnect();
    node = null;
    stream?.getTracks().forEach((t) => t.stop());
    stream = null;
    void ctx?.close().catch(() => undefined);
    ctx = null;
    running.value = false;
  }

  onBeforeUnmount(stop);

  return { devices: readonly(devices), deviceId, running: readonly(running), error: readonly(error), info, refreshDevices, start, stop };
}
