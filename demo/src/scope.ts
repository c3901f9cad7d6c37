/**
 * The I/Q scope: Q against I (a Lissajous figure) on a canvas. One tone with perfect quadrature
 * draws a circle; a gain error stretches it into an ellipse along an axis, a phase error tilts the
 * ellipse by 45°, DC moves its centre. Real errors worth nulling are far too small to see at ×1,
 * so the deviation of the radius from its mean can be magnified (angles kept): a 0.1 dB gain error
 * at ×100 shows as a clear two-lobed shape. Drawn by hand on a 2D canvas: no charting library
 * draws a parametric X–Y trace with this magnification.
 */
import { fmt, h } from './dom.js';

export interface IqScope {
  el: HTMLElement;
  /** Draws the trace of `i`, `q` (full-scale units); `magnify` 1 draws it as it is. */
  draw(i: Float32Array, q: Float32Array, magnify: number): void;
  clear(): void;
}

/** Figures of a quadrature pair from its samples (means removed for gain and angle). */
export interface IqFigures {
  /** RMS of Q over RMS of I, dB. */
  ratioDb: number;
  /** Angle between I and Q, degrees (90 for perfect quadrature): acos of their correlation. */
  angleDeg: number;
  /** Means of I and Q, full-scale units. */
  dcI: number;
  dcQ: number;
}

/**
 * Gain ratio, angle and centre of an I/Q pair. Moments are weighted by a Hann window so that a span
 * that does not hold a whole number of cycles biases them far less than plain averages would.
 */
export function iqFigures(i: Float32Array, q: Float32Array): IqFigures {
  const n = Math.min(i.length, q.length);
  const w = (k: number) => Math.sin((Math.PI * (k + 0.5)) / n) ** 2;
  let sw = 0;
  let mi = 0;
  let mq = 0;
  for (let k = 0; k < n; k++) {
    const wk = w(k);
    sw += wk;
    mi += wk * i[k]!;
    mq += wk * q[k]!;
  }
  mi /= sw || 1;
  mq /= sw || 1;
  let ii = 0;
  let qq = 0;
  let iq = 0;
  for (let k = 0; k < n; k++) {
    const wk = w(k);
    const a = i[k]! - mi;
    const b = q[k]! - mq;
    ii += wk * a * a;
    qq += wk * b * b;
    iq += wk * a * b;
  }
  const c = iq / Math.sqrt(ii * qq || 1);
  return {
    ratioDb: 10 * Math.log10((qq || 1e-30) / (ii || 1e-30)),
    angleDeg: (Math.acos(Math.max(-1, Math.min(1, c))) * 180) / Math.PI,
    dcI: mi,
    dcQ: mq,
  };
}

/** Creates the scope (a square canvas and a caption). */
export function iqScope(): IqScope {
  // An image named by its purpose and described by the caption's figures (the text alternative).
  const canvas = h('canvas', {
    class: 'scope',
    id: 'gen-scope',
    width: 560,
    height: 560,
    role: 'img',
    'aria-label': 'I/Q scope: Q against I; a circle means equal gain and 90° between them',
    'aria-describedby': 'gen-scope-caption',
  });
  const caption = h('div', { class: 'hint', id: 'gen-scope-caption' }, 'Start audio to see Q against I.');
  const el = h('div', { class: 'scope-box' }, canvas, caption);
  const g = canvas.getContext('2d');

  function frame(scaleText: string): void {
    if (!g) return;
    const w = canvas.width;
    g.fillStyle = '#0f1a21';
    g.fillRect(0, 0, w, w);
    g.strokeStyle = '#2c3b46';
    g.lineWidth = 1;
    g.beginPath();
    g.moveTo(w / 2, 0);
    g.lineTo(w / 2, w);
    g.moveTo(0, w / 2);
    g.lineTo(w, w / 2);
    g.stroke();
    g.fillStyle = '#8fa3b0';
    g.font = '22px system-ui, sans-serif';
    g.fillText('I →', w - 56, w / 2 - 10);
    g.fillText('Q ↑', w / 2 + 10, 28);
    g.fillText(scaleText, 12, w - 14);
  }

  return {
    el,
    clear() {
      frame('');
      caption.textContent = 'Start audio to see Q against I.';
    },
    draw(i, q, magnify) {
      if (!g) return;
      const n = Math.min(i.length, q.length);
      let rMean = 0;
      let peak = 0;
      for (let k = 0; k < n; k++) {
        const r = Math.hypot(i[k]!, q[k]!);
        rMean += r;
        peak = Math.max(peak, r);
      }
      rMean /= n || 1;
      const m = Math.max(1, magnify);
      // Radius shown: the mean plus the magnified deviation from it.
      const shown = (r: number) => Math.max(0, rMean + m * (r - rMean));
      let reach = 0;
      for (let k = 0; k < n; k++) reach = Math.max(reach, shown(Math.hypot(i[k]!, q[k]!)));
      const span = Math.max(reach, 1e-6) * 1.15;
      const w = canvas.width;
      const px = w / 2 / span;
      frame(`full width ±${span.toPrecision(2)} FS${m > 1 ? `, deviation from a circle ×${m}` : ''}`);
      // Reference circle at the mean radius.
      g.strokeStyle = '#4a5b66';
      g.setLineDash([6, 6]);
      g.beginPath();
      g.arc(w / 2, w / 2, rMean * px, 0, 2 * Math.PI);
      g.stroke();
      g.setLineDash([]);
      g.strokeStyle = '#3fc1b4';
      g.lineWidth = 1.6;
      g.beginPath();
      for (let k = 0; k < n; k++) {
        const x = i[k]!;
        const y = q[k]!;
        const r = Math.hypot(x, y);
        const s = r > 0 ? shown(r) / r : 0;
        const cx = w / 2 + x * s * px;
        const cy = w / 2 - y * s * px;
        if (k === 0) g.moveTo(cx, cy);
        else g.lineTo(cx, cy);
      }
      g.stroke();
      const f = iqFigures(i, q);
      caption.textContent = `Q/I ${fmt(f.ratioDb, 3)} dB · angle ${fmt(f.angleDeg, 2)}° · centre (${fmt(f.dcI, 4)}, ${fmt(f.dcQ, 4)}) FS · peak ${fmt(20 * Math.log10(Math.max(peak, 1e-9)))} dBFS`;
      el.dataset['figures'] = JSON.stringify(f);
    },
  };
}
