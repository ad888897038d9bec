// Helpers shared by the record view and the side panel. Browser code: DOM only.
// Every string that reaches the DOM goes through textContent or a DOM property, never through HTML parsing.

import type { Severity } from '../protocol.js';

export interface VsCodeApi<Out> {
  postMessage(message: Out): void;
  getState(): unknown;
  setState(state: unknown): void;
}

declare function acquireVsCodeApi(): VsCodeApi<unknown>;

/** The API may be acquired only once per webview, so both views call this once at start. */
export function connect<Out>(): VsCodeApi<Out> {
  return acquireVsCodeApi() as VsCodeApi<Out>;
}

/**
 * The display language's translations of our strings, keyed by the English text: the host puts
 * them in <meta name="sw-strings"> (its `vscode.l10n.bundle`). Read once, as views use strings at load.
 */
const STRINGS: Record<string, string> = (() => {
  try {
    const raw = typeof document !== 'undefined' ? document.querySelector('meta[name="sw-strings"]')?.getAttribute('content') : null;
    const parsed: unknown = raw ? JSON.parse(raw) : null;
    if (!parsed || typeof parsed !== 'object' || Array.isArray(parsed)) return {};
    const out: Record<string, string> = Object.create(null);
    for (const [k, v] of Object.entries(parsed)) if (typeof v === 'string') out[k] = v;
    return out;
  } catch {
    return {};
  }
})();

/** A user-visible string in the display language (English when untranslated); `{0}`, `{1}`… take the args. */
/** Numbers as the display language writes them (the host puts it in <html lang>). */
const countFormat = (() => {
  try {
    return new Intl.NumberFormat((typeof document !== 'undefined' && document.documentElement.lang) || 'en');
  } catch {
    return new Intl.NumberFormat('en');
  }
})();

const plainFormats = new Map<number, Intl.NumberFormat>();

/** A number with at most `digits` decimals (exactly `digits` when `fixed`), the display language's decimal sign, no grouping. */
function plainNumber(v: number, digits: number, fixed = false): string {
  const key = fixed ? -1 - digits : digits;
  let f = plainFormats.get(key);
  if (!f) {
    const opts: Intl.NumberFormatOptions = { useGrouping: false, maximumFractionDigits: digits, minimumFractionDigits: fixed ? digits : 0 };
    try {
      f = new Intl.NumberFormat((typeof document !== 'undefined' && document.documentElement.lang) || 'en', opts);
    } catch {
      f = new Intl.NumberFormat('en', opts);
    }
    plainFormats.set(key, f);
  }
  return f.format(v);
}

export function t(english: string, ...args: (string | number)[]): string {
  const text = Object.prototype.hasOwnProperty.call(STRINGS, english) ? STRINGS[english] : english;
  if (!args.length) return text;
  return text.replace(/\{(\d+)\}/g, (m, i: string) => {
    if (Number(i) >= args.length) return m;
    const v = args[Number(i)];
    // A number argument (a percentage, a share) is written as the display language writes it.
    return typeof v === 'number' ? plainNumber(v, 1) : String(v);
  });
}

/** Creates an element with an optional class list and text (set as text, never parsed). */
export function h<K extends keyof HTMLElementTagNameMap>(
  tag: K,
  className?: string,
  text?: string,
): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (className) e.className = className;
  if (text !== undefined) e.textContent = text;
  return e;
}

/** A codicon glyph; `name` is one of ours, never host text. */
export function icon(name: string, extraClass?: string): HTMLSpanElement {
  const s = h('span', `codicon codicon-${name}${extraClass ? ` ${extraClass}` : ''}`);
  s.setAttribute('aria-hidden', 'true');
  return s;
}

export function iconButton(name: string, title: string, className: string): HTMLButtonElement {
  const b = h('button', `sw-icon-button ${className}`);
  b.type = 'button';
  b.title = title;
  b.setAttribute('aria-label', title);
  b.append(icon(name));
  return b;
}

const SEVERITY_ICON: Record<Severity, string> = { error: 'error', warning: 'warning', info: 'info' };

export function isSeverity(x: unknown): x is Severity {
  return x === 'error' || x === 'warning' || x === 'info';
}

export function severityIcon(severity: Severity): HTMLSpanElement {
  const s = icon(SEVERITY_ICON[severity], `sw-sev sw-sev-${severity}`);
  s.title = severity;
  return s;
}


export function formatCount(n: number | null | undefined): string {
  if (n === null || n === undefined || !Number.isFinite(n)) return '–';
  return countFormat.format(n);
}

export function formatBytes(n: number | null | undefined): string {
  if (n === null || n === undefined || !Number.isFinite(n)) return '–';
  const units = ['B', 'KiB', 'MiB', 'GiB', 'TiB'];
  let v = n;
  let u = 0;
  while (v >= 1024 && u < units.length - 1) {
    v /= 1024;
    u++;
  }
  return u === 0 ? `${plainNumber(v, 0)} B` : `${plainNumber(v, v < 10 ? 2 : v < 100 ? 1 : 0, true)} ${units[u]}`;
}

/** Coerces host text to a string: the host is trusted to send strings, but a bad value must not throw. */
export function str(x: unknown): string {
  if (typeof x === 'string') return x;
  if (x === null || x === undefined) return '';
  if (typeof x === 'number' || typeof x === 'boolean') return String(x);
  try {
    return JSON.stringify(x) ?? '';
  } catch {
    return String(x);
  }
}

/** Keeps a small most-recently-used cache (Map iteration order is insertion order). */
export class Lru<K, V> {
  private readonly map = new Map<K, V>();
  constructor(private readonly capacity: number) {}
  get(key: K): V | undefined {
    const v = this.map.get(key);
    if (v !== undefined) {
      this.map.delete(key);
      this.map.set(key, v);
    }
    return v;
  }
  peek(key: K): V | undefined {
    return this.map.get(key);
  }
  set(key: K, value: V): void {
    this.map.delete(key);
    this.map.set(key, value);
    while (this.map.size > this.capacity) {
      const oldest = this.map.keys().next().value as K;
      this.map.delete(oldest);
    }
  }
  delete(key: K): void {
    this.map.delete(key);
  }
  clear(): void {
    this.map.clear();
  }
  keys(): K[] {
    return [...this.map.keys()];
  }
  get size(): number {
    return this.map.size;
  }
}

/**
 * Characters that would hide or reorder what a record holds — bidirectional controls (the
 * "Trojan Source" class, Unicode TR #9) and C0/C1 control characters other than line breaks and
 * tabs — shown as visible marks (⟨U+202E⟩) instead of acting on the text around them.
 */
const INVISIBLE = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F-\u009F\u061C\u200E\u200F\u202A-\u202E\u2066-\u2069]/g;

export function visibleText(text: string): Node[] {
  INVISIBLE.lastIndex = 0;
  if (!INVISIBLE.test(text)) return [document.createTextNode(text)];
  INVISIBLE.lastIndex = 0;
  const out: Node[] = [];
  let at = 0;
  for (const m of text.matchAll(INVISIBLE)) {
    if (m.index! > at) out.push(document.createTextNode(text.slice(at, m.index)));
    const code = `U+${m[0].charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}`;
    const mark = h('span', 'sw-ctl', `⟨${code}⟩`);
    mark.title = t('{0}: a control character, shown instead of applied', code);
    out.push(mark);
    at = m.index! + 1;
  }
  if (at < text.length) out.push(document.createTextNode(text.slice(at)));
  return out;
}
