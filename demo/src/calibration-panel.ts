/** Panel 3: calibration against the virtual exciter in the page, or live through the sound card. */
import type { Trims } from '../../src/core/trims.js';
import {
  audioReader,
  type CalibrationRun,
  receiverCapture,
  runCalibration,
  VIRTUAL_BENCHES,
  virtualDevice,
  virtualReader,
} from './bench.js';
import { field, figure, fmt, h, numberInput, select } from './dom.js';
import type { Engine } from './engine.js';
import { linePlot } from './plot.js';

export function calibrationPanel(engine: Engine, onTrims: (t: Trims) => void): { el: HTMLElement } {
  const mode = select(
    [
      ['virtual', 'Virtual exciter in this page'],
      ['live', 'Live: my exciter and receiver via the sound card'],
    ],
    'virtual',
    { id: 'cal-mode' },
  );
  const bench = select(VIRTUAL_BENCHES, 'homebrew-bench', { id: 'cal-bench' });
  const seed = numberInput(711, { min: 0, step: 1, id: 'cal-seed' });
  const tone = numberInput(1800, { min: 50, step: 10, id: 'cal-tone' });
  const budget = numberInput(10, { min: 4, max: 60, step: 1, id: 'cal-budget' });
  const offset = numberInput(1500, { min: 0, step: 10 });
  const rxSide = select(
    [
      ['upper', 'Receiver on upper sideband, tuned below the carrier'],
      ['lower', 'Receiver on lower sideband, tuned above the carrier'],
    ],
    'upper',
  );
  const settle = numberInput(400, { min: 20, step: 10 });
  const liveBox = h(
    'div',
    { hidden: true },
    field(
      'Carrier lands at, Hz (receiver audio)',
      offset,
      'tune so carrier, wanted and unwanted are all audible',
    ),
    field('Receiver mode', rxSide),
    field('Settle between readings, ms', settle, 'sound card round trip + receiver AGC'),
    h(
      'p',
      { class: 'hint' },
      'Feed the receiver audio into the sound card input. The page asks for the input when you start.',
    ),
  );
  const virtBox = h(
    'div',
    {},
    field('Bench', bench),
    field('Unit (seed)', seed, 'each seed draws a different unit from the tolerances'),
  );
  const runBtn = h('button', { id: 'cal-run' }, 'Calibrate sideband and carrier');
  const stopBtn = h('button', { class: 'stop', disabled: true }, 'Stop');
  const status = h('div', { class: 'status', id: 'cal-status' });
  const figs = {
    sbStart: figure('Sideband before'),
    sbEnd: figure('Sideband after'),
    crStart: figure('Carrier before'),
    crEnd: figure('Carrier after'),
    readings: figure('Readings'),
  };
  const trimsOut = h('pre', { class: 'hint', id: 'cal-trims' });
  const tableBody = h('tbody');
  const plots = h('div');
  const el = h(
    'section',
    { class: 'panel', id: 'panel-calibrate' },
    h('h2', {}, 'Null the carrier and the unwanted sideband'),
    h(
      'p',
      { class: 'lead' },
      'Each reading sets the trims, waits for the path to settle, listens, and reads how far the unwanted ',
      'sideband and the carrier lie below the wanted tone. The seeker fits the shape of the null from a ',
      'handful of readings and jumps to its bottom, instead of turning knobs one at a time.',
    ),
    h(
      'div',
      { class: 'grid' },
      h(
        'div',
        {},
        h('fieldset', {}, h('legend', {}, 'Bench'), field('Readings from', mode), virtBox, liveBox),
        h(
          'fieldset',
          {},
          h('legend', {}, 'Run'),
          field('Test tone, Hz', tone),
          field('Most readings', budget),
          runBtn,
          stopBtn,
        ),
        status,
      ),
      h(
        'div',
        {},
        h('div', { class: 'figures' }, ...Object.values(figs).map((f) => f.el)),
        plots,
        h('h3', {}, 'Trims found'),
        trimsOut,
        h('h3', {}, 'Readings'),
        h(
          'table',
          {},
          h(
            'thead',
            {},
            h(
              'tr',
              {},
              h('th', {}, '#'),
              h('th', {}, 'Q gain dB'),
              h('th', {}, 'Phase °'),
              h('th', {}, 'DC I'),
              h('th', {}, 'DC Q'),
              h('th', {}, 'Sideband dBc'),
              h('th', {}, 'Carrier dBc'),
            ),
          ),
          tableBody,
        ),
      ),
    ),
  );
  const conv = linePlot(plots, {
    title: 'Convergence',
    xLabel: 'reading',
    yLabel: 'dBc',
    series: [
      { label: 'sideband read', color: '#c8452b', points: true },
      { label: 'carrier read', color: '#6b4fbb', points: true },
      { label: 'sideband lowest so far', color: '#c8452b', dash: [5, 4] },
      { label: 'carrier lowest so far', color: '#6b4fbb', dash: [5, 4] },
    ],
  });

  mode.addEventListener('change', () => {
    liveBox.hidden = mode.value !== 'live';
    virtBox.hidden = mode.value === 'live';
  });

  let abort: AbortController | null = null;
  stopBtn.addEventListener('click', () => abort?.abort());
  runBtn.addEventListener('click', () => void run());

  function say(text: string, error = false): void {
    status.className = error ? 'status error' : 'status';
    status.textContent = text;
  }

  async function run(): Promise<CalibrationRun | undefined> {
    runBtn.disabled = true;
    stopBtn.disabled = false;
    abort = new AbortController();
    tableBody.replaceChildren();
    const xs: number[] = [];
    const s: number[] = [];
    const c: number[] = [];
    const sb: number[] = [];
    const cb: number[] = [];
    conv.setData([], [[], [], [], []]);
    let stopLive: (() => void) | null = null;
    try {
      const toneHz = Number(tone.value);
      engine.source = { kind: 'tone', frequencyHz: toneHz };
      const running = engine.running ?? (await engine.start());
      await running.node.setSource(engine.source);
      const fs = running.ctx.sampleRate;
      let capture = running.iq;
      let read: Parameters<typeof runCalibration>[0]['read'];
      let settleSeconds = 0.05;
      if (mode.value === 'live') {
        const rx = await receiverCapture(running);
        stopLive = rx.stop;
        capture = rx.capture;
        settleSeconds = Number(settle.value) / 1000;
        read = audioReader({
          toneHz,
          sideband: engine.sideband,
          offsetHz: Number(offset.value),
          receiverSideband: rxSide.value as 'upper' | 'lower',
        });
        say('Reading the receiver…');
      } else {
        const model = virtualDevice(bench.value, Number(seed.value));
        read = virtualReader(model, {
          sampleRate: fs,
          seed: Number(seed.value),
          toneHz,
          sideband: engine.sideband,
        });
        say('Reading the virtual exciter…');
      }
      const r = await runCalibration({
        running,
        capture,
        read,
        maxReadings: Number(budget.value),
        noiseDb: 0.3,
        settleSeconds,
        captureSeconds: 0.12,
        signal: abort.signal,
        onReading(step) {
          xs.push(step.index);
          s.push(step.levelDb);
          c.push(step.carrierDb);
          sb.push(Math.min(...s.filter(Number.isFinite)));
          cb.push(Math.min(...c.filter(Number.isFinite)));
          conv.setData(xs, [s, c, sb, cb]);
          const t = step.trims;
          tableBody.append(
            h(
              'tr',
              {},
              h('td', {}, String(step.index)),
              h('td', {}, fmt(t.gainDb, 4)),
              h('td', {}, fmt(t.phaseDeg, 3)),
              h('td', {}, fmt(t.dcI, 5)),
              h('td', {}, fmt(t.dcQ, 5)),
              h('td', {}, fmt(step.levelDb)),
              h('td', {}, fmt(step.carrierDb)),
            ),
          );
          onTrims(t);
        },
      });
      const t = r.result.trims;
      onTrims(t);
      figs.sbStart.set(`${fmt(-r.start.sidebandDb)} dB`);
      figs.crStart.set(`${fmt(-r.start.carrierDb)} dB`);
      figs.sbEnd.set(`${fmt(-r.verified.sidebandDb)} dB`, -r.verified.sidebandDb >= 60 ? 'good' : 'bad');
      figs.crEnd.set(`${fmt(-r.verified.carrierDb)} dB`, -r.verified.carrierDb >= 60 ? 'good' : 'bad');
      figs.readings.set(String(r.result.readings));
      trimsOut.textContent = `gainDb ${fmt(t.gainDb, 4)}   phaseDeg ${fmt(t.phaseDeg, 4)}   dcI ${fmt(t.dcI, 6)}   dcQ ${fmt(t.dcQ, 6)}\n(applied to the generator; see panel 2)`;
      el.dataset['result'] = JSON.stringify({
        readings: r.result.readings,
        sidebandDb: r.verified.sidebandDb,
        carrierDb: r.verified.carrierDb,
      });
      say(
        `Done after ${r.result.readings} readings: sideband ${fmt(-r.verified.sidebandDb)} dB and carrier ${fmt(-r.verified.carrierDb)} dB below the wanted tone (fresh reading).`,
      );
      return r;
    } catch (e) {
      say(e instanceof Error ? e.message : String(e), true);
      return undefined;
    } finally {
      stopLive?.();
      runBtn.disabled = false;
      stopBtn.disabled = true;
    }
  }

  return { el };
}
