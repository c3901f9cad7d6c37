/**
 * Plain, self-contained SVG line plots for the command line's `--plot FILE.svg` (a network's
 * response, a calibration's convergence): axes with ticks, axis titles with units, a title, a
 * legend, and a text alternative (`<title>`, `<desc>`). No scripts, no external fonts or styles, so
 * the file opens in any browser or image viewer. Platform-free: returns a string; the caller writes
 * it (src/node/files.ts `writeFileAtomic`).
 *
 * Written here rather than taken from a charting library: the general-purpose ones draw into a DOM
 * or a canvas (a browser, or jsdom in Node), while this needs a fixed picture as text, which is a
 * few dozen lines of coordinate arithmetic.
 */
import { OrthotoneError } from '../core/errors.js';
import type { NetworkAnalysis } from '../design/analysis.js';

/** One line of a plot. */
export interface PlotSeries {
  /** Legend text. */
  label: string;
  /** x values (in the x axis's unit). */
  x: ArrayLike<number>;
  /** y values (in the y axis's unit); a non-finite value breaks the line. */
  y: ArrayLike<number>;
  /** Draw a dot at each point too (for a few points, e.g. one per calibration reading). */
  markers?: boolean;
}

/** What {@link plotToSvg} draws. */
export interface PlotSpec {
  /** Title above the plot. */
  title: string;
  /** x axis title with its unit, e.g. "frequency (Hz)". */
  xLabel: string;
  /** y axis title with its unit, e.g. "suppression (dB)". */
  yLabel: string;
  series: PlotSeries[];
  /** x axis scale. Default 'linear'; 'log' needs x > 0. */
  xScale?: 'linear' | 'log';
  /** y range shown; default from the data. */
  yRange?: [number, number];
  /** An x interval to shade (e.g. the design band), with its legend text. */
  shade?: { from: number; to: number; label: string };
  /** Size in px. Default 720 × 420. */
  width?: number;
  height?: number;
}

const COLOURS = ['#0b5fa5', '#c0392b', '#1e7b34', '#7d3c98', '#6e5400'];
const DASHES = ['', '6 3', '2 3', '8 3 2 3', '1 2'];

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

function fmtTick(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(1);
  return String(Number(v.toPrecision(6)));
}

/** "Nice" linear ticks (1, 2, 5 × 10^k steps) covering [lo, hi]. Common practice, no source. */
function linearTicks(lo: number, hi: number, count = 6): number[] {
  const span = hi - lo || Math.abs(hi) || 1;
  const raw = span / count;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
  const out: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step)
    out.push(Math.abs(t) < step * 1e-9 ? 0 : t);
  return out;
}

/** Decade ticks (1, 2, 5 per decade when few decades). */
function logTicks(lo: number, hi: number): number[] {
  const out: number[] = [];
  const decades = Math.log10(hi / lo);
  const mult = decades <= 2 ? [1, 2, 5] : [1];
  for (let e = Math.floor(Math.log10(lo)); e <= Math.ceil(Math.log10(hi)); e++) {
    for (const m of mult) {
      const t = m * 10 ** e;
      if (t >= lo * (1 - 1e-9) && t <= hi * (1 + 1e-9)) out.push(t);
    }
  }
  return out;
}

/**
 * Draws line plots as a self-contained SVG document (axes, ticks, axis titles with units, title,
 * legend, shaded interval, and a `<title>`/`<desc>` text alternative listing each series' range).
 * @param spec title, axis titles (with units), series, scale, ranges, size.
 * @returns the SVG document as a string (UTF-8 text, starts with `<svg`).
 * @throws {OrthotoneError} INVALID_ARGUMENT when no series has a finite point, when x and y differ
 *   in length, or when a log x axis meets x ≤ 0.
 * Method: linear or logarithmic mapping of data to the plot area; "nice" 1-2-5 ticks (common
 * practice, no source); SVG 1.1 (W3C Recommendation, 2011) path and text elements.
 * @example
 * ```ts
 * import { plotToSvg } from 'orthotone';
 *
 * const svg = plotToSvg({
 *   title: 'Suppression after each reading',
 *   xLabel: 'reading',
 *   yLabel: 'suppression (dB)',
 *   series: [{ label: 'suppression (dB)', x: [1, 2, 3, 4], y: [31, 38, 44, 51], markers: true }],
 * });
 * console.log(svg.startsWith('<svg'), svg.length, 'characters'); // write it to a .svg file to view
 * ```
 */
export function plotToSvg(spec: PlotSpec): string {
  const width = spec.width ?? 720;
  const height = spec.height ?? 420;
  const log = spec.xScale === 'log';
  const left = 72;
  const right = 16;
  const top = 40;
  const bottom = 56;
  const pw = width - left - right;
  const ph = height - top - bottom - 22 * Math.ceil((spec.series.length + (spec.shade ? 1 : 0)) / 3);
  let xmin = Number.POSITIVE_INFINITY;
  let xmax = Number.NEGATIVE_INFINITY;
  let ymin = Number.POSITIVE_INFINITY;
  let ymax = Number.NEGATIVE_INFINITY;
  for (const [k, s] of spec.series.entries()) {
    if (s.x.length !== s.y.length) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `plot series ${k} ('${s.label}') has ${s.x.length} x values and ${s.y.length} y values: give one y per x`,
        s.label,
      );
    }
    for (let i = 0; i < s.x.length; i++) {
      const x = s.x[i]!;
      const y = s.y[i]!;
      if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
      if (log && x <= 0) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          `plot series '${s.label}' has x = ${x} on a log axis: give x > 0 or a linear axis`,
          x,
        );
      }
      xmin = Math.min(xmin, x);
      xmax = Math.max(xmax, x);
      ymin = Math.min(ymin, y);
      ymax = Math.max(ymax, y);
    }
  }
  if (!(xmax >= xmin)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `plot '${spec.title}' has no finite point to draw`,
      spec.title,
    );
  }
  if (spec.yRange) [ymin, ymax] = spec.yRange;
  if (xmax === xmin) [xmin, xmax] = log ? [xmin / 2, xmax * 2] : [xmin - 1, xmax + 1];
  if (ymax === ymin) [ymin, ymax] = [ymin - 1, ymax + 1];
  const yTicks = linearTicks(ymin, ymax);
  if (!spec.yRange) {
    // widen to whole ticks so the lines do not touch the frame
    const step = yTicks.length > 1 ? yTicks[1]! - yTicks[0]! : 1;
    ymin = Math.min(ymin, Math.floor(ymin / step) * step);
    ymax = Math.max(ymax, Math.ceil(ymax / step) * step);
  }
  const xTicks = log ? logTicks(xmin, xmax) : linearTicks(xmin, xmax);
  const X = (x: number): number =>
    left + (log ? Math.log(x / xmin) / Math.log(xmax / xmin) : (x - xmin) / (xmax - xmin)) * pw;
  const Y = (y: number): number =>
    top + (1 - (Math.min(ymax, Math.max(ymin, y)) - ymin) / (ymax - ymin)) * ph;
  const r = (v: number): string => v.toFixed(1);
  const parts: string[] = [];
  const desc = spec.series
    .map((s) => {
      let lo = Number.POSITIVE_INFINITY;
      let hi = Number.NEGATIVE_INFINITY;
      for (let i = 0; i < s.y.length; i++) {
        const v = s.y[i]!;
        if (Number.isFinite(v)) {
          lo = Math.min(lo, v);
          hi = Math.max(hi, v);
        }
      }
      return `${s.label}: ${s.y.length} points, ${spec.yLabel} from ${fmtTick(lo)} to ${fmtTick(hi)}`;
    })
    .join('; ');
  parts.push(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" font-family="sans-serif" font-size="12">`,
    `<title>${esc(spec.title)}</title>`,
    `<desc>${esc(`${spec.xLabel} against ${spec.yLabel}. ${desc}.`)}</desc>`,
    `<rect width="${width}" height="${height}" fill="#ffffff"/>`,
    `<text x="${width / 2}" y="22" text-anchor="middle" font-size="15" font-weight="bold">${esc(spec.title)}</text>`,
  );
  if (spec.shade) {
    const a = X(Math.max(xmin, spec.shade.from));
    const b = X(Math.min(xmax, spec.shade.to));
    if (b > a)
      parts.push(`<rect x="${r(a)}" y="${top}" width="${r(b - a)}" height="${r(ph)}" fill="#e8eef5"/>`);
  }
  for (const t of yTicks) {
    if (t < ymin || t > ymax) continue;
    const y = r(Y(t));
    parts.push(
      `<line x1="${left}" y1="${y}" x2="${left + pw}" y2="${y}" stroke="#d0d0d0" stroke-width="0.6"/>`,
      `<text x="${left - 6}" y="${y}" text-anchor="end" dominant-baseline="middle">${esc(fmtTick(t))}</text>`,
    );
  }
  for (const t of xTicks) {
    const x = r(X(t));
    parts.push(
      `<line x1="${x}" y1="${top}" x2="${x}" y2="${top + ph}" stroke="#d0d0d0" stroke-width="0.6"/>`,
      `<text x="${x}" y="${top + ph + 16}" text-anchor="middle">${esc(fmtTick(t))}</text>`,
    );
  }
  parts.push(
    `<rect x="${left}" y="${top}" width="${pw}" height="${r(ph)}" fill="none" stroke="#333333"/>`,
    `<text x="${left + pw / 2}" y="${r(top + ph + 36)}" text-anchor="middle">${esc(spec.xLabel)}</text>`,
    `<text transform="translate(18 ${r(top + ph / 2)}) rotate(-90)" text-anchor="middle">${esc(spec.yLabel)}</text>`,
  );
  for (const [k, s] of spec.series.entries()) {
    const colour = COLOURS[k % COLOURS.length]!;
    const dash = DASHES[k % DASHES.length]!;
    let d = '';
    let pen = false;
    const dots: string[] = [];
    for (let i = 0; i < s.x.length; i++) {
      const x = s.x[i]!;
      const y = s.y[i]!;
      if (!Number.isFinite(x) || !Number.isFinite(y) || x < xmin || x > xmax) {
        pen = false;
        continue;
      }
      d += `${pen ? 'L' : 'M'}${r(X(x))} ${r(Y(y))}`;
      pen = true;
      if (s.markers) dots.push(`<circle cx="${r(X(x))}" cy="${r(Y(y))}" r="2.5" fill="${colour}"/>`);
    }
    parts.push(
      `<path d="${d}" fill="none" stroke="${colour}" stroke-width="1.6"${dash ? ` stroke-dasharray="${dash}"` : ''}/>`,
      ...dots,
    );
  }
  // Legend below the x axis title: line samples carry the dash pattern, so colour is not the only cue.
  const legend: { label: string; colour: string; dash: string; box?: boolean }[] = spec.series.map(
    (s, k) => ({
      label: s.label,
      colour: COLOURS[k % COLOURS.length]!,
      dash: DASHES[k % DASHES.length]!,
    }),
  );
  if (spec.shade) legend.push({ label: spec.shade.label, colour: '#e8eef5', dash: '', box: true });
  legend.forEach((e, k) => {
    const lx = left + (k % 3) * Math.floor(pw / 3);
    const ly = top + ph + 52 + 20 * Math.floor(k / 3);
    parts.push(
      e.box
        ? `<rect x="${lx}" y="${ly - 6}" width="24" height="12" fill="${e.colour}" stroke="#9fb3c8"/>`
        : `<line x1="${lx}" y1="${ly}" x2="${lx + 24}" y2="${ly}" stroke="${e.colour}" stroke-width="2"${e.dash ? ` stroke-dasharray="${e.dash}"` : ''}/>`,
      `<text x="${lx + 30}" y="${ly}" dominant-baseline="middle">${esc(e.label)}</text>`,
    );
  });
  parts.push('</svg>', '');
  return parts.join('\n');
}

/**
 * The response plot of a network analysis: opposite-sideband suppression (dB) against frequency
 * (Hz, log axis), the band shaded, with the worst figure over the band in the title.
 * @param a the result of `analyzeNetwork` (log or linear frequencies; 0 Hz is left out on a log axis).
 * @param title plot title (default "Network response").
 * @returns the SVG document.
 * @throws {OrthotoneError} INVALID_ARGUMENT when the analysis has no finite point above 0 Hz.
 * Method: {@link plotToSvg} of `suppressionDb`; suppression per K. Schmidt,
 * QEX Aug 1994 §2 (as `analyzeNetwork` computes it).
 */
export function analysisToSvg(a: NetworkAnalysis, title = 'Network response'): string {
  const keep: number[] = [];
  for (let k = 0; k < a.frequencyHz.length; k++) if (a.frequencyHz[k]! > 0) keep.push(k);
  const x = keep.map((k) => a.frequencyHz[k]!);
  return plotToSvg({
    title: `${title}: worst ${a.worst.suppressionDb.toFixed(1)} dB at ${a.worst.atHz.toFixed(0)} Hz over ${a.band[0]}–${a.band[1]} Hz`,
    xLabel: 'frequency (Hz)',
    yLabel: 'opposite-sideband suppression (dB)',
    xScale: 'log',
    series: [{ label: 'suppression (dB)', x, y: keep.map((k) => a.suppressionDb[k]!) }],
    shade: { from: a.band[0], to: a.band[1], label: `band ${a.band[0]}–${a.band[1]} Hz` },
  });
}

/** One null's readings for {@link convergenceToSvg}. */
export interface ConvergenceRun {
  /** What was nulled, e.g. "sideband" or "carrier". */
  label: string;
  /** Each reading's level as read, dB (dBc), in reading order; non-finite = a failed reading. */
  levelsDb: ArrayLike<number>;
}

/**
 * The convergence plot of a calibration: each reading's level (dBc) and the best so far against the
 * reading number, one pair of lines per null.
 * @param runs the nulls, each with its readings in order.
 * @param title plot title (default "Calibration convergence").
 * @returns the SVG document.
 * @throws {OrthotoneError} INVALID_ARGUMENT when no run has a finite reading.
 * Method: {@link plotToSvg}; "best so far" is the running minimum of the finite readings.
 */
export function convergenceToSvg(runs: readonly ConvergenceRun[], title = 'Calibration convergence'): string {
  const series: PlotSeries[] = [];
  for (const r of runs) {
    const x = Array.from({ length: r.levelsDb.length }, (_, k) => k + 1);
    const best: number[] = [];
    let b = Number.POSITIVE_INFINITY;
    for (let k = 0; k < r.levelsDb.length; k++) {
      const v = r.levelsDb[k]!;
      if (Number.isFinite(v) && v < b) b = v;
      best.push(Number.isFinite(b) ? b : Number.NaN);
    }
    series.push({ label: `${r.label}: reading (dBc)`, x, y: Array.from(r.levelsDb), markers: true });
    series.push({ label: `${r.label}: best so far (dBc)`, x, y: best });
  }
  return plotToSvg({ title, xLabel: 'reading (count)', yLabel: 'level read (dBc)', series });
}
