/**
 * The device block of the generator panel: connect the microcontroller that makes the I/Q, through
 * Web Serial (Chromium) or through `orthotone bridge` (any browser), with the library's own
 * DeviceLink. Once connected, every trim the page sets (the generator's sliders, the live
 * calibration's readings) is also set on the device, and the block shows what the device reports
 * it applied. The sound card keeps reading the receiver; the device makes the I/Q.
 */
import {
  type DeviceLink,
  type DeviceTrims,
  openDeviceLink,
  type SerialPortLike,
  type Trims,
  type WebSocketLike,
  webSerialConnector,
  webSocketConnector,
} from 'orthotone';
import { h, statusLine } from './dom.js';
import type { Engine } from './engine.js';

/** What the block needs from the generator panel. */
export interface TrimDisplay {
  showTrims(t: Trims): void;
}

const fmt = (x: number, d: number) => (x >= 0 ? '+' : '') + x.toFixed(d);

/**
 * Builds the device block and wires it to the engine (trims set on the page go to the device too).
 * @throws never
 */
export function devicePanel(engine: Engine, display: TrimDisplay): { el: HTMLElement } {
  const status = statusLine('device-status');
  const info = h('output', { id: 'device-info' }, 'No device connected.');
  const applied = h('output', { id: 'device-trims' }, '');
  const hasSerial = typeof navigator !== 'undefined' && 'serial' in navigator;
  const serialBtn = h('button', { id: 'device-serial', class: 'secondary' }, 'Connect (Web Serial)');
  if (!hasSerial) {
    serialBtn.disabled = true;
    serialBtn.title = 'This browser has no Web Serial: use the bridge (orthotone bridge --device PATH)';
  }
  const url = h('input', {
    id: 'device-bridge-url',
    type: 'text',
    value: 'ws://127.0.0.1:8765',
    size: 24,
    'aria-label': 'Bridge address',
  });
  const bridgeBtn = h('button', { id: 'device-bridge', class: 'secondary' }, 'Connect via bridge');
  const readBtn = h('button', { id: 'device-read', class: 'secondary', disabled: true }, 'Read trims');
  const storeBtn = h('button', { id: 'device-store', class: 'secondary', disabled: true }, 'Store on device');
  const closeBtn = h('button', { id: 'device-close', class: 'secondary', disabled: true }, 'Disconnect');

  let link: DeviceLink | undefined;
  let pending: Partial<DeviceTrims> | undefined;
  let pushing = false;

  const showApplied = (t: DeviceTrims) => {
    applied.textContent = `Device applies: gain ${fmt(t.gainDb, 4)} dB, phase ${fmt(t.phaseDeg, 3)}°, dcI ${fmt(t.dcI, 5)}, dcQ ${fmt(t.dcQ, 5)}`;
    applied.dataset['trims'] = JSON.stringify(t);
  };
  const setConnected = (on: boolean) => {
    readBtn.disabled = storeBtn.disabled = closeBtn.disabled = !on;
    serialBtn.disabled = on || !hasSerial;
    bridgeBtn.disabled = on;
  };

  /** Sends the latest trims to the device, one command at a time (newer settings replace older). */
  const push = (t: Partial<Trims>) => {
    if (!link) return;
    pending = { ...pending, gainDb: t.gainDb, phaseDeg: t.phaseDeg, dcI: t.dcI, dcQ: t.dcQ };
    for (const k of Object.keys(pending) as (keyof DeviceTrims)[])
      if (pending[k] === undefined) delete pending[k];
    if (pushing) return;
    pushing = true;
    (async () => {
      while (pending && link) {
        const want = pending;
        pending = undefined;
        try {
          showApplied(await link.setTrims(want));
        } catch (e) {
          status.fail(e instanceof Error ? e.message : String(e));
        }
      }
      pushing = false;
    })();
  };

  // The page's trims reach the device: the generator's sliders go through engine.setTrims, the
  // live calibration through the running node's setTrims. Both keep doing what they did.
  const wrapped = new WeakSet<object>();
  const wrapNode = (node: NonNullable<Engine['running']>['node'] | undefined) => {
    if (!node || wrapped.has(node)) return;
    wrapped.add(node);
    const original = node.setTrims.bind(node);
    node.setTrims = (t, o) => {
      original(t, o);
      push(t);
    };
  };
  const engineSetTrims = engine.setTrims.bind(engine);
  engine.setTrims = (t) => {
    engineSetTrims(t);
    push(t);
  };
  const engineStart = engine.start.bind(engine);
  engine.start = async () => {
    const r = await engineStart();
    wrapNode(r.node);
    return r;
  };

  async function connect(how: 'serial' | 'bridge'): Promise<void> {
    status.busy(how === 'serial' ? 'Choose the serial port…' : `Connecting to ${url.value}…`);
    try {
      const connector =
        how === 'serial'
          ? webSerialConnector(
              (await (
                navigator as unknown as { serial: { requestPort(): Promise<SerialPortLike> } }
              ).serial.requestPort()) as SerialPortLike,
            )
          : webSocketConnector(url.value, (u) => new WebSocket(u) as unknown as WebSocketLike);
      link = await openDeviceLink(connector, {
        onEvent: (e) => {
          if (e.type === 'reset') status.busy(`Device reset (${e.reason}): reconnecting…`);
          if (e.type === 'reapplied') status.say('Device back: greeted again, trims re-applied.');
          if (e.type === 'lost') {
            status.fail(`${e.error.message}`);
            setConnected(false);
          }
        },
      });
      const i = link.info;
      info.textContent = `${i.name || 'device'}: link protocol ${i.link}, ${i.sampleRate} Hz, ${i.arithmetic}; trims to ${i.resolution.gainDb} dB / ${i.resolution.phaseDeg}° / ${i.resolution.dc} FS`;
      info.dataset['info'] = JSON.stringify({
        link: i.link,
        sampleRate: i.sampleRate,
        arithmetic: i.arithmetic,
      });
      setConnected(true);
      wrapNode(engine.running?.node);
      // The device takes the page's trims; the page shows what the device applied.
      const t = await link.setTrims(engine.trims);
      showApplied(t);
      display.showTrims({ ...engine.trims, ...t });
      status.say(
        `Connected via ${how === 'serial' ? 'Web Serial' : 'the bridge'}: trims set on the page now go to the device.`,
      );
    } catch (e) {
      link = undefined;
      setConnected(false);
      status.fail(e instanceof Error ? e.message : String(e));
    }
  }

  serialBtn.addEventListener('click', () => void connect('serial'));
  bridgeBtn.addEventListener('click', () => void connect('bridge'));
  readBtn.addEventListener('click', async () => {
    if (!link) return;
    try {
      const t = await link.readTrims();
      showApplied(t);
      display.showTrims({ ...engine.trims, ...t });
      status.say('Read the trims back from the device.');
    } catch (e) {
      status.fail(e instanceof Error ? e.message : String(e));
    }
  });
  storeBtn.addEventListener('click', async () => {
    if (!link) return;
    try {
      await link.store();
      status.say('The device keeps these settings over a power cycle.');
    } catch (e) {
      status.fail(e instanceof Error ? e.message : String(e));
    }
  });
  closeBtn.addEventListener('click', async () => {
    const l = link;
    link = undefined;
    setConnected(false);
    await l?.close();
    info.textContent = 'No device connected.';
    status.say('Disconnected; the page keeps its trims.');
  });

  const el = h(
    'div',
    { class: 'device', id: 'device-panel', role: 'group', 'aria-labelledby': 'device-title' },
    h('h3', { id: 'device-title' }, 'Device'),
    h(
      'p',
      { class: 'hint' },
      'Connect the microcontroller that makes the I/Q: the trims set here and by the live calibration are then set on it. Without Web Serial, run ',
      h('code', {}, 'orthotone bridge --device PATH'),
      ' and connect via the bridge.',
    ),
    h('div', { class: 'row' }, serialBtn, url, bridgeBtn),
    h('div', { class: 'row' }, readBtn, storeBtn, closeBtn),
    info,
    applied,
    status.el,
  );
  return { el };
}
