/**
 * The orthotone demo page: design a network, generate I/Q from it, calibrate trims. Invented data
 * only: the virtual benches are tolerance sets of our own (simulate/ presets), not any real unit.
 */
import { TRANSMIT_CAUTIONS, type Trims } from 'orthotone';
import { calibrationPanel } from './calibration-panel.js';
import { designPanel } from './design-panel.js';
import { devicePanel } from './device-panel.js';
import { download, h, pickTextFile, statusLine } from './dom.js';
import { Engine } from './engine.js';
import { generatorPanel } from './generator-panel.js';
import { reportControls } from './report-download.js';
import { controlsState, openDocument, restoreControls, type SessionParts, sessionToJson } from './session.js';
import './style.css';

/** localStorage key: the reader collapsed the cautions to one line. */
const CAUTIONS_KEY = 'orthotone.cautions.collapsed';

/**
 * The cautions sit in the page's flow under the header (never over a status or error line). They
 * start open; after reading them the user may fold them to one line, and the page remembers that.
 */
function cautionsBanner(box: HTMLElement): void {
  const list = h('ul', { id: 'cautions-list' }, ...TRANSMIT_CAUTIONS.map((c) => h('li', {}, c)));
  const toggle = h('button', { class: 'link', id: 'cautions-toggle', 'aria-controls': 'cautions-list' });
  const short = h(
    'span',
    { class: 'cautions-short' },
    'licence · legal limits on emissions · dummy load · RF exposure · local rules come first',
  );
  const stored = (() => {
    try {
      return localStorage.getItem(CAUTIONS_KEY) === '1';
    } catch {
      return false;
    }
  })();
  const set = (collapsed: boolean) => {
    list.hidden = collapsed;
    short.hidden = !collapsed;
    box.classList.toggle('collapsed', collapsed);
    toggle.setAttribute('aria-expanded', String(!collapsed));
    toggle.textContent = collapsed ? 'Show the cautions' : 'I have read them: fold to one line';
    try {
      localStorage.setItem(CAUTIONS_KEY, collapsed ? '1' : '0');
    } catch {
      // Private windows may refuse storage: the banner still folds for this visit.
    }
  };
  toggle.addEventListener('click', () => set(!list.hidden));
  box.append(
    h(
      'div',
      { class: 'cautions-head' },
      h('strong', { id: 'cautions-title' }, '⚠ Before anything reaches a transmitter'),
      short,
      toggle,
    ),
    list,
  );
  set(stored);
}

cautionsBanner(document.getElementById('cautions')!);

const app = document.getElementById('app')!;
const design = designPanel((net) => {
  engine
    .setNetwork(net)
    .then(() => show('generate'))
    .catch((e) => console.warn(e));
});
const engine = new Engine(design.network);
const gen = generatorPanel(engine);
const cal = calibrationPanel(engine, (t: Trims) => gen.showTrims(t));
gen.el.append(devicePanel(engine, gen).el); // issue 11: the device link block
app.append(design.el, gen.el, cal.el);

const panels: Record<string, HTMLElement> = { design: design.el, generate: gen.el, calibrate: cal.el };
function show(name: string): void {
  const key = name in panels ? name : 'design';
  for (const [k, el] of Object.entries(panels)) el.hidden = k !== key;
  for (const a of document.querySelectorAll<HTMLAnchorElement>('.tabs a')) {
    const on = a.dataset['panel'] === key;
    a.classList.toggle('active', on);
    if (on) a.setAttribute('aria-current', 'page');
    else a.removeAttribute('aria-current');
  }
  if (location.hash !== `#${key}`) history.replaceState(null, '', `#${key}`);
}
// Open a network, profile or session; save the whole page as a session. Status beside the buttons.
const parts: SessionParts = {
  engine,
  design,
  gen,
  cal: { state: () => controlsState(cal.el), restore: (s) => restoreControls(cal.el, s) },
};
const fileStatus = statusLine('file-status');
const openBtn = h(
  'button',
  { class: 'secondary', id: 'file-open', 'aria-label': 'Open file… (a network, profile or session, JSON)' },
  'Open file…',
);
const saveBtn = h('button', { class: 'secondary', id: 'file-save' }, 'Save session');
openBtn.title = 'Open a network, calibration profile or session (JSON)';
saveBtn.title = 'Save every setting, the network, trims and correction filter as one JSON file';
openBtn.addEventListener('click', async () => {
  const f = await pickTextFile('.json,application/json');
  if (!f) return;
  fileStatus.busy(`Opening ${f.name}…`);
  try {
    fileStatus.say(await openDocument(f.text, f.name, parts));
  } catch (e) {
    fileStatus.fail(e instanceof Error ? e.message : String(e));
  }
});
saveBtn.addEventListener('click', () => {
  try {
    download('orthotone-session.json', sessionToJson(parts), 'application/json');
    fileStatus.say('Session saved as orthotone-session.json (settings, network, trims, correction).');
  } catch (e) {
    fileStatus.fail(e instanceof Error ? e.message : String(e));
  }
});
document.getElementById('file-bar')!.append(openBtn, saveBtn, fileStatus.el);
// The bench report download sits under the panels (the header stays compact).
app.after(reportControls({ session: () => sessionToJson(parts), calibration: () => controlsState(cal.el) }));

window.addEventListener('hashchange', () => show(location.hash.slice(1)));
show(location.hash.slice(1));
