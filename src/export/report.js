import { evaluateBranches, suppressionFromResponse } from '../design/network.js';
import { ladderAttenuationDb } from '../emissions/output-filter.js';

const esc = (s) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]);
const f = (x, d) => (Number.isFinite(x) ? (Math.abs(x) < 0.5 * 10 ** -d ? 0 : x).toFixed(d) : '–');
function hz(x) {
  const a = Math.abs(x);
  if (a >= 1e9) return `${Number((x / 1e9).toPrecision(6))} GHz`;
  if (a >= 1e6) return `${Number((x / 1e6).toPrecision(7))} MHz`;
  if (a >= 1e3) return `${Number((x / 1e3).toPrecision(6))} kHz`;
  return `${Number(x.toPrecision(6))} Hz`;
}
function siValue(x, unit) {
  const p = [
    [1e-15, 'f'],
    [1e-12, 'p'],
    [1e-9, 'n'],
    [1e-6, 'µ'],
    [1e-3, 'm'],
    [1, ''],
  ];
  let best = p[0];
  for (const q of p) if (Math.abs(x) >= q[0] * 0.999999) best = q;
  return `${Number((x / best[0]).toPrecision(4))} ${best[1]}${unit}`;
}
/** Nice tick values covering [lo, hi]. */
function ticks(lo, hi, n = 6) {
  const span = hi - lo || 1;
  const raw = span / n;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
  const out = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + 1e-9 * span; t += step)
    out.push(Number(t.toPrecision(12)));
  return out;
}
/** An inline SVG line/dot plot (no script). */
function svgPlot(p) {
  const W = 640;
  const H = 300;
  const L = 64;
  const R = 16;
  const T = 28;
  const B = 44;
  const all = p.series.flatMap((s) => s.points).filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y));
  if (all.length === 0) return `<p class="empty">${esc(p.title)}: no data.</p>`;
  const tx = (x) => (p.logX ? Math.log10(x) : x);
  let x0 = Math.min(...all.map(([x]) => tx(x)));
  let x1 = Math.max(...all.map(([x]) => tx(x)));
  if (x1 === x0) {
    x0 -= 1;
    x1 += 1;
  }
  let [y0, y1] = p.yRange ?? [Math.min(...all.map(([, y]) => y)), Math.max(...all.map(([, y]) => y))];
  for (const h of p.hLines ?? []) {
    y0 = Math.min(y0, h.y);
    y1 = Math.max(y1, h.y);
  }
  if (y1 === y0) {
    y0 -= 1;
    y1 += 1;
  }
  const pad = 0.05 * (y1 - y0);
  y0 -= pad;
  y1 += pad;
  const X = (x) => L + ((tx(x) - x0) / (x1 - x0)) * (W - L - R);
  const Y = (y) => T + ((y1 - Math.min(y1, Math.max(y0, y))) / (y1 - y0)) * (H - T - B);
  const parts = [];
  parts.push(`<rect x="${L}" y="${T}" width="${W - L - R}" height="${H - T - B}" class="frame"/>`);
  for (const t of ticks(y0, y1)) {
    parts.push(
      `<line x1="${L}" x2="${W - R}" y1="${Y(t).toFixed(1)}" y2="${Y(t).toFixed(1)}" class="grid"/>`,
    );
    parts.push(`<text x="${L - 6}" y="${(Y(t) + 4).toFixed(1)}" text-anchor="end">${esc(String(t))}</text>`);
  }
  const xt = p.logX
    ? ticks(x0, x1, 5)
        .filter((e) => Number.isInteger(e))
        .map((e) => 10 ** e)
    : ticks(x0, x1);
  for (const t of xt) {
    const px = X(t).toFixed(1);
    parts.push(`<line x1="${px}" x2="${px}" y1="${T}" y2="${H - B}" class="grid"/>`);
    parts.push(
      `<text x="${px}" y="${H - B + 16}" text-anchor="middle">${esc(p.xTick ? p.xTick(t) : String(t))}</text>`,
    );
  }
  for (const h of p.hLines ?? []) {
    parts.push(
      `<line x1="${L}" x2="${W - R}" y1="${Y(h.y).toFixed(1)}" y2="${Y(h.y).toFixed(1)}" stroke="${h.color}" stroke-dasharray="6 4"/>`,
    );
    parts.push(
      `<text x="${W - R - 4}" y="${(Y(h.y) - 4).toFixed(1)}" text-anchor="end" fill="${h.color}">${esc(h.label)}</text>`,
    );
  }
  p.series.forEach((s, k) => {
    const pts = s.points.filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y));
    if (s.style === 'dots') {
      for (const [x, y] of pts) {
        parts.push(`<circle cx="${X(x).toFixed(1)}" cy="${Y(y).toFixed(1)}" r="3.5" fill="${s.color}"/>`);
      }
    } else if (pts.length > 0) {
      const d = [];
      pts.forEach(([x, y], i) => {
        if (i > 0 && s.style === 'step') d.push(`L${X(x).toFixed(1)},${Y(pts[i - 1][1]).toFixed(1)}`);
        d.push(`${i === 0 ? 'M' : 'L'}${X(x).toFixed(1)},${Y(y).toFixed(1)}`);
      });
      parts.push(`<path d="${d.join('')}" fill="none" stroke="${s.color}" stroke-width="2"/>`);
    }
    parts.push(
      `<rect x="${L + 8 + k * 150}" y="8" width="10" height="10" fill="${s.color}"/><text x="${L + 22 + k * 150}" y="17">${esc(s.label)}</text>`,
    );
  });
  parts.push(`<text x="${(L + W - R) / 2}" y="${H - 8}" text-anchor="middle">${esc(p.xLabel)}</text>`);
  parts.push(
    `<text transform="translate(14 ${(T + H - B) / 2}) rotate(-90)" text-anchor="middle">${esc(p.yLabel)}</text>`,
  );
  return `<figure><svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${W} ${H}" role="img" aria-label="${esc(p.title)}" data-plot="${p.id}">${parts.join('')}</svg><figcaption>${esc(p.title)}</figcaption></figure>`;
}
function table(head, rows, cls = '') {
  return `<table${cls ? ` class="${cls}"` : ''}><thead><tr>${head.map((h) => `<th>${esc(h)}</th>`).join('')}</tr></thead><tbody>${rows
    .map((r) => `<tr>${r.map((c) => `<td>${c}</td>`).join('')}</tr>`)
    .join('')}</tbody></table>`;
}
function networkSection(net) {
  const [lo, hi] = net.band;
  const pts = [];
  for (let k = 0; k <= 200; k++) {
    const fr = lo * (hi / lo) ** (k / 200);
    pts.push([fr, suppressionFromResponse(evaluateBranches(net, fr))]);
  }
  const worst = Math.min(...pts.map(([, s]) => s));
  const size =
    net.kind === 'fir'
      ? `${net.taps.length} taps`
      : `${net.branches.i.sections.length} + ${net.branches.q.sections.length} all-pass sections`;
  return `<section id="network"><h2>90° network</h2>${table(['kind', 'sample rate', 'band', 'size', 'worst suppression in band (evaluated here)'], [[esc(net.kind), `${net.sampleRate} Hz`, `${lo}–${hi} Hz`, esc(size), `${f(worst, 2)} dB`]])}${svgPlot(
    {
      id: 'network',
      title:
        'Opposite-sideband suppression of the network alone across its band (evaluated from its coefficients)',
      xLabel: 'audio frequency, Hz',
      yLabel: 'suppression, dB',
      logX: true,
      xTick: (x) => String(x),
      series: [{ label: 'suppression', points: pts, color: '#1f5fa8', style: 'line' }],
    },
  )}</section>`;
}
function calibrationSection(p) {
  const t = p.trims;
  const quantities = [...new Set(p.readings.map((r) => r.quantity))];
  const colors = ['#1f5fa8', '#b3541e', '#2e7d32', '#6a1b9a'];
  const series = [];
  const bestRows = [];
  quantities.forEach((q, k) => {
    const rs = p.readings.map((r, i) => ({ ...r, i: i + 1 })).filter((r) => r.quantity === q);
    const dots = rs.filter((r) => r.levelDb !== null).map((r) => [r.i, r.levelDb]);
    let best = Number.POSITIVE_INFINITY;
    const bestLine = dots.map(([i, y]) => {
      best = Math.min(best, y);
      return [i, best];
    });
    const c = colors[k % colors.length];
    series.push({ label: `${q} readings`, points: dots, color: c, style: 'dots' });
    series.push({ label: `${q} best so far`, points: bestLine, color: c, style: 'step' });
    bestRows.push([
      esc(q),
      String(rs.length),
      String(rs.filter((r) => r.levelDb === null).length),
      `${f(best, 2)} dB`,
    ]);
  });
  const readingRows = p.readings.map((r, i) => [
    String(i + 1),
    esc(r.quantity),
    `${f(r.trims.gainDb, 4)} dB, ${f(r.trims.phaseDeg, 4)}°, ${f(r.trims.dcI * 1e3, 3)}e-3, ${f(r.trims.dcQ * 1e3, 3)}e-3`,
    r.levelDb === null ? 'failed' : f(r.levelDb, 2),
  ]);
  return `<section id="calibration"><h2>Calibration</h2><p>Profile made ${esc(p.created)} at ${p.sampleRate} Hz, ${esc(p.sideband)} sideband, tone ${p.toneHz} Hz. Trims: gain ${f(t.gainDb, 5)} dB, phase ${f(t.phaseDeg, 5)}°, skew ${f(t.skewSamples, 4)} samples, DC I ${t.dcI.toExponential(3)}, DC Q ${t.dcQ.toExponential(3)}${p.correction ? `; correction ${p.correction.qFromQ.length} taps` : ''}.</p>${table(['quantity', 'readings', 'failed', 'lowest reading'], bestRows)}${svgPlot(
    {
      id: 'convergence',
      title: 'Readings taken during calibration and the lowest level so far, per null',
      xLabel: 'reading number',
      yLabel: 'level read, dB',
      series,
    },
  )}<details open><summary>All ${p.readings.length} readings</summary>${table(['#', 'quantity', 'trims (gain, phase, dcI, dcQ)', 'level dB'], readingRows, 'small')}</details></section>`;
}
function emissionSection(c) {
  const rows = c.items.map((i) => [
    esc(i.name) +
      (i.source === 'predicted' ? ' <small>(predicted)</small>' : '') +
      (i.atFloor ? ' <small>(at floor)</small>' : ''),
    hz(i.frequencyHz),
    esc(i.domain),
    f(i.levelDbc, 1),
    esc(i.reference),
    f(i.limitDbc, 1),
    `<span class="${i.pass ? 'ok' : 'bad'}">${f(i.marginDb, 1)}</span>`,
    esc(i.limitKind === 'practice' ? 'practice' : i.rule),
    i.pass ? '<b class="ok">pass</b>' : '<b class="bad">FAIL</b>',
  ]);
  const fails = c.items.filter((i) => !i.pass).length;
  const verdict =
    fails === 0
      ? 'Every product is within its limit.'
      : `${fails} of ${c.items.length} rows are over their limit.`;
  const spurious = c.items.filter((i) => i.domain === 'spurious');
  const plot = svgPlot({
    id: 'emissions',
    title: 'Products in the spurious domain after the filter (dBc) against the rule limit',
    xLabel: 'frequency, MHz',
    yLabel: 'level, dBc',
    series: [
      {
        label: 'product',
        points: spurious.map((i) => [i.frequencyHz / 1e6, i.levelDbc]),
        color: '#b3541e',
        style: 'dots',
      },
    ],
    hLines: [...new Set(spurious.map((i) => i.limitDbc))].map((y) => ({
      y,
      label: `limit ${f(y, 1)} dBc`,
      color: '#c62828',
    })),
    xTick: (x) => String(x),
  });
  return `<section id="emissions"><h2>Emissions</h2><p class="${fails === 0 ? 'ok' : 'bad'}"><b>${esc(verdict)}</b></p>${table(['product', 'frequency', 'domain', 'level dBc', 'ref', 'limit dBc', 'margin dB', 'limit from', 'result'], rows)}${spurious.length ? plot : ''}<ul class="notes">${c.notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul></section>`;
}
function filterSection(flt, carrierHz) {
  const rows = flt.elements.map((e, k) => [
    String(k + 1),
    e.kind === 'C' ? 'shunt C' : 'series L',
    siValue(e.value, e.kind === 'C' ? 'F' : 'H'),
    typeof e.g === 'number' ? f(e.g, 4) : '–',
  ]);
  const fc = flt.cutoffHz ?? carrierHz ?? 1e6;
  const pts = [];
  const fLo = fc / 10;
  const fHi = Math.max(10 * fc, carrierHz ? 10 * carrierHz : 0);
  for (let k = 0; k <= 300; k++) {
    const fr = fLo * (fHi / fLo) ** (k / 300);
    pts.push([fr, ladderAttenuationDb(flt.elements, fr, flt.impedanceOhms)]);
  }
  const harm = carrierHz
    ? [1, 2, 3, 4, 5, 6, 7, 8, 9].map((h) => [
        h * carrierHz,
        ladderAttenuationDb(flt.elements, h * carrierHz, flt.impedanceOhms),
      ])
    : [];
  const hrows = harm.map(([fr, a], k) => [`LO ×${k + 1}`, hz(fr), f(a, 2)]);
  return `<section id="filter"><h2>Output low-pass filter</h2><p>${esc(String(flt.response ?? 'ladder'))}, order ${flt.elements.length}${flt.cutoffHz ? `, cutoff ${hz(flt.cutoffHz)}` : ''}, ${flt.impedanceOhms} Ω terminations${flt.series ? `, capacitors rounded to ${esc(flt.series)}` : ''}; elements in ladder order from the source.</p>${table(['#', 'element', 'value', 'prototype g'], rows)}${svgPlot(
    {
      id: 'filter',
      title: 'Insertion loss of the filter as built (computed from its element values)',
      xLabel: 'frequency, Hz',
      yLabel: 'loss, dB',
      logX: true,
      xTick: (x) => hz(x),
      yRange: [0, Math.min(120, Math.max(...pts.map(([, a]) => a)))],
      series: [
        {
          label: 'loss',
          points: pts.map(([x, a]) => [x, Math.min(a, 120)]),
          color: '#1f5fa8',
          style: 'line',
        },
        ...(harm.length
          ? [
              {
                label: 'LO harmonics',
                points: harm.map(([x, a]) => [x, Math.min(a, 120)]),
                color: '#b3541e',
                style: 'dots',
              },
            ]
          : []),
      ],
    },
  )}${hrows.length ? table(['at', 'frequency', 'loss dB'], hrows, 'small') : ''}</section>`;
}
const CSS = `
body{font:14px/1.45 system-ui,sans-serif;color:#111;max-width:60rem;margin:1.5rem auto;padding:0 1rem}
h1{font-size:1.5rem;margin:0 0 .3rem}h2{font-size:1.2rem;border-bottom:1px solid #999;margin-top:2rem}
table{border-collapse:collapse;margin:.6rem 0;font-variant-numeric:tabular-nums}
th,td{border:1px solid #bbb;padding:.2rem .45rem;text-align:left}th{background:#eee}
table.small{font-size:12px}.ok{color:#1b5e20}.bad{color:#b71c1c}
figure{margin:.8rem 0}svg{width:100%;max-width:640px;height:auto;font-size:11px;font-family:system-ui,sans-serif}
svg .frame{fill:none;stroke:#555}svg .grid{stroke:#ddd}svg text{fill:#222}
figcaption{font-size:12px;color:#444}.cautions{border:2px solid #b71c1c;padding:.5rem 1rem;background:#fff5f5}
.meta{color:#444;font-size:12px}
@media print{body{margin:0;max-width:none;font-size:11pt}details{display:block}h2{break-after:avoid}
figure,table,.cautions{break-inside:avoid}a{color:inherit}}
`;
/**
 * Builds the bench report as one self-contained HTML document (inline CSS and SVG plots, no script,
 * no external resource; a print style sheet keeps plots and tables whole on paper).
 * @param d what to show; missing parts are left out (the cautions are always shown).
 * @returns the HTML text (UTF-8).
 * @throws never for data produced by the library (a malformed network or filter may throw from the
 *   response evaluators).
 * Reference: the plotted figures come from {@link evaluateBranches} / {@link suppressionFromResponse}
 * (network), the readings themselves (calibration), {@link ladderAttenuationDb} (filter) and the
 * check's items (emissions).
 */
export function benchReportHtml(d) {
  const title = d.title ?? 'orthotone bench report';
  const parts = [
    `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1">`,
    `<link rel="icon" href="data:,"><title>${esc(title)}</title><style>${CSS}</style></head><body>`,
    `<header><h1>${esc(title)}</h1><p class="meta">Made ${esc(d.created)}${d.carrierHz ? ` · carrier ${hz(d.carrierHz)}` : ''} · a design aid: local regulations and licensed practice take precedence.</p>`,
    d.context.length ? `<ul class="meta">${d.context.map((c) => `<li>${esc(c)}</li>`).join('')}</ul>` : '',
    `</header><section class="cautions" id="cautions"><h2>Before transmitting</h2><ul>${d.cautions.map((c) => `<li>${esc(c)}</li>`).join('')}</ul></section>`,
    d.check ? emissionSection(d.check) : '',
    d.filter ? filterSection(d.filter, d.carrierHz) : '',
    d.verify?.length
      ? `<section id="verify"><h2>Verify run</h2><ul>${d.verify.map((v) => `<li>${esc(v)}</li>`).join('')}</ul></section>`
      : '',
    d.profile ? calibrationSection(d.profile) : '',
    d.network ? networkSection(d.network) : '',
    '</body></html>\n',
  ];
  return parts.join('');
}
