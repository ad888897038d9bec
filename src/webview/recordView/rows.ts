// The grid of entries: its head row, the virtual-scrolled rows (only those near the viewport are in
// the DOM; gridGeometry.ts does the arithmetic), the search's matches marked in the cells, and the
// grid's mouse and keyboard handling.

import type { ColumnInfo, RowView } from '../../protocol.js';
import { formatCount, h, icon, isSeverity, severityIcon, str, t, visibleText } from '../common.js';
import {
  type Geometry,
  gridGeometry,
  gridTemplate,
  keyTarget,
  renderedRange,
  rowWindow,
  scrollTopFor,
  scrollTopToShow,
  visibleRange as rangeAt,
} from './gridGeometry.js';
import { rowAt, scheduleRequests } from './pages.js';
import { isTable, state } from './state.js';

/** What the grid asks of the rest of the view. */
export interface RowsHooks {
  /** Selects an entry (a click, an arrow key). */
  select(entry: number): void;
  /** Shows the detail pane, focusing it when `focus` (a double click, Enter). */
  openDetail(focus: boolean): void;
  /** Sorts the records as the sort box's option `value` says (the Tokens heading cycles through them). */
  sortBy(value: string): void;
}

let hooks: RowsHooks | null = null;

export const tableEl = h('section', 'sw-table');
tableEl.setAttribute('aria-label', t('Entries'));
const headWrap = h('div', 'sw-table-head');
const headRow = h('div', 'sw-row sw-row-head');
headWrap.append(headRow);
export const viewport = h('div', 'sw-viewport');
viewport.tabIndex = 0;
viewport.setAttribute('role', 'grid');
const spacer = h('div', 'sw-spacer');
const rowsLayer = h('div', 'sw-rows');
spacer.append(rowsLayer);
viewport.append(spacer);
const emptyNote = h('div', 'sw-table-empty');
tableEl.append(headWrap, viewport, emptyNote);

let renderQueued = false;

function fieldColumns(): ColumnInfo[] {
  return state.columns;
}

export function renderHeadRow(): void {
  headRow.replaceChildren();
  const fixed: [string, string, string][] = [
    ['record', '#', t('Record number')],
    isTable() ? ['place', t('Row'), t('Row in the file')] : ['place', t('Line'), t('Line in the file')],
    ['tokens', t('Tokens'), t('Tokens in the record')],
    ['marker', '', t('Findings')],
  ];
  for (const [col, label, title] of fixed) {
    const c = h('div', `sw-cell sw-col-${col}`, label);
    c.dataset.col = col;
    c.title = title;
    c.setAttribute('role', 'columnheader');
    if (col === 'marker') c.append(icon('issues'));
    if (col === 'tokens') {
      // Click (or Enter) sorts by tokens: most first, then fewest first, then file order.
      c.classList.add('sw-sortable');
      c.tabIndex = 0;
      const s = state.query?.sort;
      const sorted = s?.key === 'tokens' ? (s.descending ? 'descending' : 'ascending') : 'none';
      c.setAttribute('aria-sort', sorted);
      if (sorted !== 'none') c.append(icon(sorted === 'descending' ? 'arrow-down' : 'arrow-up', 'sw-sort-mark'));
      c.title = t('Sort by tokens');
      const cycle = () => hooks?.sortBy(sorted === 'none' ? 'tokens:desc' : sorted === 'descending' ? 'tokens:asc' : '');
      c.addEventListener('click', cycle);
      c.addEventListener('keydown', (ev) => {
        if (ev.key === 'Enter' || ev.key === ' ') {
          ev.preventDefault();
          cycle();
        }
      });
    }
    headRow.append(c);
  }
  for (const f of fieldColumns()) {
    const c = h('div', 'sw-cell sw-col-field');
    c.dataset.col = 'field';
    c.dataset.field = str(f.name);
    c.title = `${str(f.name)}: ${str(f.type)}`;
    c.append(h('span', 'sw-field-name', str(f.name)), h('span', 'sw-field-type', str(f.type)));
    headRow.append(c);
  }
  const n = fieldColumns().length;
  tableEl.style.setProperty('--sw-grid', gridTemplate(n));
  tableEl.style.setProperty('--sw-fields', String(n));
}

/** The note in place of rows when there are none. */
export function renderEmptyNote(): void {
  emptyNote.hidden = state.entries > 0;
  emptyNote.textContent = state.complete ? t('This shard holds no entries.') : t('Reading the shard…');
}

function geometry(): Geometry {
  return gridGeometry(state.entries, viewport.clientHeight);
}

/** Scrolls so that the content from `pos` (unscaled px) is at the top. */
export function setContentPos(pos: number): void {
  viewport.scrollTop = scrollTopFor(geometry(), pos);
}

export function visibleRange(): { first: number; count: number } {
  return rangeAt(geometry(), viewport.scrollTop);
}

/** The entries the rendered rows cover. */
export function currentRenderedRange(): { start: number; end: number } {
  return renderedRange(geometry(), viewport.scrollTop);
}

export function scrollToEntry(entry: number, align: 'nearest' | 'center'): void {
  const to = scrollTopToShow(geometry(), viewport.scrollTop, entry, align);
  if (to !== null) viewport.scrollTop = to;
}

export function resetScroll(): void {
  viewport.scrollTop = 0;
}

export function focusGrid(): void {
  viewport.focus();
}

export function queueRender(): void {
  if (renderQueued) return;
  renderQueued = true;
  requestAnimationFrame(() => {
    renderQueued = false;
    renderRows();
  });
}

export function renderRows(): void {
  const g = geometry();
  spacer.style.height = `${g.spacerH}px`;
  const { start, end, shift } = rowWindow(g, viewport.scrollTop);
  rowsLayer.style.transform = `translateY(${shift}px)`;
  const frag = document.createDocumentFragment();
  for (let e = start; e < end; e++) frag.append(buildRow(e));
  rowsLayer.replaceChildren(frag);
  // WAI-ARIA grid with virtual rows: the whole count, each row's index (the header row is 1), and
  // the selected row announced through aria-activedescendant while the grid has focus.
  viewport.setAttribute('aria-rowcount', String(state.entries + 1));
  if (state.selected >= start && state.selected < end) viewport.setAttribute('aria-activedescendant', `sw-row-${state.selected}`);
  else viewport.removeAttribute('aria-activedescendant');
  scheduleRequests(start, end, currentRenderedRange);
}

/** Text with the search's matches marked (as text nodes and <mark> elements: nothing is parsed). */
function marked(text: string): Node[] {
  const s = state.query?.search;
  if (!s || !s.text || !text) return visibleText(text);
  let re: RegExp;
  try {
    re = s.regex ? new RegExp(s.text, s.caseSensitive ? 'gu' : 'giu') : new RegExp(s.text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&'), s.caseSensitive ? 'g' : 'gi');
  } catch {
    return visibleText(text);
  }
  const out: Node[] = [];
  let at = 0;
  for (const m of text.matchAll(re)) {
    if (m[0] === '') break;
    if (m.index! > at) out.push(...visibleText(text.slice(at, m.index)));
    const mk = h('mark', 'sw-match');
    mk.append(...visibleText(m[0]));
    out.push(mk);
    at = m.index! + m[0].length;
    if (out.length > 200) break;
  }
  if (at < text.length) out.push(...visibleText(text.slice(at)));
  return out;
}

function buildRow(entry: number): HTMLElement {
  const r: RowView | undefined = rowAt(entry);
  const row = h('div', 'sw-row');
  row.dataset.entry = String(entry);
  row.id = `sw-row-${entry}`;
  row.setAttribute('role', 'row');
  row.setAttribute('aria-rowindex', String(entry + 2));
  if (entry === state.selected) {
    row.classList.add('sw-selected');
    row.setAttribute('aria-selected', 'true');
  }
  const cell = (col: string, text: string): HTMLElement => {
    const c = h('div', `sw-cell sw-col-${col}`, text);
    c.dataset.col = col;
    c.setAttribute('role', 'gridcell');
    return c;
  };
  if (!r) {
    row.classList.add('sw-row-loading');
    row.append(cell('record', ''), cell('place', ''), cell('tokens', ''), cell('marker', ''));
    const filler = cell('loading', '…');
    filler.classList.add('sw-cell-span');
    row.append(filler);
    return row;
  }
  // The row's context menu (VS Code's webview/context menu): copy, open at line, filter like this.
  row.dataset.vscodeContext = JSON.stringify({ webviewSection: 'row', position: entry, preventDefaultContextMenuItems: true });
  const tokens = cell('tokens', r.tokens === null || r.tokens === undefined ? (r.record === null || r.record === undefined ? '' : '…') : formatCount(r.tokens));
  if ((r.tokens === null || r.tokens === undefined) && r.record !== null && r.record !== undefined) {
    tokens.classList.add('sw-cell-pending');
    tokens.title = t('Not counted yet');
  }
  row.append(cell('record', r.record === null || r.record === undefined ? '–' : formatCount(r.record + 1)), cell('place', str(r.place)), tokens);
  const marker = cell('marker', '');
  if (isSeverity(r.severity)) {
    row.dataset.severity = r.severity;
    marker.append(severityIcon(r.severity));
    if (r.findingCount > 1) marker.append(h('span', 'sw-marker-count', formatCount(r.findingCount)));
    marker.title = t(r.findingCount === 1 ? '{0} finding' : '{0} findings', formatCount(r.findingCount));
  }
  row.append(marker);
  if (r.record === null || r.record === undefined || r.raw !== undefined) {
    row.classList.add('sw-row-raw');
    const raw = str(r.raw);
    const c = cell('raw', raw === '' ? t('(blank line)') : raw);
    c.classList.add('sw-cell-span');
    c.title = raw.slice(0, 2000);
    row.append(c);
    return row;
  }
  const cells = r.cells && typeof r.cells === 'object' ? r.cells : {};
  for (const f of fieldColumns()) {
    const name = str(f.name);
    const has = Object.prototype.hasOwnProperty.call(cells, name);
    const text = has ? str(cells[name]) : '';
    const c = cell('field', '');
    c.append(...marked(text));
    c.dataset.field = name;
    if (!has) c.classList.add('sw-cell-absent');
    else {
      c.title = text.slice(0, 2000);
      c.dataset.vscodeContext = JSON.stringify({ webviewSection: 'cell', position: entry, column: name, preventDefaultContextMenuItems: true });
    }
    row.append(c);
  }
  return row;
}

/** Connects the grid's mouse and keyboard to the rest of the view; call once. */
export function wireRows(given: RowsHooks): void {
  hooks = given;
  viewport.addEventListener('scroll', () => {
    headWrap.scrollLeft = viewport.scrollLeft;
    queueRender();
  });

  viewport.addEventListener('click', (ev) => {
    const row = (ev.target as Element).closest?.('.sw-row[data-entry]') as HTMLElement | null;
    if (!row) return;
    viewport.focus();
    given.select(Number(row.dataset.entry));
  });

  viewport.addEventListener('dblclick', (ev) => {
    const row = (ev.target as Element).closest?.('.sw-row[data-entry]') as HTMLElement | null;
    if (row) given.openDetail(true);
  });

  viewport.addEventListener('keydown', (ev) => {
    if (state.entries <= 0) return;
    if (ev.key === 'Enter') {
      ev.preventDefault();
      if (state.selected >= 0) given.openDetail(true);
      return;
    }
    const next = keyTarget(ev.key, state.selected, visibleRange(), state.entries);
    if (next === null) return;
    ev.preventDefault();
    given.select(next);
  });

  new ResizeObserver(() => queueRender()).observe(viewport);
}
