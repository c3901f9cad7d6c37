/**
 * Whole-page sessions and opening saved documents. A session is one JSON file holding every panel's
 * settings plus, as an embedded calibration profile (the library's own format, validated the same
 * way), the network in use, the trims and the correction filter. "Open" takes any of the three
 * documents the page and the command line write: a network, a profile or a session.
 */
import {
  type CalibrationProfile,
  createProfile,
  type Network,
  parseNetworkJson,
  validateNetwork,
  validateProfile,
} from 'orthotone';
import type { DesignPanel, DesignState } from './design-panel.js';
import { fmt } from './dom.js';
import type { Engine } from './engine.js';
import type { GeneratorPanel, GeneratorState } from './generator-panel.js';

/** The panel settings a session keeps for the calibration panel (free-form: its controls by name). */
export type CalibrationState = Record<string, string>;

/** What a session reads and writes. */
export interface SessionParts {
  engine: Engine;
  design: DesignPanel;
  gen: GeneratorPanel;
  cal: { state(): CalibrationState; restore(s: CalibrationState): void };
}

/** A session document, version 1. */
export interface SessionDocument {
  format: 'orthotone-session';
  version: 1;
  saved: string;
  design: DesignState;
  generator: GeneratorState;
  calibration: CalibrationState;
  /** Whether the correction filter (in `profile`) runs. */
  correctionOn: boolean;
  /** The network in use, trims and correction, as a calibration profile. */
  profile: CalibrationProfile;
}

/** The page as a session document (JSON text). */
export function sessionToJson(p: SessionParts): string {
  const e = p.engine;
  const gen = p.gen.state();
  const doc: SessionDocument = {
    format: 'orthotone-session',
    version: 1,
    saved: new Date().toISOString(),
    design: p.design.state(),
    generator: gen,
    calibration: p.cal.state(),
    correctionOn: e.correction?.on ?? false,
    profile: createProfile({
      sampleRate: e.network.sampleRate,
      toneHz: Math.min(gen.toneHz, e.network.sampleRate / 2 - 1),
      sideband: e.sideband,
      trims: e.trims,
      correction: e.correction?.correction ?? null,
      network: e.network,
      note: 'orthotone demo page session',
    }),
  };
  return `${JSON.stringify(doc, null, 2)}\n`;
}

const fail = (msg: string): never => {
  throw new Error(msg);
};
const obj = (x: unknown, what: string): Record<string, unknown> =>
  typeof x === 'object' && x !== null && !Array.isArray(x)
    ? (x as Record<string, unknown>)
    : fail(`session: ${what} must be an object`);
/** Keeps the fields of `x` whose type matches `like`'s (unknown or mistyped fields are left out). */
function sameTypes<T extends object>(x: Record<string, unknown>, like: T): Partial<T> {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(like)) {
    const got = x[k];
    if (got === undefined) continue;
    if (Array.isArray(v) ? Array.isArray(got) : typeof got === typeof v) out[k] = got;
  }
  return out as Partial<T>;
}

/** Applies a profile: its network (if any) shown and used, its trims, sideband and correction. */
async function applyProfile(p: CalibrationProfile, parts: SessionParts, from: string, correctionOn = true) {
  const said: string[] = [];
  if (p.network) {
    const net = validateNetwork(p.network);
    await parts.design.showNetwork(net, from);
    await parts.engine.setNetwork(net);
    said.push(`${net.kind === 'fir' ? 'Hilbert FIR' : 'all-pass'} network at ${net.sampleRate} Hz`);
  }
  parts.engine.setTrims(p.trims);
  parts.gen.showTrims(p.trims);
  const t = p.trims;
  said.push(
    `trims gain ${fmt(t.gainDb, 4)} dB, phase ${fmt(t.phaseDeg, 3)}°, skew ${fmt(t.skewSamples, 2)} samples`,
  );
  await parts.gen.restore({ sideband: p.sideband });
  if (p.correction) {
    if (p.sampleRate === parts.engine.network.sampleRate) {
      await parts.engine.setCorrection({
        correction: p.correction,
        note: `${p.correction.qFromQ.length} taps, from ${from}`,
        on: correctionOn,
      });
      said.push(`a ${p.correction.qFromQ.length}-tap correction filter${correctionOn ? '' : ' (bypassed)'}`);
    } else {
      said.push(
        `not its correction filter: made at ${p.sampleRate} Hz, the network in use runs at ${parts.engine.network.sampleRate} Hz`,
      );
    }
  } else await parts.engine.setCorrection(null);
  return said;
}

/**
 * Opens a network, profile or session document and applies it to the page.
 * @returns a sentence saying what was loaded.
 * @throws Error naming the file's problem (the library's INVALID_DOCUMENT message for a bad
 *   network or profile).
 */
export async function openDocument(text: string, name: string, parts: SessionParts): Promise<string> {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch {
    return fail(`${name} is not JSON: open a network, profile or session saved by orthotone`);
  }
  const format = (doc as { format?: unknown } | null)?.format;
  if (format === 'orthotone-network') {
    const net: Network = parseNetworkJson(text);
    await parts.design.showNetwork(net, `Loaded ${name}`);
    return `${name}: network shown on panel 1; press "Use in the generator" to play it.`;
  }
  if (format === 'orthotone-profile') {
    const p = validateProfile(doc);
    const said = await applyProfile(p, parts, name);
    return `${name}: profile applied: ${said.join('; ')}.`;
  }
  if (format === 'orthotone-session') {
    const d = obj(doc, 'the document');
    if (d.version !== 1)
      fail(`session version ${JSON.stringify(d.version)} is not supported: this page reads version 1`);
    const p = validateProfile(d.profile);
    const said = await applyProfile(p, parts, name, d.correctionOn !== false);
    parts.design.restore(sameTypes(obj(d.design, 'design'), parts.design.state()));
    await parts.gen.restore(sameTypes(obj(d.generator, 'generator'), parts.gen.state()));
    parts.cal.restore(sameTypes(obj(d.calibration, 'calibration'), parts.cal.state()) as CalibrationState);
    return `${name}: session restored (${said.join('; ')}).`;
  }
  return fail(
    `${name} has format ${JSON.stringify(format)}: open an orthotone network, profile or session (JSON)`,
  );
}

/**
 * The settings of a panel's named controls (`select` and `input` with an id), for a session: the
 * panel needs no code of its own to be saved.
 */
export function controlsState(root: HTMLElement): CalibrationState {
  const out: CalibrationState = {};
  for (const c of root.querySelectorAll<HTMLInputElement | HTMLSelectElement>('select[id], input[id]')) {
    if (c instanceof HTMLInputElement && (c.type === 'file' || c.type === 'checkbox')) continue;
    out[c.id] = c.value;
  }
  return out;
}

/** Sets a panel's named controls from {@link controlsState}, firing `change` so the panel follows. */
export function restoreControls(root: HTMLElement, s: CalibrationState): void {
  for (const [id, v] of Object.entries(s)) {
    const c = root.querySelector<HTMLInputElement | HTMLSelectElement>(`#${CSS.escape(id)}`);
    if (!c || typeof v !== 'string') continue;
    if (c instanceof HTMLSelectElement && ![...c.options].some((o) => o.value === v && !o.disabled)) continue;
    c.value = v;
    c.dispatchEvent(new Event('change', { bubbles: true }));
  }
}
