/** Panel 1: the design explorer. Spec in; figures, plots and downloads out. */
import {
  analysisToCsv,
  analyzeNetwork,
  designNetwork,
  type Network,
  type NetworkSpec,
  networkToCHeader,
  networkToCsv,
  networkToJson,
  parseNetworkJson,
} from 'orthotone';
import type { DesignReply, DesignRequest } from './design-job.js';
import DesignWorker from './design-worker.ts?worker';
import {
  download,
  type Figure,
  field,
  figure,
  fmt,
  h,
  numberInput,
  pickTextFile,
  select,
  statusLine,
} from './dom.js';
import { linePlot } from './plot.js';

export interface DesignPanel {
  el: HTMLElement;
  network: Network;
  /** The spec controls, for a saved session. */
  state(): DesignState;
  /** Sets the spec controls (a loaded session) without designing. */
  restore(s: Partial<DesignState>): void;
  /** Shows a network made elsewhere (a file, a profile, a session) as the current design. */
  showNetwork(net: Network, from: string): Promise<void>;
}

/** The design panel's settings, as saved in a session. */
export interface DesignState {
  sampleRate: number;
  band: [number, number];
  targetDb: number;
  method: NetworkSpec['method'];
  coefficientFormat: NonNullable<NetworkSpec['coefficientFormat']>;
}

/** The starting spec: voice band at 48 kHz, 60 dB. */
export const START_SPEC: NetworkSpec = { sampleRate: 48000, band: [300, 3000], method: 'auto', targetDb: 60 };

/** Sample rates offered: the common codec rates from telephone band to studio. */
const RATES: [string, string][] = [
  ['8000', '8 kHz'],
  ['16000', '16 kHz'],
  ['24000', '24 kHz'],
  ['32000', '32 kHz'],
  ['44100', '44.1 kHz'],
  ['48000', '48 kHz'],
  ['96000', '96 kHz'],
];

/** Coefficient formats, as the command line's `--coefficients`. */
const FORMATS: [string, string][] = [
  ['float64', 'float64 (as designed)'],
  ['float32', 'float32'],
  ['q31', 'Q31 (32-bit fixed point)'],
  ['q15', 'Q15 (16-bit fixed point)'],
];

export function designPanel(onUse: (net: Network) => void): DesignPanel {
  const rate = select(RATES, String(START_SPEC.sampleRate), { id: 'design-rate' });
  const lo = numberInput(START_SPEC.band[0], { min: 1, step: 10, id: 'design-lo' });
  const hi = numberInput(START_SPEC.band[1], { min: 10, step: 10, id: 'design-hi' });
  const method = select(
    [
      ['auto', 'Either: the cheaper one'],
      ['allpass', 'All-pass pair (IIR)'],
      ['fir', 'Hilbert FIR (linear phase)'],
    ],
    START_SPEC.method,
    { id: 'design-method' },
  );
  const format = select(FORMATS, 'float64', { id: 'design-format' });
  const target = numberInput(START_SPEC.targetDb ?? 60, { min: 10, max: 140, step: 1, id: 'design-target' });
  const status = statusLine('design-status');
  const loadStatus = statusLine('design-load-status');
  const figs = {
    worst: figure('Worst suppression', 'over the band'),
    phase: figure('Largest phase error'),
    gain: figure('Largest gain error'),
    kind: figure('Network'),
    cost: figure('Multiplies per sample'),
    latency: figure('Delay'),
  };
  const runBtn = h('button', { id: 'design-run', onclick: () => void run() }, 'Design');
  const useBtn = h(
    'button',
    { id: 'design-use', onclick: () => onUse(panel.network) },
    'Use in the generator',
  );
  const dlButtons = [
    h('button', { class: 'secondary', onclick: () => dl('json') }, 'Network (JSON)'),
    h('button', { class: 'secondary', onclick: () => dl('c') }, 'C header'),
    h('button', { class: 'secondary', onclick: () => dl('csv') }, 'Coefficients (CSV)'),
    h('button', { class: 'secondary', onclick: () => dl('analysis') }, 'Response (CSV)'),
  ];
  const loadBtn = h(
    'button',
    { class: 'secondary', id: 'design-load', onclick: () => void load() },
    'Load a network (JSON)…',
  );
  const plots = h('div', { id: 'design-plots' });
  const figBox = h(
    'div',
    { class: 'figures', id: 'design-figures' },
    ...Object.values(figs).map((f) => f.el),
  );
  const el = h(
    'section',
    { class: 'panel', id: 'panel-design', 'aria-labelledby': 'design-title' },
    h('h2', { id: 'design-title' }, 'Design a 90° network'),
    h(
      'p',
      { class: 'lead' },
      'Give the band and the suppression wanted; see the phase error, the suppression the network allows ',
      '(before analog errors) and its cost, then use or download it.',
    ),
    h(
      'div',
      { class: 'grid' },
      h(
        'div',
        {},
        h(
          'fieldset',
          {},
          h('legend', {}, 'Specification'),
          field('Sample rate', rate),
          h('div', { class: 'row' }, field('Band low, Hz', lo), field('Band high, Hz', hi)),
          field('Suppression wanted, dB', target, 'worst in the band'),
          field('Network kind', method),
          field('Coefficient format', format, 'as your firmware runs them'),
          runBtn,
          status.el,
        ),
        h(
          'fieldset',
          {},
          h('legend', {}, 'Use, save, load'),
          useBtn,
          h('div', { class: 'hint' }, 'Download the design:'),
          ...dlButtons,
          h('div', { class: 'hint' }, 'Or evaluate a network saved earlier:'),
          loadBtn,
          loadStatus.el,
        ),
      ),
      h('div', { 'aria-live': 'off' }, figBox, plots),
    ),
  );
  // Plots span the band and a little beyond it (shaded), so the edges show where the error turns up.
  let view: { range: [number, number]; band: [number, number]; phaseSpan: number; worst: string } = {
    range: [270, 3300],
    band: [300, 3000],
    phaseSpan: 0.1,
    worst: '',
  };
  const phasePlot = linePlot(plots, {
    title: 'Phase error across the band (I − Q − 90°; shaded: outside the band)',
    xLabel: 'Hz',
    yLabel: 'degrees',
    yUnit: '°',
    yDigits: 4,
    logX: true,
    series: [{ label: 'phase error', color: '#0f7c7a' }],
    xRange: () => view.range,
    // In-band ripple fills most of the height; the error beyond the edges runs off the top and bottom.
    yRange: () => [-view.phaseSpan, view.phaseSpan],
    shadeOutside: () => view.band,
  });
  const supPlot = linePlot(plots, {
    title: 'Predicted opposite-sideband suppression across the band',
    xLabel: 'Hz',
    yLabel: 'dB',
    logX: true,
    series: [
      { label: 'suppression', color: '#c8452b' },
      { label: 'target', color: '#6b7884', dash: [6, 4] },
    ],
    xRange: () => view.range,
    shadeOutside: () => view.band,
    describe: () =>
      `Predicted opposite-sideband suppression. Worst in the band ${view.worst} (beyond the band edges, shaded, it falls off).`,
  });

  // Designs run in a worker; a new request replaces one still running.
  let worker: Worker | null = null;
  let pending: { id: number; resolve: (r: DesignReply) => void } | null = null;
  let seq = 0;
  function request(req: Omit<DesignRequest, 'id'>): Promise<DesignReply> {
    if (pending) {
      worker?.terminate();
      worker = null;
      pending = null;
    }
    if (!worker) {
      worker = new DesignWorker();
      worker.addEventListener('message', (e: MessageEvent<DesignReply>) => {
        if (pending && e.data.id === pending.id) {
          const p = pending;
          pending = null;
          p.resolve(e.data);
        }
      });
    }
    const id = ++seq;
    return new Promise((resolve) => {
      pending = { id, resolve };
      worker!.postMessage({ ...req, id } as DesignRequest);
    });
  }

  const panel: DesignPanel = {
    el,
    network: designNetwork(START_SPEC),
    state: () => ({
      sampleRate: Number(rate.value),
      band: [Number(lo.value), Number(hi.value)],
      targetDb: Number(target.value),
      method: method.value as NetworkSpec['method'],
      coefficientFormat: format.value as DesignState['coefficientFormat'],
    }),
    restore(s) {
      if (s.sampleRate !== undefined) setRate(s.sampleRate);
      if (s.band) {
        lo.value = String(s.band[0]);
        hi.value = String(s.band[1]);
      }
      if (s.targetDb !== undefined) target.value = String(s.targetDb);
      if (s.method) method.value = s.method;
      if (s.coefficientFormat) format.value = s.coefficientFormat;
    },
    async showNetwork(net, from) {
      panel.restore({ sampleRate: net.sampleRate, band: net.band, method: net.kind });
      const f = (net.design as { coefficientFormat?: string }).coefficientFormat;
      format.value = typeof f === 'string' && FORMATS.some(([v]) => v === f) ? f : 'float64';
      await evaluate({ network: net }, loadStatus, `${from}: `);
    },
  };

  /** Picks the rate in the list, adding it when a loaded network runs at another rate. */
  function setRate(fs: number): void {
    if (![...rate.options].some((o) => Number(o.value) === fs)) {
      rate.append(h('option', { value: String(fs) }, `${fmt(fs / 1000, 3).replace(/\.?0+$/, '')} kHz`));
    }
    rate.value = String(fs);
  }

  function spec(): NetworkSpec {
    const s = panel.state();
    return { ...s, coefficientFormat: s.coefficientFormat };
  }

  function setAvailable(ok: boolean): void {
    useBtn.disabled = !ok;
    for (const b of dlButtons) b.disabled = !ok;
  }

  /** Clears every figure and plot: nothing from an earlier design stays up after a failure. */
  function clearFigures(why: string): void {
    for (const f of Object.values(figs) as Figure[]) f.clear();
    phasePlot.clear(why);
    supPlot.clear(why);
    delete plots.dataset['xRange'];
  }

  function show(r: Extract<DesignReply, { ok: true }>): void {
    const net = r.network;
    const a = r.band;
    const fs = net.sampleRate;
    const t = Number(target.value);
    const meets = a.worst.suppressionDb >= t - 0.05;
    figs.worst.set(
      `${fmt(a.worst.suppressionDb)} dB`,
      meets ? 'good' : 'bad',
      `${meets ? 'meets' : 'below'} ${fmt(t, 0)} dB`,
    );
    figs.phase.set(`${fmt(a.maxPhaseErrorDeg, 3)}°`);
    figs.gain.set(`${fmt(a.maxGainErrorDb, 4)} dB`);
    const size =
      net.kind === 'fir'
        ? `FIR, ${net.taps.length} taps`
        : `All-pass, ${net.branches.i.sections.length + net.branches.q.sections.length} sections`;
    const f = (net.design as { coefficientFormat?: string }).coefficientFormat;
    figs.kind.set(f && f !== 'float64' ? `${size}, ${f.toUpperCase()}` : size);
    figs.cost.set(String(net.cost.multipliesPerSample));
    figs.latency.set(
      `${fmt(net.cost.latencySamples)} samples · ${fmt((1000 * net.cost.latencySamples) / fs, 2)} ms`,
    );
    view = {
      range: r.range,
      band: [net.band[0], net.band[1]],
      phaseSpan: Math.max(1e-6, 1.6 * a.maxPhaseErrorDeg),
      worst: `${fmt(a.worst.suppressionDb)} dB at ${fmt(a.worst.atHz, 0)} Hz`,
    };
    const w = r.wide;
    phasePlot.setData(w.frequencyHz, [w.phaseErrorDeg]);
    supPlot.setData(w.frequencyHz, [
      Array.from(w.suppressionDb, (s) => Math.max(0, Math.min(s, 160))),
      Array.from(w.frequencyHz, () => t),
    ]);
    plots.dataset['xRange'] = JSON.stringify(r.range);
  }

  /** Designs or evaluates in the worker, with a busy sign; a failure clears the stale figures. */
  async function evaluate(req: Omit<DesignRequest, 'id'>, line = status, prefix = ''): Promise<boolean> {
    line.busy('spec' in req ? 'Designing… (the page stays usable)' : 'Evaluating the network…');
    runBtn.disabled = true;
    figBox.setAttribute('aria-busy', 'true');
    el.classList.add('busy');
    try {
      const r = await request(req);
      if (!r.ok) {
        clearFigures(`No design: ${r.message}`);
        setAvailable(false);
        line.fail(
          `${prefix}${r.message.replace(/[.\s]*$/, '.')} Figures and downloads are cleared until a design succeeds.`,
        );
        return false;
      }
      panel.network = r.network;
      setAvailable(true);
      show(r);
      const n = r.network;
      line.say(
        'spec' in req
          ? `Designed for ${n.band[0]}–${n.band[1]} Hz at ${n.sampleRate} Hz (${fmt(r.ms / 1000, 2)} s).`
          : `${prefix}${n.kind === 'fir' ? 'Hilbert FIR' : 'all-pass pair'} for ${n.band[0]}–${n.band[1]} Hz at ${n.sampleRate} Hz.`,
      );
      if (line !== status) status.clear();
      el.dataset['design'] = JSON.stringify({ ms: r.ms, kind: n.kind, worstDb: r.band.worst.suppressionDb });
      return true;
    } finally {
      runBtn.disabled = false;
      figBox.removeAttribute('aria-busy');
      el.classList.remove('busy');
    }
  }

  async function run(): Promise<void> {
    loadStatus.clear();
    await evaluate({ spec: spec() });
  }

  async function load(): Promise<void> {
    const file = await pickTextFile('.json,application/json');
    if (!file) return;
    try {
      const net = parseNetworkJson(file.text);
      status.clear();
      await panel.showNetwork(net, `Loaded ${file.name}`);
    } catch (e) {
      loadStatus.fail(`${file.name}: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  function dl(what: 'json' | 'c' | 'csv' | 'analysis'): void {
    const net = panel.network;
    const base = `orthotone-${net.kind}-${net.band[0]}-${net.band[1]}-${net.sampleRate}`;
    if (what === 'json') download(`${base}.json`, networkToJson(net), 'application/json');
    else if (what === 'c') download(`${base}.h`, networkToCHeader(net), 'text/x-c');
    else if (what === 'csv') download(`${base}.csv`, networkToCsv(net), 'text/csv');
    else download(`${base}-response.csv`, analysisToCsv(analyzeNetwork(net, { points: 512 })), 'text/csv');
  }

  queueMicrotask(() => void evaluate({ network: panel.network }, status, 'Start design: '));
  return panel;
}
