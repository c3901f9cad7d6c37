/**
 * The design panel's job: design a network and evaluate it. Run in a worker (design-worker.ts) so a
 * design that takes a second or more (a deep target, rounded coefficients) never freezes the page.
 */
import {
  analyzeNetwork,
  designNetwork,
  type Network,
  type NetworkAnalysis,
  type NetworkSpec,
} from 'orthotone';

/** What the page asks for: a spec to design, or a network (loaded from a file) to evaluate. */
export type DesignRequest = { id: number; spec: NetworkSpec } | { id: number; network: Network };

/** What the worker answers. */
export type DesignReply =
  | {
      id: number;
      ok: true;
      network: Network;
      band: NetworkAnalysis;
      wide: NetworkAnalysis;
      range: [number, number];
      ms: number;
    }
  | { id: number; ok: false; message: string; code: string | null };

/**
 * Designs (or takes) the network, evaluates it over its band (figures) and a little beyond it (plots:
 * an eighth of the band's octaves each side, inside 0…Nyquist).
 */
export function designAndEvaluate(req: DesignRequest): DesignReply {
  const t0 = performance.now();
  try {
    const network = 'spec' in req ? designNetwork(req.spec) : req.network;
    const fs = network.sampleRate;
    const [lo, hi] = network.band;
    const band = analyzeNetwork(network, { points: 400, fromHz: lo, toHz: hi, scale: 'log' });
    const margin = (hi / lo) ** (1 / 16);
    const range: [number, number] = [Math.max(1, lo / margin), Math.min(0.499 * fs, hi * margin)];
    const wide = analyzeNetwork(network, { points: 480, fromHz: range[0], toHz: range[1], scale: 'log' });
    return { id: req.id, ok: true, network, band, wide, range, ms: performance.now() - t0 };
  } catch (e) {
    const code = e && typeof e === 'object' && 'code' in e ? String((e as { code: unknown }).code) : null;
    return { id: req.id, ok: false, message: e instanceof Error ? e.message : String(e), code };
  }
}
