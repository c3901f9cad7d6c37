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

let nextId = 0;

/** A fresh element id for the page (labels and descriptions refer to controls by id). */
export function uid(prefix: string): string {
  nextId += 1;
  return `${prefix}-${nextId}`;
}

/**
 * A labelled control: a `<label for>` tied to the control (its accessible name), and an optional
 * hint tied to it as its description.
 */
export function field(label: string, control: HTMLElement, hint?: string): HTMLElement {
  if (!control.id) control.id = uid('f');
  const hintEl = hint ? h('small', { class: 'hint-inline', id: `${control.id}-hint` }, ` ${hint}`) : null;
  if (hintEl) control.setAttribute('aria-describedby', hintEl.id);
  return h('div', { class: 'field' }, h('label', { for: control.id }, label, hintEl), control);
}

/** A status line beside the button that started the work: announced politely, errors marked by a word. */
export interface StatusLine {
  el: HTMLElement;
  /** Plain progress or result text. */
  say(text: string): void;
  /** An error: "Error:" before the text, so it does not rest on colour. */
  fail(text: string): void;
  /** Work in progress: a busy sign and the text. */
  busy(text: string): void;
  clear(): void;
}

/** Creates a status line (`role=status`, `aria-live=polite`). */
export function statusLine(id: string): StatusLine {
  const el = h('p', { class: 'status', id, role: 'status', 'aria-live': 'polite' });
  const put = (cls: string, text: string, prefix?: string) => {
    el.className = `status ${cls}`.trim();
    el.replaceChildren(...(prefix ? [h('strong', {}, prefix), ' '] : []), text);
    el.setAttribute('aria-busy', String(cls === 'busy'));
  };
  return {
    el,
    say: (text) => put('', text),
    fail: (text) => put('error', text, '✗ Error:'),
    busy: (text) => put('busy', text),
    clear: () => put('', ''),
  };
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
export interface Figure {
  el: HTMLElement;
  /**
   * Shows `text`; a good or bad state is also written as a sign and a word (`note`, or "meets" /
   * "short"), never shown by colour alone. Without a tone, `note` is a plain line under the value
   * (e.g. the tone level a carrier figure is read against).
   */
  set(text: string, tone?: 'good' | 'bad' | '', note?: string): void;
  /** Back to "—" (no figure: e.g. after a failed run, so no stale figure stays up). */
  clear(): void;
}

/** Creates a figure tile. `caption` names the figure; `unitNote` (small) says what it is read against. */
export function figure(caption: string, unitNote?: string): Figure {
  const v = h('div', { class: 'v' }, '—');
  const mark = h('div', { class: 'mark' });
  const el = h(
    'div',
    { class: 'figure' },
    h('div', { class: 'k' }, caption, unitNote ? h('span', { class: 'unit-note' }, ` · ${unitNote}`) : null),
    v,
    mark,
  );
  return {
    el,
    set(text, tone = '', note) {
      v.textContent = text;
      el.className = `figure ${tone}`.trim();
      mark.textContent =
        tone === 'good' ? `✓ ${note ?? 'meets'}` : tone === 'bad' ? `✗ ${note ?? 'short'}` : (note ?? '');
    },
    clear() {
      v.textContent = '—';
      el.className = 'figure';
      mark.textContent = '';
    },
  };
}

/** Reads a file the user picked as text. */
export function pickTextFile(accept: string): Promise<{ name: string; text: string } | null> {
  return new Promise((resolve) => {
    const input = h('input', { type: 'file', accept, hidden: true });
    input.addEventListener('change', async () => {
      const f = input.files?.[0];
      input.remove();
      resolve(f ? { name: f.name, text: await f.text() } : null);
    });
    input.addEventListener('cancel', () => {
      input.remove();
      resolve(null);
    });
    document.body.append(input);
    input.click();
  });
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
