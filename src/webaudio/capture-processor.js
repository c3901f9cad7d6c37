/** Largest capture, frames (about 22 s at 48 kHz): a bound on what one request may allocate. */
export const MAX_CAPTURE_FRAMES = 1 << 20;
/**
 * Makes the capture processor class over `Base`. Options: `processorOptions.channels` (1–8,
 * default 2), the number of channels recorded; an out-of-range count falls back to 2.
 * @throws never: neither defining the class nor its constructor, `process()` or message handler throws
 *   (a bad capture request is answered with a `rejected` message).
 */
export function defineCaptureProcessor(Base, scope) {
  const Shell = class extends Base {
    channels;
    jobs = [];
    running = true;
    constructor(options) {
      super(options);
      const o = options?.processorOptions ?? {};
      const c = Math.round(o.channels ?? 2);
      this.channels = c >= 1 && c <= 8 ? c : 2;
      this.port.onmessage = (ev) => this.handle(ev.data);
    }
    handle(raw) {
      const m = raw;
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
      const channels = [];
      for (let c = 0; c < this.channels; c++) channels.push(new Float32Array(frames));
      this.jobs.push({ id: m.id ?? -1, skip, pos: 0, startFrame: -1, channels });
    }
    process(inputs, outputs) {
      try {
        const input = inputs[0] ?? [];
        const first = input[0];
        const n = first ? first.length : (outputs[0]?.[0]?.length ?? 128);
        // Pass the input through unchanged when an output is connected.
        const out = outputs[0];
        if (out) {
          for (let c = 0; c < out.length; c++) {
            const src = input[c] ?? input[0];
            if (src) out[c].set(src);
            else out[c].fill(0);
          }
        }
        for (let j = 0; j < this.jobs.length; ) {
          const job = this.jobs[j];
          let k = 0;
          if (job.skip > 0) {
            const s = Math.min(job.skip, n);
            job.skip -= s;
            k = s;
          }
          if (k < n && job.startFrame < 0) job.startFrame = scope.currentFrame() + k;
          const len = job.channels[0].length;
          const take = Math.min(n - k, len - job.pos);
          if (take > 0) {
            for (let c = 0; c < job.channels.length; c++) {
              const src = input[c] ?? (c > 0 ? undefined : input[0]);
              const dst = job.channels[c];
              if (src) dst.set(src.subarray(k, k + take), job.pos);
            }
            job.pos += take;
          }
          if (job.pos >= len) {
            const reply = {
              type: 'captured',
              id: job.id,
              startFrame: job.startFrame,
              channels: job.channels,
            };
            this.port.postMessage(
              reply,
              job.channels.map((a) => a.buffer),
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
  return Shell;
}
