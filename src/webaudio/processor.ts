/**
 * The AudioWorklet module (package entry `orthotone/worklet`, built to dist/worklet/processor.js as
 * one self-contained ES module). Loading it with `audioWorklet.addModule(url)` registers two
 * processors: {@link QUADRATURE_PROCESSOR_NAME} (the generator) and {@link CAPTURE_PROCESSOR_NAME}
 * (a recorder). Outside an AudioWorkletGlobalScope it does nothing.
 */
import { defineCaptureProcessor } from './capture-processor.js';
import { CAPTURE_PROCESSOR_NAME, QUADRATURE_PROCESSOR_NAME } from './messages.js';
import { defineQuadratureProcessor, type ProcessorBase } from './quadrature-processor.js';

interface WorkletScope {
  registerProcessor?: (name: string, ctor: unknown) => void;
  AudioWorkletProcessor?: new (options?: { processorOptions?: unknown }) => ProcessorBase;
  sampleRate?: number;
  currentFrame?: number;
}

const g = globalThis as unknown as WorkletScope;
if (typeof g.registerProcessor === 'function' && typeof g.AudioWorkletProcessor === 'function') {
  const scope = {
    sampleRate: Number(g.sampleRate),
    currentFrame: () => Number(g.currentFrame ?? 0),
  };
  g.registerProcessor(QUADRATURE_PROCESSOR_NAME, defineQuadratureProcessor(g.AudioWorkletProcessor, scope));
  g.registerProcessor(CAPTURE_PROCESSOR_NAME, defineCaptureProcessor(g.AudioWorkletProcessor, scope));
}
