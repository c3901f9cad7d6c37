/** Tiny DOM helpers for the demo page (no framework). */

type Child = Node | string | null | undefined | false;

/** Creates an element with attributes (`on*` keys become listeners) and children. */
export function h<K extends keyof HTMLElementTagNameMap>(
  tag: K,
  attrs: Record<string, unknown> = {},
  ...children: Child[]
): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined || v === null || v === false) continue;
    if (k.startsWith('on') && typeof v === 'function') {
      el.addEventListener(k.slice(2), v as EventListener);
    } else if (k === 'class') el.className = String(v);
    else if (k in el && k !== 'list') (el as unknown as Record<string, unknown>)[k] = v;
    else el.setAttribute(k, v === true ? '' : String(v));
  }
  for (const c of children) if (c !== null && c !== undefined && c !== false) el.append(c);
  return el;
}

/** A labelled control. */
export function field(label: string, control: HTMLElement, hint?: string): HTMLElement {
  return h('div', {}, h('label', {}, label, hint ? h('small', {}, ` ${hint}`) : null), control);
}

/** A number input. */
export function numberInput(value: number, attrs: Record<string, unknown> = {}): HTMLInputElement {
  return h('input', { type: 'number', value: String(value), ...attrs });
}

/** A select with [value, label] options. */
export function select(options: [string, string][], value: string, attrs: Record<string, unknown> = {}) {
  const s = h('select', attrs);
  for (const [v, l] of options) s.append(h('option', { value: v, selected: v === value }, l));
  return s;
}

/** A figure tile: caption and value. */
export function figure(caption: string): {
  el: HTMLElement;
  set(text: string, tone?: 'good' | 'bad' | ''): void;
} {
  const v = h('div', { class: 'v' }, '—');
  const el = h('div', { class: 'figure' }, h('div', { class: 'k' }, caption), v);
  return {
    el,
    set(text, tone = '') {
      v.textContent = text;
      el.className = `figure ${tone}`;
    },
  };
}

/** Offers `text` as a file download. */
export function download(name: string, text: string, type = 'text/plain'): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = h('a', { href: url, download: name });
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

/** Formats a number with fixed decimals, or '—' when not finite. */
export function fmt(x: number, digits = 1): string {
  if (!Number.isFinite(x)) return '—';
  const t = x.toFixed(digits);
  // No "−0.0": a value that rounds to zero shows as zero.
  return Number(t) === 0 ? (0).toFixed(digits) : t;
}
