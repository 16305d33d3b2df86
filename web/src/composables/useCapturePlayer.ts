import { onBeforeUnmount, readonly, ref, watch, type Ref } from 'vue';

// Listening to a stored capture. The audio element fetches the file in byte ranges as it plays
// and seeks (the server answers 206), so nothing is downloaded in full first. Its output goes
// through Web Audio: a channel splitter and a gain per channel-to-ear path picks one channel (to
// both ears) or both, one gain matches loudness between captures, and a master gain that starts
// low keeps a loud bench capture from hurting anyone.

export type ListenChannels = 'both' | 'left' | 'right';

/** Master volume at start: −20 dB. Bench captures can be near full scale. */
export const START_VOLUME = 0.1;

export interface PlayerSource {
  url: string;
  /** Channels in the file: a mono file goes to both ears whatever is chosen. */
  channels: number;
  /** Extra gain in dB for this capture (loudness matching); 0 when absent. */
  matchDb?: number;
}

export type CapturePlayer = ReturnType<typeof useCapturePlayer>;

/** `keepPosition`: a new source starts where the last one was (before/after at the same moment). */
export function useCapturePlayer(source: Ref<PlayerSource | null>, opts: { keepPosition?: boolean } = {}) {
  const currentS = ref(0);
  const durationS = ref(0);
  const playing = ref(false);
  const ready = ref(false);
  const error = ref('');
  const volume = ref(START_VOLUME);
  const channels = ref<ListenChannels>('both');

  const audio = new Audio();
  audio.preload = 'metadata';
  let graph: { ctx: AudioContext; paths: GainNode[]; match: GainNode; master: GainNode } | null = null;
  let frame = 0;

  function buildGraph() {
    if (graph) return graph;
    const ctx = new AudioContext();
    const node = ctx.createMediaElementSource(audio);
    const splitter = ctx.createChannelSplitter(2);
    const merger = ctx.createChannelMerger(2);
    const match = ctx.createGain();
    const master = ctx.createGain();
    node.connect(splitter);
    // paths[2·from + to]: capture channel `from` into ear `to`.
    const paths = [0, 1, 2, 3].map((i) => {
      const g = ctx.createGain();
      splitter.connect(g, i >> 1);
      g.connect(merger, 0, i & 1);
      return g;
    });
    merger.connect(match).connect(master).connect(ctx.destination);
    graph = { ctx, paths, match, master };
    applyGains();
    return graph;
  }

  function applyGains() {
    if (!graph) return;
    const mono = (source.value?.channels ?? 2) === 1;
    const [ll, lr, rl, rr] =
      mono || channels.value === 'left' ? [1, 1, 0, 0] : channels.value === 'right' ? [0, 0, 1, 1] : [1, 0, 0, 1];
    [ll, lr, rl, rr].forEach((v, i) => graph!.paths[i]!.gain.setTargetAtTime(v, graph!.ctx.currentTime, 0.01));
    graph.match.gain.setTargetAtTime(10 ** ((source.value?.matchDb ?? 0) / 20), graph.ctx.currentTime, 0.01);
    graph.master.gain.setTargetAtTime(volume.value, graph.ctx.currentTime, 0.01);
  }

  function follow() {
    currentS.value = audio.currentTime;
    if (!audio.paused) frame = requestAnimationFrame(follow);
  }

  audio.addEventListener('loadedmetadata', () => {
    durationS.value = audio.duration;
    ready.value = true;
  });
  audio.addEventListener('play', () => {
    playing.value = true;
    frame = requestAnimationFrame(follow);
  });
  audio.addEventListener('pause', () => {
    playing.value = false;
    currentS.value = audio.currentTime;
  });
  audio.addEventListener('seeked', () => (currentS.value = audio.currentTime));
  audio.addEventListener('ended', () => (playing.value = false));
  audio.addEventListener('error', () => (error.value = 'This capture could not be played in the browser.'));

  /** Switches to another capture, keeping the position (before/after at the same moment). */
  function load(next: PlayerSource | null, keepPosition: boolean) {
    const at = audio.currentTime;
    const wasPlaying = !audio.paused;
    error.value = '';
    ready.value = false;
    if (!next) {
      audio.removeAttribute('src');
      audio.load();
      return;
    }
    audio.src = next.url;
    applyGains();
    if (keepPosition && at > 0) {
      audio.addEventListener(
        'loadedmetadata',
        () => {
          audio.currentTime = Math.min(at, audio.duration || at);
          if (wasPlaying) void play();
        },
        { once: true },
      );
    } else currentS.value = 0;
  }

  watch(source, (next, prev) => load(next, !!opts.keepPosition && prev !== null && prev !== undefined), { immediate: true });
  watch([volume, channels], applyGains);

  async function play() {
    const g = buildGraph();
    if (g.ctx.state === 'suspended') await g.ctx.resume();
    try {
      await audio.play();
    } catch (err) {
      if ((err as DOMException).name !== 'AbortError') error.value = `Playback did not start: ${(err as Error).message}`;
    }
  }

  function pause() {
    audio.pause();
  }

  /** The shown position follows the element's own once it has moved ('seeked'), not the request. */
  function seek(s: number) {
    audio.currentTime = Math.max(0, Math.min(s, durationS.value || s));
  }

  onBeforeUnmount(() => {
    cancelAnimationFrame(frame);
    audio.pause();
    audio.removeAttribute('src');
    audio.load();
    void graph?.ctx.close();
  });

  return { currentS: readonly(currentS), durationS: readonly(durationS), playing: readonly(playing), ready: readonly(ready), error: readonly(error), volume, channels, play, pause, seek };
}
