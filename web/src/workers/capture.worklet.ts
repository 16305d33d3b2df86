// AudioWorklet processor of the live bench: gathers the render quanta (128 frames) of its input
// into blocks and posts them, one Float32Array per channel, to a MessagePort handed over by the
// page — straight to the analysis worker, so a busy page never delays the samples.
// Loaded with `?worker&url` so Vite compiles it to one self-contained module file.

interface WorkletProcessor {
  readonly port: MessagePort;
}
declare const AudioWorkletProcessor: { prototype: WorkletProcessor; new (): WorkletProcessor };
declare function registerProcessor(name: string, ctor: new () => WorkletProcessor): void;

/** Frames per posted block: 2048 (43–46 ms at 44.1–48 kHz), a few posts per analysis hop. */
const BLOCK_FRAMES = 2048;

export interface CaptureBlock {
  type: 'block';
  /** Planar samples, full scale = 1. */
  channels: Float32Array[];
}

class BenchCapture extends AudioWorkletProcessor {
  private out: MessagePort | null = null;
  private buffers: Float32Array[] = [];
  private fill = 0;

  constructor() {
    super();
    this.port.onmessage = (e: MessageEvent<{ type: 'connect'; port: MessagePort } | { type: 'stop' }>) => {
      if (e.data.type === 'connect') this.out = e.data.port;
      else this.out = null;
    };
  }

  process(inputs: Float32Array[][]): boolean {
    const input = inputs[0];
    if (!input || input.length === 0 || !this.out) return true;
    if (this.buffers.length !== input.length) {
      this.buffers = input.map(() => new Float32Array(BLOCK_FRAMES));
      this.fill = 0;
    }
    const frames = input[0]!.length;
    let at = 0;
    while (at < frames) {
      const take = Math.min(frames - at, BLOCK_FRAMES - this.fill);
      for (let c = 0; c < input.length; c++) this.buffers[c]!.set(input[c]!.subarray(at, at + take), this.fill);
      this.fill += take;
      at += take;
      if (this.fill === BLOCK_FRAMES) {
        const block: CaptureBlock = { type: 'block', channels: this.buffers };
        this.out.postMessage(block, this.buffers.map((b) => b.buffer));
        this.buffers = input.map(() => new Float32Array(BLOCK_FRAMES));
        this.fill = 0;
      }
    }
    return true;
  }
}

registerProcessor('quietpath-bench-capture', BenchCapture as unknown as new () => WorkletProcessor);
