/**
 * The page's audio engine: one AudioContext at the network's sample rate, the orthotone generator
 * node (left I, right Q) feeding the sound card through an output switch, and a capture node on the
 * generator's output for the monitor and the in-page virtual exciter. The processor module is the
 * package's worklet entry, imported as a user's page would (`orthotone/worklet?url`).
 */
import {
  type CaptureNode,
  type Correction,
  createCaptureNode,
  createQuadratureNode,
  type Network,
  type QuadratureNode,
  type SourceSpec,
  type Trims,
  ZERO_TRIMS,
} from 'orthotone';
import workletUrl from 'orthotone/worklet?url';

export { workletUrl };

export interface Running {
  ctx: AudioContext;
  node: QuadratureNode;
  /** Records the generator's I/Q (2 channels). */
  iq: CaptureNode;
  /** Gain between the generator and the sound card: 1 = output on, 0 = off. */
  out: GainNode;
}

type Listener = (r: Running | null) => void;

/** The test tone the page starts with, Hz: the command line's default (`--tone`, 1000 Hz). */
export const DEFAULT_TONE_HZ = 1000;

/** A correction filter pair and where it came from. */
export interface CorrectionState {
  correction: Correction;
  /** Short description for the page, e.g. "31 taps, multi-tone calibration at 5 tones". */
  note: string;
  /** Whether the node runs it (false: kept, bypassed). */
  on: boolean;
}

/** Holds the running audio graph and the settings it was made with. */
export class Engine {
  running: Running | null = null;
  source: SourceSpec = { kind: 'tone', frequencyHz: DEFAULT_TONE_HZ };
  levelDb = -10;
  sideband: 'upper' | 'lower' = 'upper';
  outputOn = true;
  /** The trims the generator runs with (kept while audio is stopped, applied when it starts). */
  trims: Trims = { ...ZERO_TRIMS };
  /** The correction filter held by the page (applied to the node when `on`). */
  correction: CorrectionState | null = null;
  private mic: MediaStreamAudioSourceNode | null = null;
  private listeners: Listener[] = [];
  private sourceListeners: ((s: SourceSpec) => void)[] = [];
  private correctionListeners: ((c: CorrectionState | null) => void)[] = [];

  constructor(public network: Network) {}

  onChange(f: Listener): void {
    this.listeners.push(f);
  }

  private emit(): void {
    for (const f of this.listeners) f(this.running);
  }

  /** Called when the source changes (from any panel). */
  onSource(f: (s: SourceSpec) => void): void {
    this.sourceListeners.push(f);
  }

  /** Called when the correction filter is set, switched or removed. */
  onCorrection(f: (c: CorrectionState | null) => void): void {
    this.correctionListeners.push(f);
  }

  /** Holds `c` (null removes it) and applies it to the running node when it is on. */
  async setCorrection(c: CorrectionState | null): Promise<void> {
    this.correction = c;
    await this.running?.node.setCorrection(c?.on ? c.correction : null);
    for (const f of this.correctionListeners) f(c);
  }

  /** Starts audio (call from a user action: browsers start audio only after one). */
  async start(): Promise<Running> {
    if (this.running) return this.running;
    const ctx = new AudioContext({ sampleRate: this.network.sampleRate, latencyHint: 'interactive' });
    await ctx.resume();
    const node = await createQuadratureNode(ctx, this.network, {
      moduleUrl: workletUrl,
      source: this.source.kind === 'input' ? { kind: 'silence' } : this.source,
      levelDb: this.levelDb,
      trims: this.trims,
      sideband: this.sideband,
      correction: this.correction?.on ? this.correction.correction : null,
    });
    const iq = await createCaptureNode(ctx, { moduleUrl: workletUrl, channels: 2 });
    const out = new GainNode(ctx, { gain: this.outputOn ? 1 : 0 });
    const sink = new GainNode(ctx, { gain: 0 });
    node.node.connect(out as never);
    out.connect(ctx.destination);
    node.node.connect(iq.node as never);
    // Keeps the capture node in the rendered graph without sending its pass-through anywhere audible.
    (iq.node as unknown as AudioNode).connect(sink);
    sink.connect(ctx.destination);
    node.onfault = (f) => console.warn(`generator fault ${f.faults}: ${f.message}`);
    this.running = { ctx, node, iq, out };
    if (this.source.kind === 'input') await this.setSource(this.source);
    this.emit();
    return this.running;
  }

  async stop(): Promise<void> {
    const r = this.running;
    if (!r) return;
    this.running = null;
    for (const t of this.mic?.mediaStream.getTracks() ?? []) t.stop();
    this.mic = null;
    r.node.dispose();
    r.iq.dispose();
    await r.ctx.close();
    this.emit();
  }

  /** Uses `net`; a different sample rate restarts the audio context. */
  async setNetwork(net: Network): Promise<void> {
    const rateChanged = net.sampleRate !== this.network.sampleRate;
    this.network = net;
    // A correction filter is designed for one sample rate.
    if (rateChanged && this.correction) await this.setCorrection(null);
    if (!this.running) return;
    if (rateChanged) {
      await this.stop();
      await this.start();
    } else await this.running.node.setNetwork(net);
  }

  /** Records a source the node was given directly (e.g. by a calibration) and tells the panels. */
  noteSource(s: SourceSpec): void {
    this.source = s;
    for (const f of this.sourceListeners) f(s);
  }

  async setSource(s: SourceSpec): Promise<void> {
    this.source = s;
    for (const f of this.sourceListeners) f(s);
    const r = this.running;
    if (!r) return;
    if (s.kind === 'input') {
      if (!this.mic) {
        const stream = await navigator.mediaDevices.getUserMedia({
          audio: { echoCancellation: false, noiseSuppression: false, autoGainControl: false },
        });
        this.mic = new MediaStreamAudioSourceNode(r.ctx, { mediaStream: stream });
        this.mic.connect(r.node.node as unknown as AudioNode);
      }
    }
    await r.node.setSource(s);
  }

  /** Sets trims (ramped on a running node) and keeps them for the next start. */
  setTrims(t: Partial<Trims>): void {
    this.trims = { ...this.trims, ...t };
    this.running?.node.setTrims(t);
  }

  setLevel(db: number): void {
    this.levelDb = db;
    this.running?.node.setLevel(db);
  }

  async setSideband(sb: 'upper' | 'lower'): Promise<void> {
    this.sideband = sb;
    await this.running?.node.setSideband(sb);
  }

  setOutput(on: boolean): void {
    this.outputOn = on;
    const r = this.running;
    if (r) r.out.gain.setTargetAtTime(on ? 1 : 0, r.ctx.currentTime, 0.01);
  }
}
