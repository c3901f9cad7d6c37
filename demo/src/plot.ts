/**
 * Line plots with uPlot 1.6.32 (a small, well-kept general-purpose charting library). uPlot already
 * gives what a reader needs to read figures off a plot, so it is kept rather than hand-written code:
 * its cursor and live legend are the readout (frequency and level under the pointer, every series),
 * its drag selection is the zoom, and it draws thousands of points per frame for the live spectrum.
 * Each plot also carries a text alternative computed from the data it shows (lowest and highest
 * value of each series and where), as the canvas's description and as a caption under it.
 */
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { fmt, h, uid } from './dom.js';

export interface SeriesSpec {
  label: string;
  color: string;
  dash?: number[];
  points?: boolean;
}

export interface LinePlot {
  setData(x: ArrayLike<number>, ys: ArrayLike<number | null>[]): void;
  /** Empties the plot and says why in its text alternative (e.g. a failed design). */
  clear(why: string): void;
  readonly el: HTMLElement;
}

export interface PlotOptions {
  title: string;
  xLabel: string;
  yLabel: string;
  /** Units written after read-off values, e.g. 'Hz', 'dB'. */
  xUnit?: string;
  yUnit?: string;
  /** Decimals of read-off values. */
  xDigits?: number;
  yDigits?: number;
  series: SeriesSpec[];
  logX?: boolean;
  height?: number;
  /** Fixed x range (otherwise from the data; a log scale would snap to whole decades). */
  xRange?: () => [number, number];
  /** Fixed y range (otherwise from the data). */
  yRange?: () => [number, number];
  /** Whole-number x ticks (e.g. reading numbers). */
  integerX?: boolean;
  /** Shades the plot outside this x interval (e.g. outside the band). */
  shadeOutside?: () => [number, number] | null;
  /** A sentence to start the text alternative with, from the data (otherwise the title). */
  describe?: (x: number[], ys: (number | null)[][]) => string;
}

/** Creates a plot in `parent`; it follows the parent's width (ResizeObserver). */
export function linePlot(parent: HTMLElement, opts: PlotOptions): LinePlot {
  const titleId = uid('plot-title');
  const altId = uid('plot-alt');
  const xUnit = opts.xUnit ?? opts.xLabel;
  const yUnit = opts.yUnit ?? opts.yLabel;
  const xDigits = opts.xDigits ?? 0;
  const yDigits = opts.yDigits ?? 1;
  const fx = (v: number) => `${Number(fmt(v, xDigits)).toLocaleString('en')} ${xUnit}`;
  const fy = (v: number) => `${fmt(v, yDigits)} ${yUnit}`;
  const holder = h('div', { class: 'plot-canvas' });
  const alt = h('p', { class: 'plot-alt', id: altId }, 'No data yet.');
  const reset = h(
    'button',
    { class: 'secondary small', hidden: true, 'aria-label': `Reset zoom: ${opts.title}` },
    'Reset zoom',
  );
  const el = h(
    'figure',
    { class: 'plot', 'aria-labelledby': titleId },
    h(
      'div',
      { class: 'plot-head' },
      h('h3', { class: 'plot-title', id: titleId }, opts.title),
      h(
        'span',
        { class: 'hint' },
        'Point (or Tab and arrow keys) to read values; drag across (or +/−) to zoom',
      ),
      reset,
    ),
    holder,
    h('figcaption', {}, alt),
  );
  parent.append(el);
  const height = opts.height ?? 240;
  const width = () => Math.max(300, Math.min(900, (parent.clientWidth || 800) - 4));
  let zoom: [number, number] | null = null;
  let data: [number[], ...(number | null)[][]] = [[], ...opts.series.map(() => [])];
  const u = new uPlot(
    {
      width: width(),
      height,
      scales: {
        x: {
          time: false,
          distr: opts.logX ? 3 : 1,
          range: (_u: uPlot, min: number, max: number): [number, number] =>
            zoom ?? (opts.xRange ? opts.xRange() : [min, max]),
        },
        ...(opts.yRange ? { y: { range: () => opts.yRange!() } } : {}),
      },
      cursor: {
        // Zoom is handled below (setSelect), so fixed ranges and live data keep the zoom.
        drag: { x: true, y: false, setScale: false },
        bind: { dblclick: () => () => null },
      },
      axes: [
        {
          label: opts.xLabel,
          stroke: '#4a5763',
          grid: { stroke: '#e3e8ec' },
          ...(opts.integerX ? { incrs: [1, 2, 5, 10, 20, 50, 100] } : {}),
          ...(opts.logX
            ? {
                // A log axis labels only whole decades by default: label every tick given here.
                splits: (_u: uPlot, _i: number, min: number, max: number) => logTicks(min, max),
                filter: (_u: uPlot, splits: number[]) => splits,
                values: (_u: uPlot, splits: number[]) => splits.map((v) => v.toLocaleString('en')),
              }
            : {}),
        },
        { label: opts.yLabel, stroke: '#4a5763', grid: { stroke: '#e3e8ec' } },
      ],
      series: [
        { label: opts.xLabel, value: (_u: uPlot, v: number | null) => (v == null ? '—' : fx(v)) },
        ...opts.series.map((s) => ({
          label: s.label,
          stroke: s.color,
          width: 2,
          dash: s.dash,
          points: { show: s.points ?? false, size: 6, fill: s.color },
          value: (_u: uPlot, v: number | null) => (v == null ? '—' : fy(v)),
        })),
      ],
      // The live legend is the cursor readout: x and every series under the pointer.
      legend: { live: true },
      hooks: {
        setSelect: [
          (p: uPlot) => {
            const s = p.select;
            if (s.width < 3) return;
            const a = p.posToVal(s.left, 'x');
            const b = p.posToVal(s.left + s.width, 'x');
            zoom = [Math.min(a, b), Math.max(a, b)];
            p.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
            p.setScale('x', { min: zoom[0], max: zoom[1] });
            el.dataset['zoom'] = JSON.stringify(zoom);
            reset.hidden = false;
          },
        ],
        ...(opts.shadeOutside
          ? {
              drawClear: [
                (p: uPlot) => {
                  const band = opts.shadeOutside?.();
                  if (!band) return;
                  const { ctx, bbox } = p;
                  const x0 = p.valToPos(band[0], 'x', true);
                  const x1 = p.valToPos(band[1], 'x', true);
                  ctx.save();
                  ctx.fillStyle = 'rgba(93, 107, 119, 0.12)';
                  if (x0 > bbox.left)
                    ctx.fillRect(
                      bbox.left,
                      bbox.top,
                      Math.min(x0, bbox.left + bbox.width) - bbox.left,
                      bbox.height,
                    );
                  if (x1 < bbox.left + bbox.width) {
                    const from = Math.max(x1, bbox.left);
                    ctx.fillRect(from, bbox.top, bbox.left + bbox.width - from, bbox.height);
                  }
                  ctx.restore();
                },
              ],
            }
          : {}),
      },
    },
    data as unknown as uPlot.AlignedData,
    holder,
  );
  u.ctx.canvas.setAttribute('role', 'img');
  u.ctx.canvas.setAttribute('aria-labelledby', titleId);
  u.ctx.canvas.setAttribute('aria-describedby', altId);
  const resetZoom = () => {
    zoom = null;
    delete el.dataset['zoom'];
    reset.hidden = true;
    u.setData(data as unknown as uPlot.AlignedData, true);
  };
  reset.addEventListener('click', resetZoom);
  u.over.addEventListener('dblclick', resetZoom);
  keyboardCursor();
  // Follow the parent's width; a hidden panel reports 0 and is skipped until it is shown.
  let lastWidth = width();
  new ResizeObserver(() => {
    if (!parent.clientWidth) return;
    const w = width();
    if (w !== lastWidth) {
      lastWidth = w;
      u.setSize({ width: w, height });
    }
  }).observe(parent);

  /**
   * The keyboard's way to read the plot: the overlay is a slider over the data points (arrow keys,
   * Page Up/Down by ten, Home/End); its value text is the readout, so a screen reader speaks it.
   * + and − zoom in and out around the cursor, 0 resets the zoom.
   */
  function keyboardCursor(): void {
    const over = u.over;
    let idx = -1;
    over.tabIndex = 0;
    over.setAttribute('role', 'slider');
    over.setAttribute('aria-label', `Read-out cursor: ${opts.title}`);
    over.setAttribute('aria-keyshortcuts', 'ArrowLeft ArrowRight PageUp PageDown Home End + - 0');
    // A slider always carries a value: before any data, an empty range.
    over.setAttribute('aria-valuemin', '0');
    over.setAttribute('aria-valuemax', '0');
    over.setAttribute('aria-valuenow', '0');
    over.setAttribute('aria-valuetext', 'no data yet');
    const readout = (k: number) => {
      const [x, ...ys] = data;
      const parts = opts.series.map((s, j) => {
        const v = ys[j]?.[k];
        return `${s.label} ${v == null || !Number.isFinite(v) ? '—' : fy(v)}`;
      });
      return `${fx(x[k]!)}: ${parts.join(', ')}`;
    };
    const place = (k: number) => {
      const x = data[0];
      if (x.length === 0) return;
      idx = Math.max(0, Math.min(x.length - 1, k));
      const y = data[1]?.[idx];
      const top =
        y == null || !Number.isFinite(y) ? u.bbox.height / devicePixelRatio / 2 : u.valToPos(y, 'y');
      u.setCursor({ left: u.valToPos(x[idx]!, 'x'), top });
      over.setAttribute('aria-valuemin', '0');
      over.setAttribute('aria-valuemax', String(x.length - 1));
      over.setAttribute('aria-valuenow', String(idx));
      over.setAttribute('aria-valuetext', readout(idx));
    };
    const zoomBy = (factor: number) => {
      const x = data[0];
      const min = u.scales['x']?.min;
      const max = u.scales['x']?.max;
      if (x.length === 0 || min == null || max == null) return;
      const c = x[Math.max(0, idx)] ?? (min + max) / 2;
      const [a, b] = opts.logX
        ? [c * (min / c) ** factor, c * (max / c) ** factor]
        : [c + (min - c) * factor, c + (max - c) * factor];
      zoom = [a, b];
      u.setScale('x', { min: a, max: b });
      el.dataset['zoom'] = JSON.stringify(zoom);
      reset.hidden = false;
      if (idx >= 0) place(idx);
    };
    over.addEventListener('keydown', (e: KeyboardEvent) => {
      const n = data[0].length;
      const step: Record<string, number> = {
        ArrowLeft: -1,
        ArrowRight: 1,
        ArrowDown: -1,
        ArrowUp: 1,
        PageDown: -10,
        PageUp: 10,
      };
      if (e.key in step) place((idx < 0 ? Math.floor(n / 2) : idx) + step[e.key]!);
      else if (e.key === 'Home') place(0);
      else if (e.key === 'End') place(n - 1);
      else if (e.key === '+' || e.key === '=') zoomBy(0.5);
      else if (e.key === '-') zoomBy(2);
      else if (e.key === '0') resetZoom();
      else return;
      e.preventDefault();
    });
    over.addEventListener('focus', () => {
      if (idx < 0) place(Math.floor(data[0].length / 2));
    });
  }

  /** The text alternative: each series' lowest and highest value and where, over the x span. */
  function describe(): string {
    const [x, ...ys] = data;
    if (x.length === 0) return 'No data yet.';
    const parts: string[] = [opts.describe ? opts.describe(x, ys) : `${opts.title}.`];
    parts.push(`Shown from ${fx(x[0]!)} to ${fx(x[x.length - 1]!)}.`);
    opts.series.forEach((s, k) => {
      const y = ys[k] ?? [];
      let lo = -1;
      let hi = -1;
      for (let n = 0; n < y.length; n++) {
        const v = y[n];
        if (v == null || !Number.isFinite(v)) continue;
        if (lo < 0 || v < y[lo]!) lo = n;
        if (hi < 0 || v > y[hi]!) hi = n;
      }
      if (lo < 0) return;
      parts.push(
        y[lo] === y[hi]
          ? `${s.label}: ${fy(y[lo]!)}.`
          : `${s.label}: lowest ${fy(y[lo]!)} at ${fx(x[lo]!)}, highest ${fy(y[hi]!)} at ${fx(x[hi]!)}.`,
      );
    });
    return parts.join(' ');
  }

  return {
    el,
    setData(x, ys) {
      data = [Array.from(x), ...ys.map((y) => Array.from(y))];
      u.setData(data as unknown as uPlot.AlignedData, true);
      alt.textContent = describe();
      u.over.setAttribute('aria-valuemax', String(Math.max(0, data[0].length - 1)));
    },
    clear(why) {
      data = [[], ...opts.series.map(() => [])];
      u.setData(data as unknown as uPlot.AlignedData, true);
      alt.textContent = why;
      u.over.setAttribute('aria-valuemax', '0');
      u.over.setAttribute('aria-valuenow', '0');
      u.over.setAttribute('aria-valuetext', 'no data');
    },
  };
}

/**
 * Ticks for a log axis shorter than a decade: 1, 2, 3 and 5 times powers of ten, or, when that
 * leaves fewer than four (a zoomed span), every 1…9 and half-step in between.
 */
function logTicks(min: number, max: number): number[] {
  if (!(min > 0 && max > min)) return [];
  const at = (mantissas: number[]) => {
    const out: number[] = [];
    for (let e = Math.floor(Math.log10(min)); e <= Math.ceil(Math.log10(max)); e++) {
      for (const m of mantissas) {
        const v = m * 10 ** e;
        if (v >= min && v <= max) out.push(v);
      }
    }
    return out;
  };
  const coarse = at([1, 2, 3, 5]);
  if (coarse.length >= 4) return coarse;
  const fine = at([1, 1.5, 2, 3, 4, 5, 6, 7, 8, 9]);
  return fine.length >= 4 ? fine : at([1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5, 6, 7, 8, 9]);
}
