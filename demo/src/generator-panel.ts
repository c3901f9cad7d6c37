/**
 * Panel 2: the generator: source, level, sideband, trims, correction filter, and a live monitor of
 * I + jQ (spectrum, I/Q scope, and the readings that fit the source: one tone, two tones, or
 * several tones across the band).
 */
import {
  computeSpectrum,
  measureSideband,
  measureTones,
  measureTwoTone,
  type SourceSpec,
  type Trims,
  type TwoToneReading,
  ZERO_TRIMS,
} from 'orthotone';
import { logTones } from './bench.js';
import { field, figure, fmt, h, numberInput, select, statusLine } from './dom.js';
import { DEFAULT_TONE_HZ, type Engine } from './engine.js';
import { linePlot } from './plot.js';
import { iqScope } from './scope.js';

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
  { name: 'skewSamples', label: 'Skew (Q later), samples', range: 2, step: 0.01, digits: 2 },
  { name: 'dcI', label: 'DC on I, of full scale', range: 0.02, step: 0.00001, digits: 5 },
  { name: 'dcQ', label: 'DC on Q, of full scale', range: 0.02, step: 0.00001, digits: 5 },
];

/** Frame of the monitor's spectrum plot: 11.7 Hz bins at 48 kHz, two frames averaged per capture. */
const PLOT_FRAME = 4096;
/** Tones of the "several tones" source. */
const MULTI_TONES = 5;

export interface GeneratorPanel {
  el: HTMLElement;
  /** Shows trims set elsewhere (by the calibration) on the sliders. */
  showTrims(t: Trims): void;
  /** The panel's settings, for a saved session. */
  state(): GeneratorState;
  /** Sets the panel's settings and the engine's (a loaded session or profile). */
  restore(s: Partial<GeneratorState>): Promise<void>;
}

/** The generator's settings, as saved in a session (trims and correction travel in its profile). */
export interface GeneratorState {
  source: string;
  toneHz: number;
  secondToneHz: number;
  levelDb: number;
  sideband: 'upper' | 'lower';
  output: boolean;
  magnify: string;
}

/** A level in dB, or "≤ level" when the reading is at the floor (an upper bound). */
function bound(db: number, atFloor: boolean, unit: string): string {
  return `${atFloor ? '≤ ' : ''}${fmt(db)} ${unit}`;
}

export function generatorPanel(engine: Engine): GeneratorPanel {
  const startBtn = h('button', { id: 'gen-start' }, 'Start audio');
  const outputBox = h('input', { type: 'checkbox', checked: true, id: 'gen-output' });
  const kind = select(
    [
      ['tone', 'One tone'],
      ['two-tone', 'Two tones'],
      ['multitone', 'Tones across the band'],
      ['sweep', 'Sweep'],
      ['noise', 'Noise (band-limited)'],
      ['input', 'Sound card input'],
      ['silence', 'Silence (carrier only)'],
    ],
    'tone',
    { id: 'gen-source' },
  );
  // The command line's default test tone (1000 Hz), so the page and `orthotone start` agree.
  const f1 = numberInput(DEFAULT_TONE_HZ, { min: 20, step: 10, id: 'gen-f1' });
  const f2 = numberInput(700, { min: 20, step: 10, id: 'gen-f2' });
  const f1Row = field('Tone, Hz', f1);
  const f2Row = field('Second tone, Hz', f2);
  const level = h('input', {
    type: 'range',
    id: 'gen-level',
    min: -60,
    max: 0,
    step: 0.5,
    value: String(engine.levelDb),
    'aria-describedby': 'gen-level-hint',
  });
  const levelOut = h('output', { for: 'gen-level', id: 'gen-level-out' }, `${engine.levelDb} dBFS`);
  const sideband = select(
    [
      ['upper', 'Upper sideband'],
      ['lower', 'Lower sideband'],
    ],
    'upper',
    { id: 'gen-sideband' },
  );
  const status = statusLine('gen-status');
  // Errors from the source settings and the correction filter show beside those controls.
  const srcStatus = statusLine('gen-source-status');
  const corrStatus = statusLine('gen-corr-status');
  const sliders = new Map<keyof Trims, { input: HTMLInputElement; out: HTMLOutputElement }>();
  const trimRows = TRIM_CONTROLS.map((c) => {
    const id = `gen-trim-${c.name}`;
    const input = h('input', { type: 'range', id, min: -c.range, max: c.range, step: c.step, value: '0' });
    const out = h('output', { for: id }, (0).toFixed(c.digits));
    input.addEventListener('input', () => {
      const v = Number(input.value);
      out.textContent = v.toFixed(c.digits);
      engine.setTrims({ [c.name]: v });
    });
    sliders.set(c.name, { input, out });
    return h('div', { class: 'trim' }, h('label', { for: id }, c.label), input, out);
  });

  // Correction filter (from the multi-tone calibration).
  const corrText = h(
    'div',
    { class: 'hint', id: 'gen-corr-text' },
    'None. A multi-tone calibration (panel 3) makes one for the whole band.',
  );
  const corrOn = h('input', { type: 'checkbox', id: 'gen-corr-on', disabled: true });
  const corrRemove = h('button', { class: 'secondary', id: 'gen-corr-remove', disabled: true }, 'Remove');
  const corrControls = h(
    'div',
    { hidden: true },
    h('label', { class: 'check' }, corrOn, ' Run it (untick to compare without)'),
    corrRemove,
    corrStatus.el,
    h(
      'p',
      { class: 'hint' },
      'While it runs, the generator’s own I/Q is deliberately unbalanced to cancel the exciter’s errors: ',
      'the monitor below shows that; judge the suppression at the exciter’s output.',
    ),
  );
  const corrBox = h(
    'fieldset',
    {},
    h('legend', {}, 'Correction filter (after gain and phase)'),
    corrText,
    corrControls,
  );

  // Monitor figures: one set per kind of source, only the fitting one shown.
  const figs = {
    wanted: figure('Wanted tone'),
    sideband: figure('Sideband suppression', 'below the tone'),
    carrier: figure('Carrier suppression', 'below the tone'),
    peak: figure('Output peak'),
  };
  const two = {
    t1: figure('Tone 1'),
    t2: figure('Tone 2'),
    pep: figure('PEP'),
    imd3: figure('IMD3 (worst)'),
    imd5: figure('IMD5 (worst)'),
  };
  const multi = {
    tones: figure('Each tone'),
    worst: figure('Worst tone: sideband'),
    best: figure('Best tone: sideband'),
  };
  const oneBox = h('div', { class: 'figures', id: 'gen-figs-tone' }, ...Object.values(figs).map((f) => f.el));
  const twoBox = h(
    'div',
    { hidden: true, id: 'gen-figs-two' },
    h('div', { class: 'figures wide' }, ...Object.values(two).map((f) => f.el)),
    h(
      'p',
      { class: 'hint' },
      'Products relative to one tone (dBc) and to the peak envelope power (dB PEP). This is the ',
      'generator’s own I/Q: products here come from clipping or the sound card, not from the exciter. ',
      'Read the exciter’s products at its output with a receiver.',
    ),
  );
  const multiBox = h(
    'div',
    { hidden: true, id: 'gen-figs-multi' },
    h('div', { class: 'figures' }, ...Object.values(multi).map((f) => f.el)),
  );
  const scope = iqScope();
  const magnify = select(
    [
      ['1', 'as it is'],
      ['10', 'deviation ×10'],
      ['100', 'deviation ×100'],
      ['1000', 'deviation ×1000'],
    ],
    '1',
    { id: 'gen-magnify' },
  );
  const monitor = h('div');
  const el = h(
    'section',
    { class: 'panel', id: 'panel-generate' },
    h('h2', {}, 'Generate I and Q'),
    h(
      'p',
      { class: 'lead' },
      'The left channel carries I and the right channel Q: wire the sound card output to the exciter’s I and Q ',
      'inputs. Trims act on Q and on DC, smoothly, while it plays.',
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
          status.el,
          h('label', { class: 'check' }, outputBox, ' Send to the sound card (left I, right Q)'),
        ),
        h(
          'fieldset',
          {},
          h('legend', {}, 'Source'),
          field('Signal', kind),
          h('div', { class: 'row' }, f1Row, f2Row),
          h(
            'div',
            { class: 'field' },
            h(
              'label',
              { for: 'gen-level' },
              'Level ',
              h('small', { class: 'hint-inline', id: 'gen-level-hint' }, 'peak dBFS (two tones: PEP)'),
            ),
            h('div', { class: 'level' }, level, levelOut),
          ),
          field('Sideband', sideband),
          srcStatus.el,
        ),
        h(
          'fieldset',
          {},
          h('legend', {}, 'I/Q scope'),
          scope.el,
          field('Show', magnify, 'magnify how far the trace strays from a circle'),
        ),
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
        corrBox,
        h(
          'p',
          { class: 'hint', id: 'gen-monitor-note' },
          'Monitor: read from the generator’s own digital I/Q, before the sound card. These are true figures of ',
          'the signal the page sends; what your exciter puts out is read on panel 3 or with a receiver.',
        ),
        oneBox,
        twoBox,
        multiBox,
        monitor,
      ),
    ),
  );
  const spec = linePlot(monitor, {
    title: 'Spectrum of the generator’s I/Q (right of the carrier: upper sideband; left: lower)',
    xLabel: 'Hz from the carrier',
    xUnit: 'Hz',
    yLabel: 'dBFS',
    series: [{ label: 'level', color: '#0f7c7a' }],
    height: 220,
  });
  scope.clear();

  function source(): SourceSpec {
    const a = Number(f1.value);
    const b = Number(f2.value);
    switch (kind.value) {
      case 'two-tone':
        return { kind: 'two-tone', frequenciesHz: [b, a] };
      case 'multitone':
        return { kind: 'multitone', frequenciesHz: logTones(engine.network.band, MULTI_TONES) };
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

  /** Shows the figures and inputs that fit the source. */
  function showSource(s: SourceSpec): void {
    if (kind.value !== s.kind) kind.value = s.kind;
    if (s.kind === 'tone') f1.value = String(s.frequencyHz);
    f1Row.hidden = s.kind !== 'tone' && s.kind !== 'two-tone';
    f2Row.hidden = s.kind !== 'two-tone';
    oneBox.hidden = s.kind === 'two-tone' || s.kind === 'multitone';
    twoBox.hidden = s.kind !== 'two-tone';
    multiBox.hidden = s.kind !== 'multitone';
    magnify.disabled = s.kind !== 'tone';
  }
  showSource(engine.source);
  engine.onSource(showSource);

  const report = (e: unknown) => status.fail(e instanceof Error ? e.message : String(e));
  const reportIn = (line: typeof status) => (e: unknown) =>
    line.fail(e instanceof Error ? e.message : String(e));
  const ok = (text: string) => status.say(text);

  startBtn.addEventListener('click', async () => {
    try {
      if (engine.running) {
        await engine.stop();
      } else {
        engine.source = source();
        status.busy('Starting audio…');
        startBtn.disabled = true;
        await engine.start();
      }
    } catch (e) {
      report(e);
    } finally {
      startBtn.disabled = false;
    }
  });
  engine.onChange((r) => {
    startBtn.textContent = r ? 'Stop audio' : 'Start audio';
    startBtn.className = r ? 'stop' : '';
    if (r)
      ok(
        `Running at ${r.ctx.sampleRate} Hz, ${engine.network.kind === 'fir' ? 'Hilbert FIR' : 'all-pass'} network, ${engine.network.band[0]}–${engine.network.band[1]} Hz.`,
      );
    else {
      ok('Stopped.');
      scope.clear();
      // The monitor reads a running generator only: no figure from the last run stays up.
      for (const f of [...Object.values(figs), ...Object.values(two), ...Object.values(multi)]) f.clear();
      spec.clear('Audio stopped: start it to see the spectrum.');
      delete twoBox.dataset['reading'];
      delete multiBox.dataset['reading'];
    }
  });
  engine.onCorrection((c) => {
    corrControls.hidden = !c;
    corrOn.disabled = !c;
    corrRemove.disabled = !c;
    corrOn.checked = c?.on ?? false;
    corrText.textContent = c
      ? `${c.note}. ${c.on ? 'Running.' : 'Bypassed.'}`
      : 'None. A multi-tone calibration (panel 3) makes one for the whole band.';
  });
  corrOn.addEventListener('change', () => {
    const c = engine.correction;
    if (c) engine.setCorrection({ ...c, on: corrOn.checked }).catch(reportIn(corrStatus));
  });
  corrRemove.addEventListener('click', () => engine.setCorrection(null).catch(reportIn(corrStatus)));
  outputBox.addEventListener('change', () => engine.setOutput(outputBox.checked));
  for (const c of [kind, f1, f2]) {
    c.addEventListener('change', () => {
      srcStatus.clear();
      engine.setSource(source()).catch(reportIn(srcStatus));
    });
  }
  level.addEventListener('input', () => {
    levelOut.textContent = `${level.value} dBFS`;
    engine.setLevel(Number(level.value));
  });
  sideband.addEventListener('change', () =>
    engine.setSideband(sideband.value as 'upper' | 'lower').catch(reportIn(srcStatus)),
  );

  function resetTrims(): void {
    engine.setTrims(ZERO_TRIMS);
    panel.showTrims(ZERO_TRIMS);
  }

  function showTwoTone(r: TwoToneReading): void {
    const [a, b] = r.tones;
    two.t1.set(`${fmt(a.levelDbfs)} dBFS · ${fmt(Math.abs(a.frequencyHz), 0)} Hz`);
    two.t2.set(`${fmt(b.levelDbfs)} dBFS · ${fmt(Math.abs(b.frequencyHz), 0)} Hz`);
    two.pep.set(`${fmt(r.pepDbfs)} dBFS`);
    for (const [order, fig] of [
      [3, two.imd3],
      [5, two.imd5],
    ] as const) {
      const ps = r.products.filter((p) => p.order === order);
      if (ps.length === 0) {
        fig.set('—');
        continue;
      }
      const worst = ps.reduce((w, p) => (p.dbcTone > w.dbcTone ? p : w));
      fig.set(
        `${bound(worst.dbcTone, worst.reading.atFloor, 'dBc')}\n${bound(worst.dbPep, worst.reading.atFloor, 'dB PEP')}`,
      );
    }
    twoBox.dataset['reading'] = JSON.stringify({
      tonesDbfs: [a.levelDbfs, b.levelDbfs],
      pepDbfs: r.pepDbfs,
      imd3Dbc: r.imd3Dbc,
      imd3DbPep: r.imd3DbPep,
      imd5Dbc: r.imd5Dbc,
      imd5DbPep: r.imd5DbPep,
      atFloor: r.products.map((p) => p.reading.atFloor),
    });
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
      const src = engine.source;
      scope.draw(i.subarray(0, 2048), q.subarray(0, 2048), src.kind === 'tone' ? Number(magnify.value) : 1);
      const s = computeSpectrum({ i, q }, fs, { frameLength: PLOT_FRAME });
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
      figs.peak.set(
        `${fmt(20 * Math.log10(Math.max(peak, 1e-9)))} dBFS`,
        peak > 1 ? 'bad' : '',
        peak > 1 ? 'clipping: lower the level' : undefined,
      );
      const sign = engine.sideband === 'upper' ? 1 : -1;
      if (src.kind === 'tone') {
        const m = measureSideband(i, q, fs, { toneHz: src.frequencyHz, sideband: engine.sideband });
        const toneAt = `tone at ${fmt(m.wanted.levelDbfs)} dBFS`;
        figs.wanted.set(`${fmt(m.wanted.levelDbfs)} dBFS`, '', `${fmt(src.frequencyHz, 0)} Hz`);
        figs.sideband.set(`${fmt(m.sidebandSuppressionDb)} dB`, '', toneAt);
        figs.carrier.set(`${fmt(m.carrierSuppressionDb)} dB`, '', toneAt);
      } else if (src.kind === 'two-tone') {
        const [a, b] = src.frequenciesHz;
        showTwoTone(measureTwoTone({ i, q }, fs, [sign * a, sign * b], { maxOrder: 5 }));
      } else if (src.kind === 'multitone') {
        const f = src.frequenciesHz;
        const t = measureTones({ i, q }, fs, [...f.map((x) => sign * x), ...f.map((x) => -sign * x)], {});
        const sup = f.map((_, k) => t[k]!.levelDbfs - t[f.length + k]!.levelDbfs);
        const at = (k: number) => `${fmt(sup[k]!)} dB at ${f[k]} Hz`;
        const worst = sup.indexOf(Math.min(...sup));
        const best = sup.indexOf(Math.max(...sup));
        multi.tones.set(`${fmt(t[0]!.levelDbfs)} dBFS × ${f.length}`);
        multi.worst.set(at(worst));
        multi.best.set(at(best));
        multiBox.dataset['reading'] = JSON.stringify({ tonesHz: f, suppressionDb: sup });
      } else {
        figs.wanted.set('tone sources only');
        figs.sideband.clear();
        figs.carrier.clear();
      }
    } catch {
      // A monitor frame that cannot be read is skipped.
    } finally {
      busy = false;
    }
  }, 400);

  const panel: GeneratorPanel = {
    el,
    state: () => ({
      source: kind.value,
      toneHz: Number(f1.value),
      secondToneHz: Number(f2.value),
      levelDb: Number(level.value),
      sideband: sideband.value as 'upper' | 'lower',
      output: outputBox.checked,
      magnify: magnify.value,
    }),
    async restore(st) {
      if (st.source !== undefined && [...kind.options].some((o) => o.value === st.source))
        kind.value = st.source;
      if (st.toneHz !== undefined) f1.value = String(st.toneHz);
      if (st.secondToneHz !== undefined) f2.value = String(st.secondToneHz);
      if (st.magnify !== undefined) magnify.value = st.magnify;
      if (st.levelDb !== undefined) {
        level.value = String(st.levelDb);
        levelOut.textContent = `${level.value} dBFS`;
        engine.setLevel(Number(level.value));
      }
      if (st.output !== undefined) {
        outputBox.checked = st.output;
        engine.setOutput(st.output);
      }
      if (st.sideband !== undefined) {
        sideband.value = st.sideband;
        await engine.setSideband(st.sideband);
      }
      // A microphone source asks for permission: a loaded session never starts one by itself.
      if (kind.value === 'input') kind.value = 'tone';
      await engine.setSource(source());
    },
    showTrims(t) {
      engine.trims = { ...t };
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
