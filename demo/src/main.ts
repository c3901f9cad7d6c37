/**
 * The orthotone demo page: design a network, generate I/Q from it, calibrate trims. Invented data
 * only: the virtual benches are tolerance sets of our own (simulate/ presets), not any real unit.
 */
import { TRANSMIT_CAUTIONS, type Trims } from 'orthotone';
import { calibrationPanel } from './calibration-panel.js';
import { designPanel } from './design-panel.js';
import { h } from './dom.js';
import { Engine } from './engine.js';
import { generatorPanel } from './generator-panel.js';
import './style.css';

const cautions = document.getElementById('cautions')!;
cautions.append(
  h('strong', {}, '⚠ Before anything reaches a transmitter'),
  h('ul', {}, ...TRANSMIT_CAUTIONS.map((c) => h('li', {}, c))),
);

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
app.append(design.el, gen.el, cal.el);

const panels: Record<string, HTMLElement> = { design: design.el, generate: gen.el, calibrate: cal.el };
function show(name: string): void {
  const key = name in panels ? name : 'design';
  for (const [k, el] of Object.entries(panels)) el.hidden = k !== key;
  for (const a of document.querySelectorAll<HTMLAnchorElement>('.tabs a')) {
    a.classList.toggle('active', a.dataset['panel'] === key);
  }
  if (location.hash !== `#${key}`) history.replaceState(null, '', `#${key}`);
}
window.addEventListener('hashchange', () => show(location.hash.slice(1)));
show(location.hash.slice(1));
