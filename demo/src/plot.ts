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

/** Creates a plot in `parent`. */
export function linePlot(
  parent: HTMLElement,
  opts: {
    title: string;
    xLabel: string;
    yLabel: string;
    series: SeriesSpec[];
    logX?: boolean;
    height?: number;
  },
): LinePlot {
  const el = document.createElement('div');
  el.className = 'plot';
  parent.append(el);
  const width = () => Math.max(320, Math.min(820, (parent.clientWidth || 800) - 10));
  const u = new uPlot(
    {
      title: opts.title,
      width: width(),
      height: opts.height ?? 240,
      scales: { x: { time: false, distr: opts.logX ? 3 : 1 } },
      axes: [
        { label: opts.xLabel, stroke: '#5d6b77', grid: { stroke: '#e3e8ec' } },
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
    },
    [[], ...opts.series.map(() => [])] as unknown as uPlot.AlignedData,
    el,
  );
  window.addEventListener('resize', () => u.setSize({ width: width(), height: opts.height ?? 240 }));
  return {
    el,
    setData(x, ys) {
      u.setData([Array.from(x), ...ys.map((y) => Array.from(y))] as unknown as uPlot.AlignedData);
    },
  };
}
