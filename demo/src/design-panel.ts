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
} from 'orthotone';
import { download, field, figure, fmt, h, numberInput, select } from './dom.js';
import { linePlot } from './plot.js';

export interface DesignPanel {
  el: HTMLElement;
  network: Network;
}

/** The starting spec: voice band at 48 kHz, 60 dB. */
export const START_SPEC: NetworkSpec = { sampleRate: 48000, band: [300, 3000], method: 'auto', targetDb: 60 };

export function designPanel(onUse: (net: Network) => void): DesignPanel {
  const rate = select(
    [
      ['8000', '8 kHz'],
      ['16000', '16 kHz'],
      ['44100', '44.1 kHz'],
      ['48000', '48 kHz'],
      ['96000', '96 kHz'],
    ],
    String(START_SPEC.sampleRate),
  );
  const lo = numberInput(START_SPEC.band[0], { min: 1, step: 10 });
  const hi = numberInput(START_SPEC.band[1], { min: 10, step: 10 });
  const method = select(
    [
      ['auto', 'Cheapest that meets the target'],
      ['allpass', 'All-pass pair (IIR)'],
      ['fir', 'Hilbert FIR (linear phase)'],
    ],
    START_SPEC.method,
  );
  const target = numberInput(START_SPEC.targetDb ?? 60, { min: 10, max: 140, step: 1 });
  const status = h('div', { class: 'status' });
  const figs = {
    worst: figure('Worst suppression'),
    phase: figure('Max phase error'),
    gain: figure('Max gain error'),
    kind: figure('Network'),
    cost: figure('Multiplies / sample'),
    latency: figure('Latency'),
  };
  const plots = h('div', { id: 'design-plots' });
  const el = h(
    'section',
    { class: 'panel', id: 'panel-design' },
    h('h2', {}, 'Design a 90° network'),
    h(
      'p',
      { class: 'lead' },
      'Say which audio band must reach the exciter and how deep the unwanted sideband must be. ',
      'The explorer designs the network, shows its phase error and the suppression it allows across the band ',
      '(before any analog errors), what it costs to run, and lets you download it.',
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
          field('Suppression wanted, dB', target, 'worst case over the band'),
          field('Network kind', method),
          h('button', { id: 'design-run', onclick: () => run() }, 'Design'),
        ),
        h(
          'fieldset',
          {},
          h('legend', {}, 'Use and export'),
          h('button', { id: 'design-use', onclick: () => onUse(panel.network) }, 'Use in the generator'),
          h('div', { class: 'hint' }, 'Downloads:'),
          h('button', { class: 'secondary', onclick: () => dl('json') }, 'JSON'),
          h('button', { class: 'secondary', onclick: () => dl('c') }, 'C header'),
          h('button', { class: 'secondary', onclick: () => dl('csv') }, 'Coefficients CSV'),
          h('button', { class: 'secondary', onclick: () => dl('analysis') }, 'Response CSV'),
        ),
        status,
      ),
      h('div', {}, h('div', { class: 'figures' }, ...Object.values(figs).map((f) => f.el)), plots),
    ),
  );
  // Plots span the band and a little beyond it (shaded), so the edges show where the error turns up.
  let view: { range: [number, number]; band: [number, number]; phaseSpan: number } = {
    range: [270, 3300],
    band: [300, 3000],
    phaseSpan: 0.1,
  };
  const phasePlot = linePlot(plots, {
    title: 'Phase error across the band (I − Q − 90°; shaded: outside the band)',
    xLabel: 'Hz',
    yLabel: 'degrees',
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
      { label: 'target', color: '#8a96a0', dash: [6, 4] },
    ],
    xRange: () => view.range,
    shadeOutside: () => view.band,
  });

  const panel: DesignPanel = { el, network: designNetwork(START_SPEC) };

  function spec(): NetworkSpec {
    return {
      sampleRate: Number(rate.value),
      band: [Number(lo.value), Number(hi.value)],
      method: method.value as NetworkSpec['method'],
      targetDb: Number(target.value),
    };
  }

  function show(net: Network): void {
    const fs = net.sampleRate;
    const a = analyzeNetwork(net, {
      points: 400,
      // The band itself: outside it the error grows fast and would hide the equiripple detail.
      fromHz: net.band[0],
      toHz: net.band[1],
      scale: 'log',
    });
    const t = Number(target.value);
    figs.worst.set(`${fmt(a.worst.suppressionDb)} dB`, a.worst.suppressionDb >= t - 0.05 ? 'good' : 'bad');
    figs.phase.set(`${fmt(a.maxPhaseErrorDeg, 3)}°`);
    figs.gain.set(`${fmt(a.maxGainErrorDb, 4)} dB`);
    const size =
      net.kind === 'fir'
        ? `FIR, ${net.taps.length} taps`
        : `All-pass, ${net.branches.i.sections.length + net.branches.q.sections.length} sections`;
    figs.kind.set(size);
    figs.cost.set(String(net.cost.multipliesPerSample));
    figs.latency.set(
      `${fmt(net.cost.latencySamples)} smp · ${fmt((1000 * net.cost.latencySamples) / fs, 2)} ms`,
    );
    // A little beyond the band: an eighth of it on each side (log scale), inside 0…Nyquist.
    const [lo, hi] = net.band;
    const margin = (hi / lo) ** (1 / 16);
    const range: [number, number] = [Math.max(1, lo / margin), Math.min(0.499 * fs, hi * margin)];
    view = { range, band: [lo, hi], phaseSpan: Math.max(1e-6, 1.6 * a.maxPhaseErrorDeg) };
    const w = analyzeNetwork(net, { points: 480, fromHz: range[0], toHz: range[1], scale: 'log' });
    phasePlot.setData(w.frequencyHz, [w.phaseErrorDeg]);
    supPlot.setData(w.frequencyHz, [
      Array.from(w.suppressionDb, (s) => Math.max(0, Math.min(s, 160))),
      Array.from(w.frequencyHz, () => t),
    ]);
    plots.dataset['xRange'] = JSON.stringify(range);
  }

  function run(): void {
    try {
      panel.network = designNetwork(spec());
      status.className = 'status';
      status.textContent = `Designed for ${panel.network.band[0]}–${panel.network.band[1]} Hz at ${panel.network.sampleRate} Hz.`;
      show(panel.network);
    } catch (e) {
      status.className = 'status error';
      status.textContent = e instanceof Error ? e.message : String(e);
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

  queueMicrotask(() => show(panel.network));
  return panel;
}
