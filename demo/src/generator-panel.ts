/** Panel 2: the generator: source, level, sideband, trims, and a live monitor of I + jQ. */
import type { Trims } from '../../src/core/trims.js';
import { measureSideband } from '../../src/measure/sideband.js';
import { computeSpectrum } from '../../src/measure/spectrum.js';
import type { SourceSpec } from '../../src/webaudio/messages.js';
import { field, figure, fmt, h, numberInput, select } from './dom.js';
import type { Engine } from './engine.js';
import { linePlot } from './plot.js';

interface TrimControl {
  name: keyof Trims;
  label: string;
  range: number;
  step: number;
  digits: number;
}

const TRIM_CONTROLS: TrimControl[] = [
  { name: 'gainDb', label: 'Q gain, dB', range: 1, step: 0.001, digits: 3 },
  { name: 'phaseDeg', label: 'Phase, °', range: 5, step: 0.005, digits: 3 },
  { name: 'skewSamples', label: 'Q delay, samples', range: 2, step: 0.01, digits: 2 },
  { name: 'dcI', label: 'DC on I, FS', range: 0.02, step: 0.00001, digits: 5 },
  { name: 'dcQ', label: 'DC on Q, FS', range: 0.02, step: 0.00001, digits: 5 },
];

export interface GeneratorPanel {
  el: HTMLElement;
  /** Shows trims set elsewhere (by the calibration) on the sliders. */
  showTrims(t: Trims): void;
}

export function generatorPanel(engine: Engine): GeneratorPanel {
  const startBtn = h('button', { id: 'gen-start' }, 'Start audio');
  const outputBox = h('input', { type: 'checkbox', checked: true, id: 'gen-output' });
  const kind = select(
    [
      ['tone', 'One tone'],
      ['two-tone', 'Two tones'],
      ['sweep', 'Sweep'],
      ['noise', 'Noise (band-limited)'],
      ['input', 'Sound card input (microphone or line)'],
      ['silence', 'Silence (carrier only)'],
    ],
    'tone',
    { id: 'gen-source' },
  );
  const f1 = numberInput(1800, { min: 20, step: 10, id: 'gen-f1' });
  const f2 = numberInput(700, { min: 20, step: 10 });
  const level = h('input', { type: 'range', min: -60, max: 0, step: 0.5, value: String(engine.levelDb) });
  const levelOut = h('output', {}, `${engine.levelDb} dBFS`);
  const sideband = select(
    [
      ['upper', 'Upper sideband'],
      ['lower', 'Lower sideband'],
    ],
    'upper',
  );
  const status = h('div', { class: 'status' });
  const sliders = new Map<keyof Trims, { input: HTMLInputElement; out: HTMLOutputElement }>();
  const trimRows = TRIM_CONTROLS.map((c) => {
    const input = h('input', { type: 'range', min: -c.range, max: c.range, step: c.step, value: '0' });
    const out = h('output', {}, (0).toFixed(c.digits));
    input.addEventListener('input', () => {
      const v = Number(input.value);
      out.textContent = v.toFixed(c.digits);
      engine.running?.node.setTrims({ [c.name]: v });
    });
    sliders.set(c.name, { input, out });
    return h('div', { class: 'trim' }, h('label', {}, c.label), input, out);
  });
  const figs = {
    wanted: figure('Wanted tone'),
    sideband: figure('Sideband suppression'),
    carrier: figure('Carrier suppression'),
    peak: figure('Output peak'),
  };
  const monitor = h('div');
  const el = h(
    'section',
    { class: 'panel', id: 'panel-generate' },
    h('h2', {}, 'Generate I and Q'),
    h(
      'p',
      { class: 'lead' },
      'The network runs in an AudioWorklet. The left channel carries I and the right channel Q: wire the ',
      'sound card output to the exciter’s I and Q inputs. Trims act on Q and on DC, smoothly, while it plays.',
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
          h('legend', {}, 'Audio'),
          startBtn,
          h('label', {}, outputBox, ' Send to the sound card (left I, right Q)'),
        ),
        h(
          'fieldset',
          {},
          h('legend', {}, 'Source'),
          field('Signal', kind),
          h('div', { class: 'row' }, field('Tone, Hz', f1), field('Second tone, Hz', f2)),
          field('Level', h('div', { class: 'level' }, level, levelOut), 'peak dBFS (two tones: PEP)'),
          field('Sideband', sideband),
        ),
        status,
      ),
      h(
        'div',
        {},
        h(
          'fieldset',
          {},
          h('legend', {}, 'Trims (after the network)'),
          ...trimRows,
          h('button', { class: 'secondary', onclick: () => resetTrims() }, 'Zero all trims'),
        ),
        h('div', { class: 'figures' }, ...Object.values(figs).map((f) => f.el)),
        monitor,
      ),
    ),
  );
  const spec = linePlot(monitor, {
    title: 'Spectrum of I + jQ (right of 0 Hz: upper sideband; left: lower)',
    xLabel: 'Hz from carrier',
    yLabel: 'dBFS',
    series: [{ label: 'level', color: '#0f7c7a' }],
    height: 220,
  });

  function source(): SourceSpec {
    const a = Number(f1.value);
    const b = Number(f2.value);
    switch (kind.value) {
      case 'two-tone':
        return { kind: 'two-tone', frequenciesHz: [b, a] };
      case 'sweep':
        return {
          kind: 'sweep',
          startHz: engine.network.band[0],
          endHz: engine.network.band[1],
          durationSeconds: 4,
        };
      case 'noise':
        return { kind: 'noise', seed: 1, band: engine.network.band };
      case 'input':
        return { kind: 'input' };
      case 'silence':
        return { kind: 'silence' };
      default:
        return { kind: 'tone', frequencyHz: a };
    }
  }

  const report = (e: unknown) => {
    status.className = 'status error';
    status.textContent = e instanceof Error ? e.message : String(e);
  };
  const ok = (text: string) => {
    status.className = 'status';
    status.textContent = text;
  };

  startBtn.addEventListener('click', async () => {
    try {
      if (engine.running) {
        await engine.stop();
      } else {
        engine.source = source();
        await engine.start();
      }
    } catch (e) {
      report(e);
    }
  });
  engine.onChange((r) => {
    startBtn.textContent = r ? 'Stop audio' : 'Start audio';
    startBtn.className = r ? 'stop' : '';
    if (r)
      ok(
        `Running at ${r.ctx.sampleRate} Hz, ${engine.network.kind} network, ${engine.network.band[0]}–${engine.network.band[1]} Hz.`,
      );
    else ok('Stopped.');
  });
  outputBox.addEventListener('change', () => engine.setOutput(outputBox.checked));
  for (const c of [kind, f1, f2]) {
    c.addEventListener('change', () => engine.setSource(source()).catch(report));
  }
  level.addEventListener('input', () => {
    levelOut.textContent = `${level.value} dBFS`;
    engine.setLevel(Number(level.value));
  });
  sideband.addEventListener('change', () =>
    engine.setSideband(sideband.value as 'upper' | 'lower').catch(report),
  );

  function resetTrims(): void {
    engine.running?.node.setTrims({ gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 });
    panel.showTrims({ gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 });
  }

  // Monitor: a capture of the generator's own I/Q a few times a second.
  let busy = false;
  setInterval(async () => {
    const r = engine.running;
    if (!r || busy || document.hidden) return;
    busy = true;
    try {
      const fs = r.ctx.sampleRate;
      const cap = await r.iq.capture(8192);
      const [i, q] = cap.channels as [Float32Array, Float32Array];
      const s = computeSpectrum({ i, q }, fs, { frameLength: 4096 });
      const span = Math.min(fs / 2, engine.network.band[1] * 1.25);
      const xs: number[] = [];
      const ys: number[] = [];
      const half = s.fftSize / 2;
      for (let k = -half; k < half; k++) {
        const hz = k * s.binHz;
        if (Math.abs(hz) > span) continue;
        xs.push(hz);
        ys.push(10 * Math.log10(Math.max(1e-16, s.power[(k + s.fftSize) % s.fftSize]!)));
      }
      spec.setData(xs, [ys]);
      let peak = 0;
      for (let k = 0; k < i.length; k++) peak = Math.max(peak, Math.abs(i[k]!), Math.abs(q[k]!));
      figs.peak.set(`${fmt(20 * Math.log10(Math.max(peak, 1e-9)))} dBFS`, peak > 1 ? 'bad' : '');
      if (engine.source.kind === 'tone') {
        const m = measureSideband(i, q, fs, {
          toneHz: engine.source.frequencyHz,
          sideband: engine.sideband,
          frameLength: 4096,
        });
        figs.wanted.set(`${fmt(m.wanted.levelDbfs)} dBFS`);
        figs.sideband.set(`${fmt(m.sidebandSuppressionDb)} dB`);
        figs.carrier.set(`${fmt(m.carrierSuppressionDb)} dB`);
      } else {
        figs.wanted.set('one tone only');
        figs.sideband.set('—');
        figs.carrier.set('—');
      }
    } catch {
      // A monitor frame that cannot be read is skipped.
    } finally {
      busy = false;
    }
  }, 400);

  const panel: GeneratorPanel = {
    el,
    showTrims(t) {
      for (const c of TRIM_CONTROLS) {
        const s = sliders.get(c.name)!;
        const v = Math.max(-c.range, Math.min(c.range, t[c.name]));
        s.input.value = String(v);
        s.out.textContent = t[c.name].toFixed(c.digits);
      }
    },
  };
  return panel;
}
