/**
 * "Download bench report": the page's network and trims (from its session document), run through
 * the virtual unit chosen in the calibration panel at an RF carrier the user gives, checked against
 * 47 CFR §97.307(d) with an output low-pass designed for that carrier, written as the same
 * self-contained HTML report the CLI writes (`orthotone emissions --report`). Invented data only:
 * the unit is one of the page's own virtual benches.
 */
import {
  benchReportHtml,
  checkEmissions,
  designOutputFilter,
  parseNetworkJson,
  simulateProducts,
  TRANSMIT_CAUTIONS,
  validateProfile,
} from 'orthotone';
import { virtualDevice } from './bench.js';
import { download, field, h, numberInput, statusLine } from './dom.js';

/** What the report needs from the page. */
export interface ReportSources {
  /** The page as a session document (JSON text), holding the network, trims and correction. */
  session(): string;
  /** The calibration panel's control values (bench preset `cal-bench`, unit seed `cal-seed`). */
  calibration(): Record<string, string>;
}

/**
 * The carrier input, the button and its status line.
 * @throws never (failures are shown in the status line).
 */
export function reportControls(src: ReportSources): HTMLElement {
  const carrier = numberInput(14.2, { min: 0.2, max: 29.9, step: 0.1, id: 'report-carrier' });
  const btn = h('button', { class: 'secondary', id: 'report-download' }, 'Download bench report');
  btn.title =
    'A printable HTML report: network, trims, emissions against 47 CFR 97.307(d), output filter, cautions';
  const status = statusLine('report-status');
  btn.addEventListener('click', () => {
    status.busy('Running the virtual unit at the LO harmonics…');
    // Let the status paint before the simulation (a second or two of work).
    setTimeout(() => {
      try {
        const doc = JSON.parse(src.session()) as { profile: unknown };
        const profile = validateProfile(doc.profile);
        const network = parseNetworkJson(JSON.stringify(profile.network));
        const cal = src.calibration();
        const carrierHz = Number(carrier.value) * 1e6;
        if (!(carrierHz > 0 && carrierHz < 30e6)) throw new Error('give a carrier between 0.2 and 29.9 MHz');
        // Chebyshev 0.1 dB cutoff 12 % above the carrier; order for 53.46 dB at the 3rd harmonic
        // (43 dB below the carrier for the −9.54 dBc response, plus 10 dB margin; common practice, no source).
        const filter = designOutputFilter({
          cutoffHz: 1.12 * carrierHz,
          response: 'chebyshev',
          rippleDb: 0.1,
          carrierHz,
          attenuationDb: 43 + 20 * Math.log10(1 / 3) + 10,
          series: 'E12',
        });
        const bench = cal['cal-bench'] ?? 'homebrew-bench';
        const seed = Number(cal['cal-seed'] ?? 711);
        const [lo, hi] = network.band;
        const products = simulateProducts({
          network,
          model: virtualDevice(bench, seed),
          trims: profile.trims,
          correction: profile.correction,
          sideband: profile.sideband,
          carrierHz,
          toneHz: Math.min(Math.max(profile.toneHz, lo), hi),
          twoToneHz: lo <= 700 && hi >= 1900 ? [700, 1900] : [lo + 0.25 * (hi - lo), lo + 0.75 * (hi - lo)],
        });
        const check = checkEmissions({
          products,
          carrierHz,
          sideband: profile.sideband,
          highestAudioHz: hi,
          filter,
        });
        const html = benchReportHtml({
          created: new Date().toISOString(),
          carrierHz,
          network,
          profile,
          check,
          filter,
          context: [
            `demo page: virtual unit ${bench} #${seed} with the page's network and trims (invented bench)`,
            `output filter designed for the ${carrier.value} MHz carrier`,
          ],
          cautions: TRANSMIT_CAUTIONS,
        });
        download('orthotone-report.html', html, 'text/html');
        const fails = check.items.filter((i) => !i.pass).length;
        status.say(
          `Report saved as orthotone-report.html: ${fails === 0 ? 'every product within its limit' : `${fails} product(s) over the limit`}.`,
        );
      } catch (e) {
        status.fail(e instanceof Error ? e.message : String(e));
      }
    }, 30);
  });
  return h(
    'section',
    { class: 'report-bar panel', id: 'report-bar', 'aria-label': 'Bench report' },
    h('h2', {}, 'Bench report'),
    h(
      'p',
      { class: 'hint' },
      'One printable HTML file: the network, the trims, every emission against 47 CFR 97.307(d) after an output filter designed for the carrier, and the cautions.',
    ),
    field('Report carrier, MHz', carrier),
    btn,
    status.el,
  );
}
