// Lists of findings, shared by the side panel (every finding of the shard, grouped by rule) and the
// record view's detail pane (the findings of one entry). One finding item for both: its severity,
// rule, message and place, activated by a click, Enter or Space. Browser code: DOM only; all host
// text reaches the DOM as text.

import type { FindingView, Severity } from '../protocol.js';
import { formatCount, h, icon, iconButton, isSeverity, severityIcon, str, t } from './common.js';

export const SEVERITY_RANK: Record<Severity, number> = { error: 0, warning: 1, info: 2 };

/** A rule group with more findings than this starts closed: its count says enough until opened. */
const OPEN_UP_TO = 20;

/** A finding's severity; one the host sent wrong counts as a note. */
export function findingSeverity(f: FindingView): Severity {
  return isSeverity(f.severity) ? f.severity : 'info';
}

/** The most severe severity among `list` (a note for none). */
export function worstSeverity(list: readonly FindingView[]): Severity {
  return list.reduce<Severity>((w, f) => (isSeverity(f.severity) && SEVERITY_RANK[f.severity] < SEVERITY_RANK[w] ? f.severity : w), 'info');
}

export interface FindingItemOptions {
  /**
   * `stacked`: rule and place over the message and its field path (the panel); `inline`: rule,
   * message and place on one line (the detail pane, where the entry is known).
   */
  layout: 'stacked' | 'inline';
  /** Classes beside `sw-finding`. */
  className?: string;
  role: 'option' | 'button';
  /** A tab stop of its own; else the list's one tab stop (a roving tab index) moves onto it. */
  tabStop: boolean;
  /** What activating the item does, as its tooltip says it. */
  title: string;
  activate(f: FindingView): void;
  /** With this, a button opens the text at the finding's line. */
  openText?(f: FindingView): void;
  /** ArrowDown and ArrowUp on the item: move within the list. */
  step?(item: HTMLElement, direction: 1 | -1): void;
}

export function findingItem(f: FindingView, o: FindingItemOptions): HTMLElement {
  const sev = findingSeverity(f);
  const item = h('div', o.className ? `sw-finding ${o.className}` : 'sw-finding');
  item.tabIndex = o.tabStop ? 0 : -1;
  item.setAttribute('role', o.role);
  item.dataset.id = String(f.id);
  item.dataset.severity = sev;
  item.dataset.rule = str(f.rule);
  if (f.pointer !== null && f.pointer !== undefined) item.dataset.pointer = str(f.pointer);
  item.title = o.title;
  if (o.layout === 'stacked') {
    const text = h('div', 'sw-finding-text');
    const top = h('div', 'sw-finding-top');
    top.append(h('span', 'sw-rule', str(f.rule)), h('span', 'sw-place', str(f.place)));
    const message = h('div', 'sw-message', str(f.message));
    // The field path, as the CLI prints it ("at /messages/3/content").
    if (f.pointer) message.append(h('span', 'sw-pointer', t(' at {0}', str(f.pointer))));
    text.append(top, message);
    item.append(severityIcon(sev), text);
  } else {
    item.append(severityIcon(sev), h('span', 'sw-rule', str(f.rule)), h('span', 'sw-message', str(f.message)), h('span', 'sw-place', str(f.place)));
  }
  const openText = o.openText;
  if (openText) {
    const open = iconButton('go-to-file', t('Open at line'), 'sw-open-text');
    open.addEventListener('click', (ev) => {
      ev.stopPropagation();
      openText(f);
    });
    item.append(open);
  }
  item.addEventListener('click', () => o.activate(f));
  item.addEventListener('keydown', (ev) => {
    if (ev.target !== item) return;
    if (ev.key === 'Enter' || ev.key === ' ') {
      ev.preventDefault();
      o.activate(f);
    } else if (o.step && (ev.key === 'ArrowDown' || ev.key === 'ArrowUp')) {
      ev.preventDefault();
      o.step(item, ev.key === 'ArrowDown' ? 1 : -1);
    }
  });
  return item;
}

/** A flat list of findings (the detail pane's), or `empty` when there is none. */
export function findingList(findings: readonly FindingView[], o: { className: string; empty: () => HTMLElement; item: FindingItemOptions }): HTMLElement {
  const list = h('div', o.className);
  if (!findings.length) list.append(o.empty());
  for (const f of findings) {
    if (!f || typeof f !== 'object') continue;
    list.append(findingItem(f, o.item));
  }
  return list;
}

export interface GroupedFindingsOptions {
  /** Findings of each rule in the whole shard (the list may hold fewer of them). */
  totals: Record<string, number>;
  /** Groups the person opened or closed; the others are open unless large. */
  toggled: ReadonlyMap<string, boolean>;
  /** Findings rendered at most; the rest wait behind a "show more" button. */
  limit: number;
  /** The person opens or closes a rule's group: remember it and render the list again. */
  toggle(rule: string, open: boolean): void;
  activate(f: FindingView): void;
  openText(f: FindingView): void;
}

/**
 * Renders `shown` into the listbox `list` grouped by rule — most severe first, then the largest —,
 * each group under a heading with its count that opens and closes it; one tab stop for the whole
 * list, the arrows walk findings and headings. Returns the findings left of the limit (negative when
 * some are not rendered).
 */
export function renderGroupedFindings(list: HTMLElement, shown: readonly FindingView[], o: GroupedFindingsOptions): number {
  list.replaceChildren();
  const frag = document.createDocumentFragment();
  const groups = new Map<string, FindingView[]>();
  for (const f of shown) {
    const g = groups.get(str(f.rule));
    if (g) g.push(f);
    else groups.set(str(f.rule), [f]);
  }
  const worst = (g: FindingView[]) => Math.min(...g.map((f) => SEVERITY_RANK[findingSeverity(f)]));
  const byRule = o.totals;
  const ordered = [...groups.entries()].sort((a, b) => worst(a[1]) - worst(b[1]) || (byRule[b[0]] ?? b[1].length) - (byRule[a[0]] ?? a[1].length) || (a[0] < b[0] ? -1 : 1));
  const step = (from: HTMLElement, direction: 1 | -1) => stepFocus(list, from, direction);
  const item: FindingItemOptions = { layout: 'stacked', role: 'option', tabStop: false, title: t('Show this record'), activate: o.activate, openText: o.openText, step };
  let budget = o.limit;
  let first = true;
  for (const [rule, members] of ordered) {
    const total = Math.max(members.length, Number(byRule[rule]) || 0);
    const open = o.toggled.get(rule) ?? members.length <= OPEN_UP_TO;
    frag.append(groupHead(list, rule, members, total, open, o));
    if (!open) continue;
    const body = h('div', 'sw-group-body');
    body.setAttribute('role', 'group');
    body.setAttribute('aria-label', rule);
    for (const f of members.slice(0, Math.max(0, budget))) {
      const el = findingItem(f, item);
      // A roving tab index: one stop for the whole list, arrows move within it.
      el.tabIndex = first ? 0 : -1;
      first = false;
      body.append(el);
    }
    budget -= members.length;
    frag.append(body);
  }
  list.append(frag);
  return budget;
}

/** Moves the tab stop to the next or previous finding or rule heading of the list. */
function stepFocus(list: HTMLElement, from: HTMLElement, direction: 1 | -1): void {
  const all = [...list.querySelectorAll<HTMLElement>('.sw-finding, .sw-group-head')];
  const to = all[all.indexOf(from) + direction];
  if (to) moveFocus(list, to);
}

/** Moves the list's one tab stop to `el` and focuses it. */
function moveFocus(list: HTMLElement, el: HTMLElement): void {
  for (const x of list.querySelectorAll<HTMLElement>('[tabindex="0"]')) x.tabIndex = -1;
  el.tabIndex = 0;
  el.focus();
}

function groupHead(list: HTMLElement, rule: string, members: FindingView[], total: number, open: boolean, o: GroupedFindingsOptions): HTMLElement {
  const head = h('button', 'sw-group-head');
  head.type = 'button';
  head.tabIndex = -1;
  head.dataset.rule = rule;
  head.setAttribute('aria-expanded', String(open));
  head.append(icon(open ? 'chevron-down' : 'chevron-right', 'sw-group-chevron'), severityIcon(worstSeverity(members)), h('span', 'sw-rule', rule), h('span', 'sw-group-count', formatCount(total)));
  head.title = t(total === 1 ? '{0} finding of {1}' : '{0} findings of {1}', formatCount(total), rule) + (members.length < total ? t(' ({0} listed)', formatCount(members.length)) : '');
  const toggle = () => {
    o.toggle(rule, !open);
    (list.querySelector(`.sw-group-head[data-rule="${CSS.escape(rule)}"]`) as HTMLElement | null)?.focus();
  };
  head.addEventListener('click', toggle);
  head.addEventListener('keydown', (ev) => {
    if (ev.key === 'ArrowRight' && !open) toggle();
    else if (ev.key === 'ArrowLeft' && open) toggle();
    else if (ev.key === 'ArrowDown' || ev.key === 'ArrowUp') {
      ev.preventDefault();
      stepFocus(list, head, ev.key === 'ArrowDown' ? 1 : -1);
    }
  });
  return head;
}
