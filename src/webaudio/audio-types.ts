/**
 * Structural types for the parts of Web Audio the node factories use, so the same code accepts the
 * browser's native classes, standardized-audio-context's and node-web-audio-api's without importing
 * any of them (the platform stays at the boundary, STYLE.md habit 8).
 */

/** An AudioParam, as far as the factories use it. */
export interface AudioParamLike {
  value: number;
  readonly minValue: number;
  readonly maxValue: number;
  setValueAtTime(value: number, startTime: number): unknown;
  linearRampToValueAtTime(value: number, endTime: number): unknown;
  cancelScheduledValues(cancelTime: number): unknown;
}

/** A MessagePort, as far as the factories use it. */
export interface PortLike {
  postMessage(message: unknown, transfer?: Transferable[]): void;
  onmessage: ((ev: MessageEvent) => void) | null;
}

/** An AudioWorkletNode, as far as the factories use it. */
export interface WorkletNodeLike {
  readonly port: PortLike;
  readonly parameters: { get(name: string): AudioParamLike | undefined };
  connect(destination: never, output?: number, input?: number): unknown;
  disconnect(): void;
  onprocessorerror: ((ev: Event) => void) | null;
}

/** The options an AudioWorkletNode constructor takes (the subset used). */
export interface WorkletNodeOptionsLike {
  numberOfInputs: number;
  numberOfOutputs: number;
  outputChannelCount?: number[];
  channelCount: number;
  channelCountMode: 'explicit' | 'max' | 'clamped-max';
  channelInterpretation: 'speakers' | 'discrete';
  parameterData?: Record<string, number>;
  processorOptions?: unknown;
}

/** An AudioWorkletNode constructor: native, standardized-audio-context's, or node-web-audio-api's. */
export type WorkletNodeConstructor<N extends WorkletNodeLike = WorkletNodeLike> = new (
  // biome-ignore lint/suspicious/noExplicitAny: each implementation types its own context class.
  context: any,
  name: string,
  options?: WorkletNodeOptionsLike,
) => N;

/** A (realtime or offline) audio context, as far as the factories use it. */
export interface AudioContextLike {
  readonly sampleRate: number;
  readonly currentTime: number;
  readonly audioWorklet?: { addModule(moduleURL: string, options?: unknown): Promise<void> };
}
