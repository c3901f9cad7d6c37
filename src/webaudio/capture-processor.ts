/**
 * The capture processor: records a requested number of frames of its input (up to its channel
 * count) and posts them to the main thread, transferred. Used to read receiver audio coming back
 * from the sound card, or the generator's own I/Q, at exact frame positions. Buffers are allocated
 * when a request arrives (in the message handler), never in `process()`; `process()` never throws.
 */
import type { CaptureReply, CaptureRequest } from './messages.js';
import type { ProcessorBase, ProcessorScope } from './quadrature-processor.js';

type Ctor<T> = new (options?: { processorOptions?: unknown }) => T;

/** Largest capture, frames (about 22 s at 48 kHz): a bound on what one request may allocate. */
export const MAX_CAPTURE_FRAMES = 1 << 20;

/** The capture processor instance's public surface. */
export interface CaptureProcessorInstance extends ProcessorBase {
  process(inputs: Float32Array[][], outputs: Float32Array[][]): boolean;
  handle(msg: unknown): void;
}

interface Job {
  id: number;
  skip: number;
  pos: number;
  startFrame: number;
  channels: Float32Array[];
}

/**
 * Makes the capture processor class over `Base`. Options: `processorOptions.channels` (1–8,
 * default 2), the number of channels recorded; an out-of-range count falls back to 2.
 * @throws never: neither defining the class nor its constructor, `process()` or message handler throws
 *   (a bad capture request is answered with a `rejected` message).
 */
export function defineCaptureProcessor<B extends ProcessorBase>(
  Base: Ctor<B>,
  scope: ProcessorScope,
): Ctor<B & CaptureProcessorInstance> {
  const Shell = class extends (Base as Ctor<ProcessorBase>) {
    private readonly channels: number;
    private readonly jobs: Job[] = [];
    private running = true;

    constructor(options?: { processorOptions?: unknown }) {
      super(options);
      const o = (options?.processorOptions ?? {}) as { channels?: number };
      const c = Math.round(o.channels ?? 2);
      this.channels = c >= 1 && c <= 8 ? c : 2;
      this.port.onmessage = (ev) => this.handle(ev.data);
    }

    handle(raw: unknown): void {
      const m = raw as Omit<Partial<CaptureRequest>, 'type'> & { type?: string };
      if (m?.type === 'stop') {
        this.running = false;
        return;
      }
      if (m?.type !== 'capture') return;
      const frames = Math.round(Number(m.frames));
      const skip = Math.max(0, Math.round(Number(m.skipFrames ?? 0)));
      if (!(frames >= 1 && frames <= MAX_CAPTURE_FRAMES) || !Number.isFinite(skip)) {
        this.port.postMessage({
          type: 'rejected',
          id: m.id ?? -1,
          message: `capture frames ${String(m.frames)} must be a whole number from 1 to ${MAX_CAPTURE_FRAMES}`,
        });
        return;
      }
      const channels: Float32Array[] = [];
      for (let c = 0; c < this.channels; c++) channels.push(new Float32Array(frames));
      this.jobs.push({ id: m.id ?? -1, skip, pos: 0, startFrame: -1, channels });
    }

    process(inputs: Float32Array[][], outputs: Float32Array[][]): boolean {
      try {
        const input = inputs[0] ?? [];
        const first = input[0];
        const n = first ? first.length : (outputs[0]?.[0]?.length ?? 128);
        // Pass the input through unchanged when an output is connected.
        const out = outputs[0];
        if (out) {
          for (let c = 0; c < out.length; c++) {
            const src = input[c] ?? input[0];
            if (src) out[c]!.set(src);
            else out[c]!.fill(0);
          }
        }
        for (let j = 0; j < this.jobs.length; ) {
          const job = this.jobs[j]!;
          let k = 0;
          if (job.skip > 0) {
            const s = Math.min(job.skip, n);
            job.skip -= s;
            k = s;
          }
          if (k < n && job.startFrame < 0) job.startFrame = scope.currentFrame() + k;
          const len = job.channels[0]!.length;
          const take = Math.min(n - k, len - job.pos);
          if (take > 0) {
            for (let c = 0; c < job.channels.length; c++) {
              const src = input[c] ?? (c > 0 ? undefined : input[0]);
              const dst = job.channels[c]!;
              if (src) dst.set(src.subarray(k, k + take), job.pos);
            }
            job.pos += take;
          }
          if (job.pos >= len) {
            const reply: CaptureReply = {
              type: 'captured',
              id: job.id,
              startFrame: job.startFrame,
              channels: job.channels,
            };
            this.port.postMessage(
              reply,
              job.channels.map((a) => a.buffer as ArrayBuffer),
            );
            this.jobs.splice(j, 1);
          } else j++;
        }
      } catch {
        // Never throw on the audio thread; a failed capture is simply not delivered.
      }
      return this.running;
    }
  };
  return Shell as unknown as Ctor<B & CaptureProcessorInstance>;
}
