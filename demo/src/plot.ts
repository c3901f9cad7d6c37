/** Line plots with uPlot 1.6.32 (a small general-purpose charting library). */
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';

export interface SeriesSpec {
  label: string;
  color: string;
  dash?: number[];
  points?: boolean;
}

export interface LinePlot {
  setData(x: ArrayLike<number>, ys: ArrayLike<number | null>[]): void;
  readonly el: HTMLElement;
}

/** Creates a plot in `parent`; it follows the parent's width (ResizeObserver). */
export function linePlot(
  parent: HTMLElement,
  opts: {
    title: string;
    xLabel: string;
    yLabel: string;
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
  },
): LinePlot {
  const el = document.createElement('div');
  el.className = 'plot';
  parent.append(el);
  const height = opts.height ?? 240;
  const width = () => Math.max(300, Math.min(900, (parent.clientWidth || 800) - 4));
  const u = new uPlot(
    {
      title: opts.title,
      width: width(),
      height,
      scales: {
        x: {
          time: false,
          distr: opts.logX ? 3 : 1,
          ...(opts.xRange ? { range: () => opts.xRange!() } : {}),
        },
        ...(opts.yRange ? { y: { range: () => opts.yRange!() } } : {}),
      },
      axes: [
        {
          label: opts.xLabel,
          stroke: '#5d6b77',
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
        { label: opts.yLabel, stroke: '#5d6b77', grid: { stroke: '#e3e8ec' } },
      ],
      series: [
        { label: opts.xLabel },
        ...opts.series.map((s) => ({
          label: s.label,
          stroke: s.color,
          width: 2,
          dash: s.dash,
          points: { show: s.points ?? false, size: 6, fill: s.color },
        })),
      ],
      legend: { live: false },
      hooks: opts.shadeOutside
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
                if (x0 > bbox.left) ctx.fillRect(bbox.left, bbox.top, x0 - bbox.left, bbox.height);
                if (x1 < bbox.left + bbox.width)
                  ctx.fillRect(x1, bbox.top, bbox.left + bbox.width - x1, bbox.height);
                ctx.restore();
              },
            ],
          }
        : {},
    },
    [[], ...opts.series.map(() => [])] as unknown as uPlot.AlignedData,
    el,
  );
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
  return {
    el,
    setData(x, ys) {
      u.setData([Array.from(x), ...ys.map((y) => Array.from(y))] as unknown as uPlot.AlignedData);
    },
  };
}

/** Ticks at 1, 2, 3 and 5 times powers of ten within [min, max] (a log axis shorter than a decade). */
function logTicks(min: number, max: number): number[] {
  const out: number[] = [];
  if (!(min > 0 && max > min)) return out;
  for (let e = Math.floor(Math.log10(min)); e <= Math.ceil(Math.log10(max)); e++) {
    for (const m of [1, 2, 3, 5]) {
      const v = m * 10 ** e;
      if (v >= min && v <= max) out.push(v);
    }
  }
  return out;
}
