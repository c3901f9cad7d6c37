/**
 * Panel 3: calibration against the virtual exciter in the page, or live through the sound card:
 * gain, phase and DC trims at one tone, or a correction filter across the band (multi-tone).
 */

import { createProfile, type Diagnosis, profileToCHeader, profileToJson, type Trims } from 'orthotone';
import {
  audioReader,
  type CalibrationRun,
  logTones,
  type MultitoneRun,
  offsetProblem,
  readReceiverAudio,
  receiverCapture,
  runCalibration,
  runMultitoneCalibration,
  VIRTUAL_BENCHES,
  virtualCaptureSeconds,
  virtualDevice,
  virtualReader,
} from './bench.js';
import { download, type Figure, field, figure, fmt, h, numberInput, select, statusLine } from './dom.js';
import { DEFAULT_TONE_HZ, type Engine } from './engine.js';
import { linePlot } from './plot.js';

/** Tones of the multi-tone calibration, and of the denser check of the band. */
const CAL_TONES = 5;
/** Nine tones over a decade lie a third of an octave apart: 100 Hz at 300 Hz, resolved by 4096-sample frames. */
const CHECK_TONES = 9;
/**
 * The analyzer floor the virtual bench's figures are compared with, dBc: the command line's default
 * `--floor` for a simulated analyzer. The virtual exciter's own figures are the model's true levels;
 * a real analyzer reads no deeper than its floor.
 */
const ANALYZER_FLOOR_DBC = -70;

export function calibrationPanel(engine: Engine, onTrims: (t: Trims) => void): { el: HTMLElement } {
  const mode = select(
    [
      ['virtual', 'Virtual exciter (in this page)'],
      ['live', 'Live: my exciter'],
    ],
    'virtual',
    { id: 'cal-mode', 'aria-describedby': 'cal-mode-hint' },
  );
  const kind = select(
    [
      ['single', 'One tone (trims)'],
      ['multi', 'Across the band (filter)'],
    ],
    'single',
    { id: 'cal-kind' },
  );
  const bench = select(
    VIRTUAL_BENCHES.map(([v, short]) => [v, short]),
    'homebrew-bench',
    { id: 'cal-bench' },
  );
  const benchHint = h('div', { class: 'hint' });
  const showBench = () => {
    benchHint.textContent = VIRTUAL_BENCHES.find(([v]) => v === bench.value)?.[2] ?? '';
  };
  bench.addEventListener('change', showBench);
  showBench();
  const seed = numberInput(711, { min: 0, step: 1, id: 'cal-seed' });
  // The command line's default test tone (`calibrate --tone`, 1000 Hz).
  const tone = numberInput(DEFAULT_TONE_HZ, { min: 50, step: 10, id: 'cal-tone' });
  const budget = numberInput(10, { min: 4, max: 60, step: 1, id: 'cal-budget' });
  const taps = select(
    [
      ['15', '15 taps'],
      ['31', '31 taps'],
      ['63', '63 taps'],
    ],
    '31',
    { id: 'cal-taps' },
  );
  const offset = numberInput(1500, { min: 0, step: 10, id: 'cal-offset' });
  const rxSide = select(
    [
      ['upper', 'Upper sideband, tuned below'],
      ['lower', 'Lower sideband, tuned above'],
    ],
    'upper',
    { id: 'cal-rxside' },
  );
  const settle = numberInput(400, { min: 20, step: 10, id: 'cal-settle' });
  // Live guards: how far each trim may move from where it starts, and the weakest usable tone.
  const rangeGain = numberInput(1, { min: 0.01, max: 6, step: 0.1, id: 'cal-range-gain' });
  const rangePhase = numberInput(5, { min: 0.01, max: 45, step: 0.5, id: 'cal-range-phase' });
  const rangeDc = numberInput(0.05, { min: 0.0001, max: 1, step: 0.01, id: 'cal-range-dc' });
  const minWanted = numberInput(-60, { min: -120, max: 0, step: 1, id: 'cal-min-wanted' });
  const readBtn = h('button', { class: 'secondary', id: 'cal-read' }, 'Read the receiver once');
  const readStatus = statusLine('cal-read-status');
  const liveBox = h(
    'div',
    { hidden: true },
    field(
      'Carrier lands at, Hz (receiver audio)',
      offset,
      'tune so carrier, wanted and unwanted are all audible',
    ),
    field('Receiver mode', rxSide, 'relative to the carrier'),
    field('Settle between readings, ms', settle, 'sound card round trip + receiver AGC'),
    field('Gain may move by, dB', rangeGain, 'from where it starts; every setting stays inside'),
    field('Phase may move by, °', rangePhase, 'from where it starts'),
    field('DC may move by, full scale', rangeDc, 'from where it starts'),
    field(
      'Stop if the wanted tone is below, dBFS',
      minWanted,
      'no receiver signal: stop, do not drive the trims',
    ),
    h(
      'p',
      { class: 'hint' },
      'Feed the receiver audio into the sound card input; the page asks for the input when you start. ',
      'A speech receiver passes about 300–2700 Hz: with the carrier at 1500 Hz use a 700 Hz tone ',
      '(wanted and unwanted at 800 and 2200 Hz). Check the hookup with one reading first.',
    ),
    readBtn,
    readStatus.el,
  );
  const virtBox = h(
    'div',
    {},
    field('Bench', bench),
    benchHint,
    field('Unit number', seed, 'each number draws another unit within the bench’s tolerances'),
  );
  const toneRow = field('Test tone, Hz', tone);
  const multiBox = h(
    'div',
    { hidden: true },
    field('Correction filter length', taps, 'longer follows the imbalance more closely'),
    h(
      'p',
      { class: 'hint' },
      `${CAL_TONES} tones across the network's band play together; each reading moves gain and phase and `,
      'reads every tone’s unwanted sideband. The per-tone nulls become a short filter pair on Q.',
    ),
  );
  const runBtn = h('button', { id: 'cal-run' }, 'Calibrate');
  const stopBtn = h('button', { class: 'stop', disabled: true }, 'Stop');
  const status = statusLine('cal-status');
  const notes = h('ul', { class: 'notes', id: 'cal-notes' });
  const saveBox = h(
    'div',
    { hidden: true, class: 'save' },
    h('div', { class: 'hint' }, 'Save the result (trims, filter, network):'),
    h('button', { class: 'secondary', onclick: () => save('json') }, 'Profile (JSON)'),
    h('button', { class: 'secondary', onclick: () => save('c') }, 'C header'),
  );

  // Live: one reading of the receiver.
  const rxFigs = {
    sideband: figure('Sideband now', 'below the tone'),
    carrier: figure('Carrier now', 'below the tone'),
    wanted: figure('Wanted tone'),
    tuning: figure('Tuning error'),
  };
  const rxBox = h(
    'div',
    { hidden: true, id: 'cal-rx' },
    h('h3', {}, 'Receiver reading'),
    h('div', { class: 'figures' }, ...Object.values(rxFigs).map((f) => f.el)),
  );

  // One tone: trims.
  const figs = {
    sbStart: figure('Sideband before', 'below the tone'),
    sbEnd: figure('Sideband after', 'below the tone'),
    crStart: figure('Carrier before', 'below the tone'),
    crEnd: figure('Carrier after', 'below the tone'),
    readings: figure('Readings'),
  };
  const trimsOut = h('pre', { class: 'hint', id: 'cal-trims' });
  // What the figures are: the model's true levels (virtual) or what the receiver read (live).
  const figNote = h('p', { class: 'hint', id: 'cal-fig-note' });
  const tableHead = h('thead');
  const tableBody = h('tbody');
  const plots = h('div');
  const singleBox = h(
    'div',
    {},
    h('div', { class: 'figures' }, ...Object.values(figs).map((f) => f.el)),
    figNote,
    plots,
    h('h3', {}, 'Trims found'),
    trimsOut,
  );

  // Across the band: correction filter.
  const mfigs = {
    before: figure('Worst in the band, before'),
    single: figure('Best single trims', 'worst in the band'),
    after: figure('With the correction filter', 'worst in the band'),
    readings: figure('Readings'),
  };
  const mplots = h('div');
  const multiOut = h(
    'div',
    { hidden: true, id: 'cal-multi' },
    h('div', { class: 'figures' }, ...Object.values(mfigs).map((f) => f.el)),
    h(
      'p',
      { class: 'hint' },
      'Model figures: the virtual exciter’s true levels. A real analyzer reads no deeper than its floor ',
      `(${-ANALYZER_FLOOR_DBC} dB below the tone for a ${ANALYZER_FLOOR_DBC} dBc floor).`,
    ),
    mplots,
  );

  const placeholder = h(
    'div',
    { class: 'placeholder' },
    h('h3', {}, 'How it works'),
    h(
      'ol',
      {},
      h(
        'li',
        {},
        'Pick where readings come from: the virtual exciter needs nothing; live needs your exciter on the sound card output and a receiver on its input.',
      ),
      h('li', {}, 'Press Calibrate. Each reading appears here with the trims it was taken at.'),
      h('li', {}, 'The trims found go to the generator (panel 2); save them as a profile or a C header.'),
    ),
  );
  const el = h(
    'section',
    { class: 'panel', id: 'panel-calibrate', 'aria-labelledby': 'cal-title' },
    h('h2', { id: 'cal-title' }, 'Null the carrier and the unwanted sideband'),
    h(
      'p',
      { class: 'lead' },
      'Each reading sets the trims, lets the sound settle and reads how far the unwanted sideband and the ',
      'carrier lie below the wanted tone; from a handful of readings the page works out where the null is.',
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
          h('legend', {}, 'Run'),
          field('What to calibrate', kind),
          h('div', { class: 'row' }, toneRow, field('Most readings', budget)),
          multiBox,
          runBtn,
          stopBtn,
          status.el,
          notes,
          saveBox,
        ),
        h(
          'fieldset',
          {},
          h('legend', {}, 'Bench'),
          field('Readings from', mode),
          h(
            'small',
            { class: 'hint', id: 'cal-mode-hint' },
            'live: through the sound card and your receiver',
          ),
          virtBox,
          liveBox,
        ),
      ),
      h(
        'div',
        {},
        rxBox,
        placeholder,
        h(
          'div',
          { hidden: true, id: 'cal-results' },
          singleBox,
          multiOut,
          h('h3', {}, 'Readings'),
          h(
            'table',
            { id: 'cal-table' },
            h('caption', { class: 'hint' }, 'Each reading: the trims it was taken at and the levels read'),
            tableHead,
            tableBody,
          ),
        ),
      ),
    ),
  );
  const conv = linePlot(plots, {
    title: 'Readings: sideband and carrier below the wanted tone',
    xLabel: 'reading',
    xUnit: '',
    integerX: true,
    yLabel: 'dBc',
    series: [
      { label: 'sideband read', color: '#c8452b', points: true },
      { label: 'carrier read', color: '#6b4fbb', points: true },
      { label: 'sideband lowest so far', color: '#c8452b', dash: [5, 4] },
      { label: 'carrier lowest so far', color: '#6b4fbb', dash: [5, 4] },
    ],
  });
  let bandView: [number, number] = [270, 3300];
  const band = linePlot(mplots, {
    title: 'Opposite-sideband suppression across the band (read through the virtual exciter)',
    xLabel: 'Hz',
    yLabel: 'dB',
    logX: true,
    xRange: () => bandView,
    series: [
      { label: 'before', color: '#8a96a0', points: true },
      { label: 'best single trims', color: '#6b4fbb', dash: [5, 4], points: true },
      { label: 'with the correction filter', color: '#0f7c7a', points: true },
    ],
  });

  const headRow = (...cells: string[]) => h('tr', {}, ...cells.map((c) => h('th', {}, c)));
  function showKind(): void {
    const multi = kind.value === 'multi';
    if (multi && mode.value === 'live') {
      mode.value = 'virtual';
      showMode();
    }
    for (const o of mode.options) if (o.value === 'live') o.disabled = multi;
    toneRow.hidden = multi;
    multiBox.hidden = !multi;
    singleBox.hidden = multi;
    multiOut.hidden = !multi;
    runBtn.textContent = multi ? 'Calibrate the band' : 'Calibrate';
    budget.value = multi ? '24' : '10';
    if (multi && bench.value === 'homebrew-bench') bench.value = 'skew-bench';
    showBench();
    tableHead.replaceChildren(
      multi
        ? headRow('#', 'Q gain dB', 'Phase °', 'Worst tone dBc', 'Best tone dBc')
        : headRow('#', 'Q gain dB', 'Phase °', 'DC I', 'DC Q', 'Sideband dBc', 'Carrier dBc'),
    );
    tableBody.replaceChildren();
  }
  function showMode(): void {
    const live = mode.value === 'live';
    liveBox.hidden = !live;
    virtBox.hidden = live;
    if (live && offsetProblem(Number(tone.value), Number(offset.value), engine.network.sampleRate)) {
      tone.value = '700';
    }
  }
  mode.addEventListener('change', showMode);
  kind.addEventListener('change', showKind);
  showKind();

  let abort: AbortController | null = null;
  let last: {
    trims: Trims;
    toneHz: number;
    tonesHz: number[] | null;
    results: Record<string, number>;
  } | null = null;
  stopBtn.addEventListener('click', () => abort?.abort());
  runBtn.addEventListener('click', () => void (kind.value === 'multi' ? runMulti() : run()));
  readBtn.addEventListener('click', () => void readOnce());

  function showResults(): void {
    placeholder.hidden = true;
    document.getElementById('cal-results')!.hidden = false;
  }
  function say(text: string, error = false): void {
    if (error) status.fail(text);
    else status.say(text);
  }
  function showNotes(list: Diagnosis[], extra: string | null = null): void {
    notes.replaceChildren(...list.map((d) => h('li', {}, d.message)), ...(extra ? [h('li', {}, extra)] : []));
  }
  /** A live run whose readings did not move with the trims: the loop is open somewhere. */
  function stuckNote(sb: number[], cr: number[]): string | null {
    const spread = (x: number[]) => Math.max(...x) - Math.min(...x);
    if (sb.length < 4 || spread(sb) > 1 || spread(cr) > 1) return null;
    return `The readings hardly changed while the trims moved (sideband within ${fmt(spread(sb), 2)} dB, carrier within ${fmt(spread(cr), 2)} dB): check that the generator's I and Q reach the exciter, that the receiver hears this transmission, and that its audio comes back into the input you allowed.`;
  }
  /** A model figure as an analyzer with the CLI's default floor would read it. */
  function readable(db: number): string {
    return db > -ANALYZER_FLOOR_DBC ? `≥ ${-ANALYZER_FLOOR_DBC} dB` : `${fmt(db)} dB`;
  }
  function busy(on: boolean): void {
    runBtn.disabled = on;
    readBtn.disabled = on;
    stopBtn.disabled = !on;
    status.el.setAttribute('aria-busy', String(on));
  }

  /** Live settings, checked; throws an Error naming the fix. */
  function liveOptions(toneHz: number) {
    const problem = offsetProblem(toneHz, Number(offset.value), engine.network.sampleRate);
    if (problem) throw new Error(problem);
    return {
      toneHz,
      sideband: engine.sideband,
      offsetHz: Number(offset.value),
      receiverSideband: rxSide.value as 'upper' | 'lower',
    };
  }

  async function readOnce(): Promise<void> {
    busy(true);
    let stop: (() => void) | null = null;
    try {
      const toneHz = Number(tone.value);
      const opts = liveOptions(toneHz);
      await engine.setSource({ kind: 'tone', frequencyHz: toneHz });
      const running = engine.running ?? (await engine.start());
      const rx = await receiverCapture(running);
      stop = rx.stop;
      readStatus.busy('Reading the receiver…');
      const fs = running.ctx.sampleRate;
      const cap = await rx.capture.capture(Math.round(0.25 * fs), {
        skipFrames: Math.round((Number(settle.value) / 1000) * fs),
      });
      const r = readReceiverAudio(cap.channels[0]!, fs, opts);
      rxBox.hidden = false;
      const rxTone = `tone read at ${fmt(r.wanted.levelDbfs)} dBFS`;
      rxFigs.sideband.set(`${fmt(r.sidebandSuppressionDb)} dB`, '', rxTone);
      rxFigs.carrier.set(`${fmt(r.carrierSuppressionDb)} dB`, '', rxTone);
      rxFigs.wanted.set(
        `${fmt(r.wanted.levelDbfs)} dBFS`,
        r.wanted.levelDbfs < -60 ? 'bad' : '',
        r.wanted.levelDbfs < -60 ? 'too weak: raise the receiver audio' : undefined,
      );
      rxFigs.tuning.set(
        `${fmt(r.frequencyErrorHz)} Hz`,
        Math.abs(r.frequencyErrorHz) > 20 ? 'bad' : '',
        Math.abs(r.frequencyErrorHz) > 20 ? 'retune the receiver' : undefined,
      );
      el.dataset['reading'] = JSON.stringify({
        sidebandDb: r.sidebandSuppressionDb,
        carrierDb: r.carrierSuppressionDb,
        wantedDbfs: r.wanted.levelDbfs,
        frequencyErrorHz: r.frequencyErrorHz,
        sidebandMeasurableDb: r.sidebandMeasurableDb,
      });
      readStatus.say(
        `Receiver: wanted tone ${fmt(r.wanted.levelDbfs)} dBFS at ${fmt(r.wanted.frequencyHz)} Hz; unwanted sideband ${fmt(r.sidebandSuppressionDb)} dB and carrier ${fmt(r.carrierSuppressionDb)} dB below it (this capture could show up to ${fmt(r.sidebandMeasurableDb)} dB).`,
      );
    } catch (e) {
      readStatus.fail(e instanceof Error ? e.message : String(e));
    } finally {
      stop?.();
      busy(false);
    }
  }

  /** The common start of a calibration run: controls busy, results shown, table and notes cleared. */
  function beginRun(): AbortController {
    busy(true);
    showResults();
    const ac = new AbortController();
    abort = ac;
    tableBody.replaceChildren();
    notes.replaceChildren();
    saveBox.hidden = true;
    // Nothing from an earlier run stays up while (or if) this one fails.
    for (const f of [...Object.values(figs), ...Object.values(mfigs)] as Figure[]) f.clear();
    figNote.textContent = '';
    trimsOut.textContent = '';
    status.busy('Starting…');
    return ac;
  }

  async function run(): Promise<CalibrationRun | undefined> {
    const ac = beginRun();
    const xs: number[] = [];
    const s: number[] = [];
    const c: number[] = [];
    const sb: number[] = [];
    const cb: number[] = [];
    conv.setData([], [[], [], [], []]);
    let stopLive: (() => void) | null = null;
    let restore: (() => void) | undefined;
    try {
      const toneHz = Number(tone.value);
      const live = mode.value === 'live';
      const liveOpts = live ? liveOptions(toneHz) : null;
      await engine.setSource({ kind: 'tone', frequencyHz: toneHz });
      const running = engine.running ?? (await engine.start());
      const before = running.node.getTrims();
      restore = () => {
        running.node.setTrims(before, { rampSeconds: 0.01 });
        onTrims(before);
      };
      const fs = running.ctx.sampleRate;
      let capture = running.iq;
      let read: Parameters<typeof runCalibration>[0]['read'];
      let settleSeconds = 0.05;
      let captureSeconds = 0.12;
      if (liveOpts) {
        const rx = await receiverCapture(running);
        stopLive = rx.stop;
        capture = rx.capture;
        settleSeconds = Number(settle.value) / 1000;
        read = audioReader(liveOpts);
        say('Reading the receiver…');
      } else {
        const model = virtualDevice(bench.value, Number(seed.value));
        read = virtualReader(model, {
          sampleRate: fs,
          seed: Number(seed.value),
          toneHz,
          sideband: engine.sideband,
        });
        captureSeconds = virtualCaptureSeconds(model, fs);
        say('Reading the virtual exciter…');
      }
      const r = await runCalibration({
        running,
        capture,
        read,
        maxReadings: Number(budget.value),
        noiseDb: 0.3,
        ...(liveOpts
          ? {
              live: {
                gainDb: Number(rangeGain.value),
                phaseDeg: Number(rangePhase.value),
                dc: Number(rangeDc.value),
                minWantedDbfs: Number(minWanted.value),
              },
            }
          : {}),
        settleSeconds,
        captureSeconds,
        signal: ac.signal,
        onReading(step) {
          xs.push(step.index);
          s.push(step.levelDb);
          c.push(step.carrierDb);
          sb.push(Math.min(...s.filter(Number.isFinite)));
          cb.push(Math.min(...c.filter(Number.isFinite)));
          conv.setData(xs, [s, c, sb, cb]);
          const t = step.trims;
          const row = h(
            'tr',
            { title: `captured ${fmt(step.waitedMs, 0)} ms after the trims were set` },
            h('td', {}, String(step.index)),
            h('td', {}, fmt(t.gainDb, 4)),
            h('td', {}, fmt(t.phaseDeg, 3)),
            h('td', {}, fmt(t.dcI, 5)),
            h('td', {}, fmt(t.dcQ, 5)),
            h('td', {}, fmt(step.levelDb)),
            h('td', {}, fmt(step.carrierDb)),
          );
          row.dataset['step'] = JSON.stringify({
            trims: t,
            sidebandDb: step.levelDb,
            carrierDb: step.carrierDb,
            waitedMs: step.waitedMs,
            applied: running.node.getTrims(),
          });
          tableBody.append(row);
          onTrims(t);
        },
      });
      const t = r.result.trims;
      onTrims(t);
      // Every suppression figure says the tone level it is read against (it moves the carrier figure).
      const toneAt = `tone ${fmt(engine.levelDb)} dBFS`;
      const end = (db: number) =>
        [db >= 60 ? 'good' : 'bad', `${db >= 60 ? '60 dB or more' : 'under 60 dB'}, ${toneAt}`] as const;
      figs.sbStart.set(`${fmt(-r.start.sidebandDb)} dB`, '', toneAt);
      figs.crStart.set(`${fmt(-r.start.carrierDb)} dB`, '', toneAt);
      figs.sbEnd.set(`${fmt(-r.verified.sidebandDb)} dB`, ...end(-r.verified.sidebandDb));
      figs.crEnd.set(`${fmt(-r.verified.carrierDb)} dB`, ...end(-r.verified.carrierDb));
      const kindOfFigures = liveOpts
        ? `Read by your receiver through the sound card, ${toneAt} at ${toneHz} Hz: real readings, no deeper than the receiver's own floor.`
        : `Virtual bench, ${toneAt} at ${toneHz} Hz. True figures of the model; an analyzer with a ${ANALYZER_FLOOR_DBC} dBc floor would read after: sideband ${readable(-r.verified.sidebandDb)}, carrier ${readable(-r.verified.carrierDb)}.`;
      figNote.textContent = kindOfFigures;
      figs.readings.set(String(r.result.readings));
      trimsOut.textContent = `gainDb ${fmt(t.gainDb, 4)}   phaseDeg ${fmt(t.phaseDeg, 4)}   dcI ${fmt(t.dcI, 6)}   dcQ ${fmt(t.dcQ, 6)}\n(applied to the generator; see panel 2)`;
      const found = [...r.result.sideband.diagnosis, ...r.result.carrier.diagnosis];
      showNotes(found, liveOpts ? stuckNote(s, c) : null);
      el.dataset['result'] = JSON.stringify({
        readings: r.result.readings,
        sidebandDb: r.verified.sidebandDb,
        carrierDb: r.verified.carrierDb,
        startSidebandDb: r.start.sidebandDb,
        startCarrierDb: r.start.carrierDb,
        trims: t,
        stopReason: [r.result.sideband.stopReason, r.result.carrier.stopReason],
        diagnosis: found.map((d) => d.code),
        notes: notes.textContent,
      });
      last = {
        trims: t,
        toneHz,
        tonesHz: null,
        results: { sidebandDb: -r.verified.sidebandDb, carrierDb: -r.verified.carrierDb },
      };
      saveBox.hidden = false;
      say(
        `Done after ${r.result.readings} readings: sideband ${fmt(-r.verified.sidebandDb)} dB and carrier ${fmt(-r.verified.carrierDb)} dB below the wanted tone (fresh reading; ${liveOpts ? 'as read' : `model figures, readable ${readable(-r.verified.sidebandDb)} / ${readable(-r.verified.carrierDb)} on a ${ANALYZER_FLOOR_DBC} dBc analyzer`}).`,
      );
      return r;
    } catch (e) {
      restore?.();
      const why = e instanceof Error ? e.message : String(e);
      say(
        `${why}${restore ? ' The trims in force before the run are restored; fix the cause and press Calibrate again.' : ''}`,
        true,
      );
      return undefined;
    } finally {
      stopLive?.();
      busy(false);
    }
  }

  async function runMulti(): Promise<MultitoneRun | undefined> {
    const ac = beginRun();
    band.setData([], [[], [], []]);
    let restore: (() => Promise<void>) | undefined;
    try {
      const net = engine.network;
      const tonesHz = logTones(net.band, CAL_TONES);
      const verifyHz = logTones(net.band, CHECK_TONES);
      bandView = [net.band[0] / 1.1, net.band[1] * 1.1];
      const running = engine.running ?? (await engine.start());
      const before = running.node.getTrims();
      const correctionBefore = engine.correction;
      restore = async () => {
        running.node.setTrims(before, { rampSeconds: 0.01 });
        onTrims(before);
        await engine.setCorrection(correctionBefore);
      };
      const model = virtualDevice(bench.value, Number(seed.value));
      const r = await runMultitoneCalibration({
        running,
        model,
        seed: Number(seed.value),
        tonesHz,
        verifyHz,
        band: [net.band[0], net.band[1]],
        taps: Number(taps.value),
        maxReadings: Number(budget.value),
        noiseDb: 0.3,
        sideband: engine.sideband,
        signal: ac.signal,
        onStage: (text) => say(text),
        onReading(step) {
          tableBody.append(
            h(
              'tr',
              {},
              h('td', {}, String(step.index)),
              h('td', {}, fmt(step.trims.gainDb, 4)),
              h('td', {}, fmt(step.trims.phaseDeg, 3)),
              h('td', {}, fmt(Math.max(...step.levelsDb))),
              h('td', {}, fmt(Math.min(...step.levelsDb))),
            ),
          );
          onTrims(step.trims);
        },
      });
      const worst = (x: number[]) => Math.min(...x);
      mfigs.before.set(`${fmt(worst(r.before))} dB`);
      mfigs.single.set(`${fmt(worst(r.single))} dB`);
      mfigs.after.set(
        `${fmt(worst(r.after))} dB`,
        worst(r.after) > worst(r.single) ? 'good' : 'bad',
        worst(r.after) > worst(r.single) ? 'beats single trims' : 'no better than single trims',
      );
      mfigs.readings.set(String(r.result.readings));
      band.setData(r.verifyHz, [r.before, r.single, r.after]);
      onTrims(r.result.trims);
      const tapCount = r.result.correction.qFromQ.length;
      await engine.setCorrection({
        correction: r.result.correction,
        note: `${tapCount} taps, from a multi-tone calibration at ${tonesHz.join(', ')} Hz`,
        on: true,
      });
      engine.noteSource({ kind: 'multitone', frequenciesHz: verifyHz });
      el.dataset['multitone'] = JSON.stringify({
        readings: r.result.readings,
        verifyHz: r.verifyHz,
        before: r.before,
        single: r.single,
        after: r.after,
        taps: tapCount,
        singleTrims: r.singleTrims,
        tones: r.result.tones,
        stopReason: r.result.stopReason,
      });
      last = {
        trims: r.result.trims,
        toneHz: tonesHz[Math.floor(tonesHz.length / 2)]!,
        tonesHz,
        results: { worstBandDb: worst(r.after) },
      };
      saveBox.hidden = false;
      say(
        `Done after ${r.result.readings} readings: worst suppression over ${net.band[0]}–${net.band[1]} Hz went from ${fmt(worst(r.before))} dB to ${fmt(worst(r.after))} dB with the ${tapCount}-tap correction filter (best single trims: ${fmt(worst(r.single))} dB). The filter now runs in the generator (panel 2).`,
      );
      return r;
    } catch (e) {
      await restore?.().catch(() => {});
      const why = e instanceof Error ? e.message : String(e);
      say(
        `${why}${restore ? ' The trims and correction in force before the run are restored; try again, or a longer budget.' : ''}`,
        true,
      );
      return undefined;
    } finally {
      busy(false);
    }
  }

  function save(what: 'json' | 'c'): void {
    try {
      saveProfile(what);
    } catch (e) {
      say(e instanceof Error ? e.message : String(e), true);
    }
  }

  function saveProfile(what: 'json' | 'c'): void {
    if (!last) return;
    const p = createProfile({
      sampleRate: engine.network.sampleRate,
      toneHz: last.toneHz,
      tonesHz: last.tonesHz,
      sideband: engine.sideband,
      trims: last.trims,
      correction: last.tonesHz ? (engine.correction?.correction ?? null) : null,
      network: engine.network,
      results: { ...last.results, source: mode.value === 'live' ? 'measured' : 'simulated' },
      note:
        mode.value === 'live'
          ? 'live calibration in the orthotone demo'
          : 'virtual exciter in the orthotone demo (invented bench)',
    });
    if (what === 'json') download('orthotone-profile.json', profileToJson(p), 'application/json');
    else download('orthotone-profile.h', profileToCHeader(p), 'text/x-c');
  }

  return { el };
}
