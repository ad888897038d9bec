// The record view: a header describing the shard, a virtual-scrolled table of entries paged from the
// host, and a detail pane (conversation, preference pair, JSON tree, findings) for the selected entry.
// Browser code: DOM only. All host text is untrusted and reaches the DOM as text.

import type { ColumnInfo, FilterSpec, FormatName, GroupInfo, Severity, SortSpec, ViewQuery } from '../protocol.js';
import {
  isMessage,
  type DetailView,
  type FindingView,
  type HostToRecordView,
  type PairSideView,
  type PairView,
  type PartView,
  type RecordViewToHost,
  type RenderedView,
  type RowView,
  type TurnView,
} from '../protocol.js';
import {
  connect,
  formatBytes,
  formatCount,
  h,
  icon,
  iconButton,
  isSeverity,
  Lru,
  visibleText,
  severityIcon,
  str,
  t,
} from './common.js';

/** Keep in step with `--sw-row-height` in recordView.css. */
const ROW_HEIGHT = 24;
/** Rows per `requestRows` page. */
const PAGE = 128;
/** Pages kept in memory. */
const CACHE_PAGES = 64;
/** Rows rendered above and below the visible ones. */
const OVERSCAN = 8;
/** Browsers cap element heights (tens of millions of px); past this the scroll position is scaled. */
const MAX_SPACER = 8_000_000;
/** Page requests wait for the scrolling to pause this long, so a fast drag does not flood the host. */
const REQUEST_DELAY_MS = 40;
/** Children of one JSON container rendered before a "show more" button. */
const TREE_BATCH = 500;
const TREE_MAX_DEPTH = 200;
/** Whether the shard's entries are rows of a table (the host sends the format's traits). */
const isTable = (): boolean => !!info && info.traits?.textual === false;

type InitMessage = Extract<HostToRecordView, { type: 'init' }>;
type Tab = 'conversation' | 'pair' | 'rendered' | 'json' | 'findings';

interface Page {
  rows: (RowView | undefined)[];
  /** Entries known when the page was answered: a short page is re-asked only once more are known. */
  entriesAt: number;
}

interface SavedState {
  fileName: string;
  selected: number;
}

const vscode = connect<RecordViewToHost>();

// ---- state ----
let info: InitMessage | null = null;
let entries = 0;
let complete = true;
let progress = 0;
let columns: ColumnInfo[] = [];
const pages = new Lru<number, Page>(CACHE_PAGES);
const pending = new Map<number, number>(); // requestId → page
const inFlight = new Set<number>();
let nextRequestId = 1;
let selected = -1;
let detail: DetailView | null = null;
let detailFor = -1;
let activeTab: Tab | null = null;
let renderQueued = false;
let requestTimer: ReturnType<typeof setTimeout> | undefined;

// ---- skeleton ----
const root = document.getElementById('sw-root') ?? document.body.appendChild(h('div', 'sw-root'));
root.classList.add('sw-record-view');

const header = h('header', 'sw-header');
const titleLine = h('div', 'sw-title-line');
const fileIcon = icon('table', 'sw-file-icon');
const fileNameEl = h('span', 'sw-file-name', '');
const formatEl = h('span', 'sw-badge sw-format');
const sizeEl = h('span', 'sw-size');
const entriesEl = h('span', 'sw-entries');
const layoutEl = h('span', 'sw-badge sw-layout');
layoutEl.hidden = true;
const indexingEl = h('span', 'sw-indexing');
const indexBar = h('div', 'sw-progress');
const indexBarFill = h('div', 'sw-progress-fill');
indexBar.append(indexBarFill);
indexBar.setAttribute('role', 'progressbar');
indexingEl.append(icon('loading', 'codicon-modifier-spin'), h('span', 'sw-indexing-text'), indexBar);
titleLine.append(fileIcon, fileNameEl, formatEl, layoutEl, sizeEl, entriesEl, indexingEl);
const factsEl = h('div', 'sw-facts');
const structureEl = h('details', 'sw-structure');
header.append(titleLine, factsEl, structureEl);

const banner = h('div', 'sw-banner sw-banner-error');
banner.setAttribute('role', 'alert');
banner.hidden = true;

const toolbar = h('div', 'sw-toolbar');
const gotoLabel = h('label', 'sw-goto');
const gotoInput = h('input', 'sw-goto-input');
gotoInput.type = 'text';
gotoInput.spellcheck = false;
gotoInput.placeholder = t('Go to: 12 · line 40 · row 7');
gotoInput.setAttribute('aria-label', t('Go to record, line or row'));
gotoLabel.append(icon('arrow-right'), gotoInput);
const gotoHint = h('span', 'sw-goto-hint');
const detailToggle = iconButton('split-horizontal', t('Show or hide the detail pane'), 'sw-detail-toggle');

// ---- search, sort, filter (the host runs them over the whole shard, in its worker) ----
const searchWrap = h('div', 'sw-search');
searchWrap.setAttribute('role', 'search');
const searchInput = h('input', 'sw-search-input');
searchInput.type = 'search';
searchInput.spellcheck = false;
searchInput.placeholder = t('Search records (Ctrl+F)');
searchInput.setAttribute('aria-label', t('Search the text of every record'));
const caseToggle = iconButton('case-sensitive', t('Match case'), 'sw-search-case');
const regexToggle = iconButton('regex', t('Use a regular expression'), 'sw-search-regex');
for (const b of [caseToggle, regexToggle]) b.setAttribute('aria-pressed', 'false');
const prevMatch = iconButton('arrow-up', t('Previous matching record (Shift+Enter)'), 'sw-search-prev');
const nextMatch = iconButton('arrow-down', t('Next matching record (Enter)'), 'sw-search-next');
searchWrap.append(icon('search'), searchInput, caseToggle, regexToggle, prevMatch, nextMatch);
const sortSelect = h('select', 'sw-sort');
sortSelect.setAttribute('aria-label', t('Sort records'));
const filterSelect = h('select', 'sw-filter');
filterSelect.setAttribute('aria-label', t('Show only some records'));
const viewChip = h('span', 'sw-view-chip');
viewChip.setAttribute('role', 'status');
viewChip.hidden = true;
toolbar.append(gotoLabel, gotoHint, searchWrap, sortSelect, filterSelect, viewChip, h('span', 'sw-spacer-flex'), detailToggle);

const main = h('div', 'sw-main');
const tableEl = h('section', 'sw-table');
tableEl.setAttribute('aria-label', t('Entries'));
const headWrap = h('div', 'sw-table-head');
const headRow = h('div', 'sw-row sw-row-head');
headWrap.append(headRow);
const viewport = h('div', 'sw-viewport');
viewport.tabIndex = 0;
viewport.setAttribute('role', 'grid');
const spacer = h('div', 'sw-spacer');
const rowsLayer = h('div', 'sw-rows');
spacer.append(rowsLayer);
viewport.append(spacer);
const emptyNote = h('div', 'sw-table-empty');
tableEl.append(headWrap, viewport, emptyNote);

const splitter = h('div', 'sw-splitter');
splitter.setAttribute('role', 'separator');
splitter.title = t('Drag to resize');

const detailEl = h('section', 'sw-detail');
detailEl.setAttribute('aria-label', t('Entry detail'));
detailEl.tabIndex = -1;
const detailHead = h('div', 'sw-detail-head');
const detailTitle = h('span', 'sw-detail-title');
const detailTokens = h('span', 'sw-badge sw-detail-tokens');
const detailLayout = h('span', 'sw-badge sw-detail-layout');
const openLineButton = h('button', 'sw-button sw-open-line');
openLineButton.type = 'button';
openLineButton.append(icon('go-to-file'), h('span', '', t('Open at line')));
const detailClose = iconButton('close', t('Hide the detail pane'), 'sw-detail-close');
detailHead.append(detailTitle, detailTokens, detailLayout, h('span', 'sw-spacer-flex'), openLineButton, detailClose);
const tabsEl = h('div', 'sw-tabs');
tabsEl.setAttribute('role', 'tablist');
const tabBody = h('div', 'sw-tab-body');
tabBody.id = 'sw-tab-panel';
tabBody.setAttribute('role', 'tabpanel');
detailEl.append(detailHead, tabsEl, tabBody);
detailEl.hidden = true;
splitter.hidden = true;

main.append(tableEl, splitter, detailEl);
// A one-line note from the host (Restricted Mode holding settings back), with its action.
const notice = h('div', 'sw-note sw-notice');
notice.setAttribute('role', 'status');
notice.hidden = true;

root.append(header, banner, notice, toolbar, main);

// ---- header ----
function renderHeader(): void {
  if (!info) return;
  fileNameEl.textContent = str(info.fileName);
  fileNameEl.title = str(info.fileName);
  formatEl.textContent = str(info.format);
  sizeEl.textContent = formatBytes(info.sizeBytes);
  fileIcon.className = `codicon codicon-${isTable() ? 'table' : 'json'} sw-file-icon`;
  document.title = str(info.fileName);

  factsEl.replaceChildren();
  for (const [k, v] of Object.entries(info.facts ?? {})) {
    const f = h('span', 'sw-fact');
    f.append(h('span', 'sw-fact-key', str(k)), h('span', 'sw-fact-value', str(v)));
    factsEl.append(f);
  }
  factsEl.hidden = factsEl.childElementCount === 0;
  renderStructure();
  renderEntriesCount();
}

/** The shard's layout beside its format: "layout turns · 98%", chosen by a setting or decided from the records. */
function renderLayout(m: { id: string | null; share: number; chosen: boolean }): void {
  if (m.id === null) {
    layoutEl.hidden = true;
    return;
  }
  const pct = Math.round(Math.max(0, Math.min(1, Number(m.share) || 0)) * 1000) / 10;
  layoutEl.replaceChildren(icon('symbol-namespace'), h('span', '', t('layout {0}', str(m.id))), h('span', 'sw-muted', t(' · {0}% of records', pct)));
  layoutEl.title = m.chosen
    ? t('Records are read as the "{0}" layout, as the settings or the project file say; {1}% of the records read so far fit it.', str(m.id), pct)
    : t('Records are read as the "{0}" layout, decided from the shard\'s first records; {1}% of the records read so far fit it.', str(m.id), pct);
  layoutEl.hidden = false;
}

/** Column widths that fit the largest number they can show (a six-digit record number is never cut). */
function fitNumberColumns(): void {
  const most = Math.max(entries, viewTotal);
  const digits = formatCount(Math.max(1, most)).length;
  root.style.setProperty('--sw-col-record', `max(64px, calc(${digits}ch + 20px))`);
  root.style.setProperty('--sw-col-place', `max(84px, calc(${digits + 4}ch + 20px))`);
}

function renderEntriesCount(): void {
  fitNumberColumns();
  const unit = info?.traits?.entries ?? 'lines';
  entriesEl.textContent = viewOn ? t('{0} of {1} {2}', formatCount(entries), formatCount(viewTotal), unit) : t('{0} {1}', formatCount(entries), unit);
  indexingEl.hidden = complete;
  const pct = Math.round(Math.max(0, Math.min(1, progress)) * 100);
  indexingEl.querySelector('.sw-indexing-text')!.textContent = t('indexing {0}%', pct);
  indexBarFill.style.width = `${pct}%`;
  indexBar.setAttribute('aria-valuenow', String(pct));
  emptyNote.hidden = entries > 0;
  emptyNote.textContent = complete ? t('This shard holds no entries.') : t('Reading the shard…');
}

function renderStructure(): void {
  structureEl.replaceChildren();
  const groups: GroupInfo[] = info?.groups ?? [];
  const columnar = isTable();
  const groupWord = info?.traits?.group?.many ?? 'groups';
  const summary = h('summary', 'sw-structure-summary');
  summary.append(icon('symbol-structure'), h('span', '', t('Structure')));
  const parts = [t(columns.length === 1 ? '{0} column' : '{0} columns', formatCount(columns.length))];
  if (columnar || groups.length) parts.push(t('{0} {1}', formatCount(groups.length), groupWord));
  summary.append(h('span', 'sw-muted', parts.join(' · ')));
  structureEl.append(summary);

  const body = h('div', 'sw-structure-body');
  const colTable = h('table', 'sw-columns-table');
  const ch = colTable.createTHead().insertRow();
  for (const label of [t('Column'), t('Type')]) ch.append(h('th', '', label));
  const cb = colTable.createTBody();
  for (const c of columns) {
    const r = cb.insertRow();
    r.dataset.column = str(c.name);
    r.insertCell().textContent = str(c.name);
    const tc = r.insertCell();
    tc.className = 'sw-type';
    tc.textContent = str(c.type);
  }
  body.append(colTable);

  if (groups.length) {
    const gTable = h('table', 'sw-groups-table');
    const gh = gTable.createTHead().insertRow();
    for (const label of [groupWord === 'batches' ? t('Batch') : t('Row group'), t('Rows'), t('First row'), t('Compressed'), t('Uncompressed'), t('Codecs')])
      gh.append(h('th', '', label));
    const gb = gTable.createTBody();
    for (const g of groups) {
      const r = gb.insertRow();
      r.dataset.group = String(g.index);
      r.insertCell().textContent = formatCount(g.index);
      r.insertCell().textContent = formatCount(g.rows);
      r.insertCell().textContent = formatCount(g.firstRow);
      r.insertCell().textContent = g.compressedBytes === undefined ? '–' : formatBytes(g.compressedBytes);
      r.insertCell().textContent = g.uncompressedBytes === undefined ? '–' : formatBytes(g.uncompressedBytes);
      const codecs = [...new Set(Object.values(g.codecs ?? {}).map(str))];
      r.insertCell().textContent = codecs.length ? codecs.join(', ') : '–';
    }
    body.append(gTable);
  }
  structureEl.append(body);
  structureEl.hidden = columns.length === 0 && groups.length === 0;
}

// ---- table ----
function fieldColumns(): ColumnInfo[] {
  return columns;
}

function renderHeadRow(): void {
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
      const s = query?.sort;
      const sorted = s?.key === 'tokens' ? (s.descending ? 'descending' : 'ascending') : 'none';
      c.setAttribute('aria-sort', sorted);
      if (sorted !== 'none') c.append(icon(sorted === 'descending' ? 'arrow-down' : 'arrow-up', 'sw-sort-mark'));
      c.title = t('Sort by tokens');
      const cycle = () => {
        sortSelect.value = sorted === 'none' ? 'tokens:desc' : sorted === 'descending' ? 'tokens:asc' : '';
        sendQuery();
      };
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
  const template = `var(--sw-col-record) var(--sw-col-place) var(--sw-col-tokens) var(--sw-col-marker)${
    n ? ` repeat(${n}, minmax(var(--sw-col-field-min), 1fr))` : ' 1fr'
  }`;
  tableEl.style.setProperty('--sw-grid', template);
  tableEl.style.setProperty('--sw-fields', String(n));
}

function rowAt(entry: number): RowView | undefined {
  return pages.peek(Math.floor(entry / PAGE))?.rows[entry % PAGE];
}

interface Geometry {
  viewH: number;
  spacerH: number;
  maxScroll: number;
  contentMax: number;
}

function geometry(): Geometry {
  const viewH = viewport.clientHeight;
  const total = entries * ROW_HEIGHT;
  const spacerH = Math.min(total, MAX_SPACER);
  return { viewH, spacerH, maxScroll: Math.max(0, spacerH - viewH), contentMax: Math.max(0, total - viewH) };
}

/** The content position (in unscaled px) the scroll bar stands at. */
function contentPos(g: Geometry): number {
  const st = Math.min(viewport.scrollTop, g.maxScroll);
  return g.maxScroll > 0 ? st * (g.contentMax / g.maxScroll) : 0;
}

function setContentPos(pos: number): void {
  const g = geometry();
  const p = Math.max(0, Math.min(g.contentMax, pos));
  viewport.scrollTop = g.contentMax > 0 ? p * (g.maxScroll / g.contentMax) : 0;
}

function visibleRange(): { first: number; count: number } {
  const g = geometry();
  const pos = contentPos(g);
  const first = Math.floor(pos / ROW_HEIGHT);
  return { first, count: Math.max(1, Math.floor(g.viewH / ROW_HEIGHT)) };
}

function queueRender(): void {
  if (renderQueued) return;
  renderQueued = true;
  requestAnimationFrame(() => {
    renderQueued = false;
    renderRows();
  });
}

function renderRows(): void {
  const g = geometry();
  spacer.style.height = `${g.spacerH}px`;
  const st = Math.min(viewport.scrollTop, g.maxScroll);
  const pos = contentPos(g);
  const first = Math.floor(pos / ROW_HEIGHT);
  const offset = pos - first * ROW_HEIGHT;
  const visible = Math.ceil((g.viewH + offset) / ROW_HEIGHT) + 1;
  const start = Math.max(0, first - OVERSCAN);
  const end = Math.min(entries, first + visible + OVERSCAN);
  rowsLayer.style.transform = `translateY(${st - offset - (first - start) * ROW_HEIGHT}px)`;
  const frag = document.createDocumentFragment();
  for (let e = start; e < end; e++) frag.append(buildRow(e));
  rowsLayer.replaceChildren(frag);
  // WAI-ARIA grid with virtual rows: the whole count, each row's index (the header row is 1), and
  // the selected row announced through aria-activedescendant while the grid has focus.
  viewport.setAttribute('aria-rowcount', String(entries + 1));
  if (selected >= start && selected < end) viewport.setAttribute('aria-activedescendant', `sw-row-${selected}`);
  else viewport.removeAttribute('aria-activedescendant');
  scheduleRequests(start, end);
}

/** Text with the search's matches marked (as text nodes and <mark> elements: nothing is parsed). */
function marked(text: string): Node[] {
  const s = query?.search;
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
  const r = rowAt(entry);
  const row = h('div', 'sw-row');
  row.dataset.entry = String(entry);
  row.id = `sw-row-${entry}`;
  row.setAttribute('role', 'row');
  row.setAttribute('aria-rowindex', String(entry + 2));
  if (entry === selected) {
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

function scheduleRequests(start: number, end: number): void {
  clearTimeout(requestTimer);
  const wanted = missingPages(start, end);
  if (!wanted.length) return;
  // The first screen and small moves are asked for at once; a drag waits for a pause.
  if (pages.size === 0 || wanted.length === 1) {
    requestPages(wanted);
    return;
  }
  requestTimer = setTimeout(() => {
    const r = currentRenderedRange();
    requestPages(missingPages(r.start, r.end));
  }, REQUEST_DELAY_MS);
}

function currentRenderedRange(): { start: number; end: number } {
  const { first, count } = visibleRange();
  return { start: Math.max(0, first - OVERSCAN), end: Math.min(entries, first + count + 1 + OVERSCAN) };
}

function missingPages(start: number, end: number): number[] {
  const out: number[] = [];
  if (end <= start) return out;
  for (let p = Math.floor(start / PAGE); p <= Math.floor((end - 1) / PAGE); p++) {
    if (inFlight.has(p)) continue;
    const page = pages.peek(p);
    const need = Math.min(PAGE, entries - p * PAGE);
    if (page && (page.rows.filter(Boolean).length >= need || page.entriesAt >= entries)) continue;
    out.push(p);
  }
  return out;
}

function requestPages(list: number[]): void {
  for (const p of list) {
    if (inFlight.has(p)) continue;
    const requestId = nextRequestId++;
    pending.set(requestId, p);
    inFlight.add(p);
    const start = p * PAGE;
    vscode.postMessage({ type: 'requestRows', requestId, start, count: Math.min(PAGE, Math.max(0, entries - start)) });
  }
}

function onRows(m: Extract<HostToRecordView, { type: 'rows' }>): void {
  const p = pending.get(m.requestId);
  if (p === undefined) return; // stale: asked before a reload, or never asked
  pending.delete(m.requestId);
  inFlight.delete(p);
  const page: Page = { rows: new Array(PAGE), entriesAt: entries };
  const rows = Array.isArray(m.rows) ? m.rows : [];
  const base = p * PAGE;
  const start = Number.isSafeInteger(m.start) ? m.start : base;
  rows.forEach((r, i) => {
    if (!r || typeof r !== 'object') return;
    const e = Number.isSafeInteger(r.entry) ? r.entry : start + i;
    if (e >= base && e < base + PAGE) page.rows[e - base] = r;
  });
  pages.set(p, page);
  queueRender();
}

function resetRows(): void {
  pages.clear();
  pending.clear();
  inFlight.clear();
  clearTimeout(requestTimer);
}

// ---- selection ----
function select(entry: number, opts: { fromHost?: boolean; reveal?: string; align?: 'nearest' | 'center' } = {}): void {
  if (entries <= 0 && !opts.fromHost) return;
  const e = opts.fromHost ? Math.max(0, entry) : Math.max(0, Math.min(entries - 1, entry));
  const changed = e !== selected;
  selected = e;
  scrollToEntry(e, opts.align ?? 'nearest');
  queueRender();
  vscode.setState({ fileName: info?.fileName ?? '', selected } satisfies SavedState);
  if (!opts.fromHost && changed) vscode.postMessage({ type: 'selected', entry: e });
  if (changed || opts.reveal !== undefined || opts.fromHost) {
    detailFor = e;
    showDetailLoading(e);
    const msg: RecordViewToHost = { type: 'requestDetail', entry: e };
    if (opts.reveal !== undefined) msg.reveal = opts.reveal;
    vscode.postMessage(msg);
  }
}

function scrollToEntry(entry: number, align: 'nearest' | 'center'): void {
  const g = geometry();
  const pos = contentPos(g);
  const top = entry * ROW_HEIGHT;
  if (align === 'center') {
    setContentPos(top - (g.viewH - ROW_HEIGHT) / 2);
  } else if (top < pos) {
    setContentPos(top);
  } else if (top + ROW_HEIGHT > pos + g.viewH) {
    setContentPos(top + ROW_HEIGHT - g.viewH);
  }
}

viewport.addEventListener('scroll', () => {
  headWrap.scrollLeft = viewport.scrollLeft;
  queueRender();
});

viewport.addEventListener('click', (ev) => {
  const row = (ev.target as Element).closest?.('.sw-row[data-entry]') as HTMLElement | null;
  if (!row) return;
  viewport.focus();
  select(Number(row.dataset.entry));
});

viewport.addEventListener('dblclick', (ev) => {
  const row = (ev.target as Element).closest?.('.sw-row[data-entry]') as HTMLElement | null;
  if (row) openDetailPane(true);
});

viewport.addEventListener('keydown', (ev) => {
  if (entries <= 0) return;
  const { count } = visibleRange();
  const cur = selected < 0 ? visibleRange().first - 1 : selected;
  let next: number | null = null;
  switch (ev.key) {
    case 'ArrowDown':
      next = cur + 1;
      break;
    case 'ArrowUp':
      next = cur - 1;
      break;
    case 'PageDown':
      next = cur + count;
      break;
    case 'PageUp':
      next = cur - count;
      break;
    case 'Home':
      next = 0;
      break;
    case 'End':
      next = entries - 1;
      break;
    case 'Enter':
      ev.preventDefault();
      if (selected >= 0) openDetailPane(true);
      return;
    default:
      return;
  }
  ev.preventDefault();
  select(Math.max(0, Math.min(entries - 1, next)));
});

new ResizeObserver(() => queueRender()).observe(viewport);

// ---- go to ----
gotoInput.addEventListener('keydown', (ev) => {
  if (ev.key === 'Escape') {
    gotoInput.value = '';
    gotoInput.classList.remove('sw-invalid');
    gotoHint.textContent = '';
    viewport.focus();
    return;
  }
  if (ev.key !== 'Enter') return;
  ev.preventDefault();
  // The host parses the place, with the same parser as the palette's Go to (engine/places.ts).
  gotoInput.classList.remove('sw-invalid');
  gotoInput.removeAttribute('aria-invalid');
  gotoHint.textContent = '';
  const text = gotoInput.value.trim();
  if (text) vscode.postMessage({ type: 'goto', text });
});
gotoInput.addEventListener('input', () => {
  gotoInput.classList.remove('sw-invalid');
  gotoInput.removeAttribute('aria-invalid');
});

// ---- search, sort, filter ----
let viewOn = false;
let viewTotal = 0;
let query: ViewQuery | null = null;
let searchTimer: ReturnType<typeof setTimeout> | undefined;

function fillSortOptions(): void {
  const keep = sortSelect.value;
  sortSelect.replaceChildren();
  const add = (value: string, label: string) => {
    const o = h('option', '', label);
    o.value = value;
    sortSelect.append(o);
  };
  add('', t('File order'));
  add('tokens:desc', t('Tokens, most first'));
  add('tokens:asc', t('Tokens, fewest first'));
  add('turns:desc', t('Turns, most first'));
  add('findings:desc', t('Findings, most first'));
  for (const c of columns) {
    if (!/^(string|int|uint|float|double|bool|number|boolean|large_string|utf8|date|timestamp)/i.test(str(c.type)) && str(c.type) !== '') continue;
    add(`column:asc:${str(c.name)}`, `${str(c.name)}, ascending`);
    add(`column:desc:${str(c.name)}`, `${str(c.name)}, descending`);
  }
  sortSelect.value = [...sortSelect.options].some((o) => o.value === keep) ? keep : '';
}

function fillFilterOptions(): void {
  if (filterSelect.options.length) return;
  for (const [value, label] of [
    ['', t('All records')],
    ['findings', t('With findings')],
    ['severity:error', t('With errors')],
    ['severity:warning', t('With warnings')],
    ['severity:info', t('With notes')],
    ['overContext', t('Over the context length')],
    ['rule', t('With findings of a rule…')],
  ]) {
    const o = h('option', '', label);
    o.value = value;
    filterSelect.append(o);
  }
}

function currentQuery(): ViewQuery | null {
  const q: ViewQuery = {};
  const text = searchInput.value;
  if (text !== '') q.search = { text, regex: regexToggle.getAttribute('aria-pressed') === 'true', caseSensitive: caseToggle.getAttribute('aria-pressed') === 'true' };
  const s = sortSelect.value;
  if (s) {
    const [key, dir, ...rest] = s.split(':');
    q.sort = { key: key as SortSpec['key'], descending: dir === 'desc', ...(key === 'column' ? { column: rest.join(':') } : {}) };
  }
  const f = filterSelect.value;
  if (f === 'findings' || f === 'overContext') q.filter = { kind: f };
  else if (f.startsWith('severity:')) q.filter = { kind: 'severity', severity: f.slice(9) as Severity };
  else if (f === 'kept' && query?.filter) q.filter = query.filter;
  return q.search || q.sort || q.filter ? q : null;
}

function sendQuery(): void {
  clearTimeout(searchTimer);
  vscode.postMessage({ type: 'query', query: currentQuery() });
}

searchInput.addEventListener('input', () => {
  clearTimeout(searchTimer);
  searchTimer = setTimeout(sendQuery, 300);
});
searchInput.addEventListener('keydown', (ev) => {
  if (ev.key === 'Enter') {
    ev.preventDefault();
    clearTimeout(searchTimer);
    if (JSON.stringify(currentQuery()) !== JSON.stringify(query)) return sendQuery();
    stepSelection(ev.shiftKey ? -1 : 1);
  } else if (ev.key === 'Escape') {
    searchInput.value = '';
    sendQuery();
    viewport.focus();
  }
});
for (const b of [caseToggle, regexToggle]) {
  b.addEventListener('click', () => {
    b.setAttribute('aria-pressed', String(b.getAttribute('aria-pressed') !== 'true'));
    b.classList.toggle('sw-on', b.getAttribute('aria-pressed') === 'true');
    if (searchInput.value) sendQuery();
  });
}
prevMatch.addEventListener('click', () => stepSelection(-1));
nextMatch.addEventListener('click', () => stepSelection(1));
sortSelect.addEventListener('change', sendQuery);
filterSelect.addEventListener('change', () => {
  if (filterSelect.value === 'rule') {
    filterSelect.value = query?.filter ? 'kept' : '';
    vscode.postMessage({ type: 'pickRule' });
    return;
  }
  sendQuery();
});

/** Moves the selection to the next or previous record of the view (the view holds only matches). */
function stepSelection(direction: 1 | -1): void {
  if (entries <= 0) return;
  const from = selected < 0 ? (direction > 0 ? -1 : entries) : selected;
  const to = Math.max(0, Math.min(entries - 1, from + direction));
  select(to, { align: 'center' });
}

function onView(m: Extract<HostToRecordView, { type: 'view' }>): void {
  if (m.error) {
    viewChip.replaceChildren(icon('warning'), h('span', '', str(m.error)));
    viewChip.classList.add('sw-view-error');
    viewChip.hidden = false;
    return;
  }
  viewChip.classList.remove('sw-view-error');
  if (m.searching !== undefined) {
    viewChip.replaceChildren(icon('loading', 'codicon-modifier-spin'), h('span', '', t('searching {0}%', Math.round(Math.max(0, Math.min(1, Number(m.searching) || 0)) * 100))));
    viewChip.hidden = false;
    return;
  }
  viewOn = !!m.active;
  viewTotal = Math.max(0, Number(m.total) || 0);
  query = m.active && m.query && typeof m.query === 'object' ? m.query : null;
  // The controls follow the host's view (a panel link, a rule picked in the host, a cleared view).
  if (!query) {
    sortSelect.value = '';
    filterSelect.value = '';
  } else {
    const f = query.filter;
    const fv = !f ? '' : f.kind === 'severity' ? `severity:${f.severity}` : f.kind === 'findings' || f.kind === 'overContext' ? f.kind : 'kept';
    if (fv === 'kept' && ![...filterSelect.options].some((o) => o.value === 'kept')) {
      const o = h('option', '', '');
      o.value = 'kept';
      filterSelect.append(o);
    }
    const kept = [...filterSelect.options].find((o) => o.value === 'kept');
    if (kept) kept.textContent = f && fv === 'kept' ? describeFilter(f) : '';
    filterSelect.value = fv;
    const s = query.sort;
    sortSelect.value = s ? `${s.key}:${s.descending ? 'desc' : 'asc'}${s.key === 'column' ? `:${str(s.column)}` : ''}` : '';
  }
  const count = Math.max(0, Number(m.count) || 0);
  viewChip.replaceChildren();
  if (viewOn) {
    const clear = iconButton('close', t('Show every record in file order'), 'sw-view-clear');
    clear.addEventListener('click', () => {
      searchInput.value = '';
      sortSelect.value = '';
      filterSelect.value = '';
      sendQuery();
    });
    const unit = count === 1 ? 'record' : 'records';
    viewChip.append(icon('filter'), h('span', 'sw-view-count', `${formatCount(count)} ${unit}`), h('span', 'sw-view-label', str(m.label)), clear);
    viewChip.title = t('{0} of {1} lines or rows: {2}', formatCount(count), formatCount(viewTotal), str(m.label));
  }
  viewChip.hidden = !viewOn;
  entries = count;
  renderHeadRow();
  selected = -1;
  detailFor = -1;
  detailEl.hidden = true;
  splitter.hidden = true;
  resetRows();
  setContentPos(0);
  renderEntriesCount();
  renderRows();
}

function describeFilter(f: FilterSpec): string {
  return f.kind === 'rule' ? t('Rule {0}', str(f.rule)) : f.kind === 'column' ? `${str(f.column)} = ${JSON.stringify(f.value)}` : f.kind === 'tokensAtLeast' ? t('{0} tokens or more', formatCount(f.tokens)) : t('Filtered');
}

window.addEventListener('keydown', (ev) => {
  if ((ev.ctrlKey || ev.metaKey) && !ev.altKey && ev.key.toLowerCase() === 'f') {
    ev.preventDefault();
    searchInput.focus();
    searchInput.select();
  } else if (ev.key === 'F8') {
    ev.preventDefault();
    vscode.postMessage({ type: 'step', direction: ev.shiftKey ? -1 : 1, from: selected });
  }
});

// ---- detail ----
let detailOpen = true;

function openDetailPane(focus: boolean): void {
  detailOpen = true;
  detailEl.hidden = selected < 0;
  splitter.hidden = detailEl.hidden;
  if (focus && !detailEl.hidden) {
    (tabsEl.querySelector('.sw-tab-active') as HTMLElement | null)?.focus() ?? detailEl.focus();
  }
}

detailToggle.addEventListener('click', () => {
  if (detailOpen && !detailEl.hidden) {
    detailOpen = false;
    detailEl.hidden = true;
    splitter.hidden = true;
  } else openDetailPane(false);
});
detailClose.addEventListener('click', () => {
  detailOpen = false;
  detailEl.hidden = true;
  splitter.hidden = true;
  viewport.focus();
});
openLineButton.addEventListener('click', () => {
  if (selected >= 0) vscode.postMessage({ type: 'openText', entry: detail?.entry ?? selected });
});

function showDetailLoading(entry: number): void {
  if (!detailOpen) return;
  detailEl.hidden = false;
  splitter.hidden = false;
  detailEl.classList.add('sw-detail-loading');
  detailTitle.textContent = rowAt(entry) ? placeTitle(rowAt(entry)!.record, str(rowAt(entry)!.place)) : t('Entry {0}', formatCount(entry + 1));
}

function placeTitle(record: number | null | undefined, place: string): string {
  const rec = record === null || record === undefined ? t('No record') : t('Record #{0}', formatCount(record + 1));
  const columnar = isTable();
  return place ? `${rec} · ${columnar || /^row\b/i.test(place) ? place : `line ${place}`}` : rec;
}

function onDetail(d: DetailView): void {
  if (!d || typeof d !== 'object') return;
  if (d.entry !== detailFor) return; // an answer for a selection the user has moved past
  detail = d;
  detailEl.classList.remove('sw-detail-loading');
  if (!detailOpen) return;
  detailEl.hidden = false;
  splitter.hidden = false;
  detailEl.dataset.entry = String(d.entry);
  detailTitle.textContent = placeTitle(d.record, str(d.place));
  detailTokens.textContent = d.tokens === null || d.tokens === undefined ? '' : `${formatCount(d.tokens)} tokens`;
  detailTokens.hidden = d.tokens === null || d.tokens === undefined;
  detailLayout.textContent = typeof d.layout === 'string' ? d.layout : '';
  detailLayout.title = t('The layout this record was read with');
  detailLayout.hidden = typeof d.layout !== 'string' || d.layout === '';
  openLineButton.hidden = isTable();

  const tabs: [Tab, string, string, number | null][] = [];
  const turns = Array.isArray(d.turns) ? d.turns : null;
  const findings = Array.isArray(d.findings) ? d.findings : [];
  if (turns || (Array.isArray(d.media) && d.media.length)) tabs.push(['conversation', t('Conversation'), 'comment-discussion', turns ? turns.length : 0]);
  if (d.pair && typeof d.pair === 'object') tabs.push(['pair', t('Pair'), 'git-compare', null]);
  if (Array.isArray(d.rendered) && d.rendered.length) tabs.push(['rendered', t('Rendered'), 'symbol-key', null]);
  tabs.push(['json', d.value === undefined ? t('Raw') : t('JSON'), 'json', null]);
  tabs.push(['findings', t('Findings'), 'issues', findings.length]);
  const names = tabs.map((t) => t[0]);
  let tab: Tab = activeTab && names.includes(activeTab) ? activeTab : names[0];
  if (d.reveal !== undefined) tab = 'json';

  tabsEl.replaceChildren();
  for (const [id, label, ic, count] of tabs) {
    const b = h('button', 'sw-tab');
    b.type = 'button';
    b.dataset.tab = id;
    b.setAttribute('role', 'tab');
    b.id = `sw-tab-${id}`;
    b.setAttribute('aria-controls', 'sw-tab-panel');
    b.append(icon(ic), h('span', '', label));
    if (count !== null) b.append(h('span', 'sw-count', formatCount(count)));
    if (id === 'findings' && findings.length) {
      const worst = findings.some((f) => f.severity === 'error') ? 'error' : findings.some((f) => f.severity === 'warning') ? 'warning' : 'info';
      b.dataset.severity = worst;
    }
    b.addEventListener('click', () => {
      activeTab = id;
      showTab(id);
    });
    // Tabs as WAI-ARIA describes them: arrows (and Home/End) move between tabs and select them.
    b.addEventListener('keydown', (ev) => {
      const all = [...tabsEl.querySelectorAll<HTMLElement>('.sw-tab')];
      const i = all.indexOf(b);
      const to = ev.key === 'ArrowRight' ? (i + 1) % all.length : ev.key === 'ArrowLeft' ? (i - 1 + all.length) % all.length : ev.key === 'Home' ? 0 : ev.key === 'End' ? all.length - 1 : -1;
      if (to < 0) return;
      ev.preventDefault();
      const t = all[to].dataset.tab as Tab;
      activeTab = t;
      showTab(t);
      all[to].focus();
    });
    tabsEl.append(b);
  }
  showTab(tab);
  if (d.reveal !== undefined) revealPointer(str(d.reveal));
}

function showTab(tab: Tab): void {
  if (!detail) return;
  for (const b of tabsEl.querySelectorAll<HTMLElement>('.sw-tab')) {
    const on = b.dataset.tab === tab;
    b.classList.toggle('sw-tab-active', on);
    b.setAttribute('aria-selected', String(on));
    b.tabIndex = on ? 0 : -1;
    if (on) tabBody.setAttribute('aria-labelledby', b.id);
  }
  tabBody.replaceChildren();
  tabBody.dataset.tab = tab;
  if (detail.truncated) {
    const note = h('div', 'sw-note');
    note.append(icon('info'), h('span', '', t('Long values are cut in this view. Open at line to read them in full.')));
    tabBody.append(note);
  }
  switch (tab) {
    case 'conversation':
      tabBody.append(renderConversation(Array.isArray(detail.turns) ? detail.turns : [], detail));
      break;
    case 'pair':
      if (detail.pair && typeof detail.pair === 'object') tabBody.append(renderPair(detail.pair));
      break;
    case 'rendered':
      tabBody.append(renderRendered(Array.isArray(detail.rendered) ? detail.rendered : []));
      break;
    case 'json':
      tabBody.append(detail.value === undefined ? renderRaw(detail.raw) : renderTree(detail.value));
      break;
    case 'findings':
      tabBody.append(renderDetailFindings(detail.findings ?? []));
      break;
  }
}

const KNOWN_ROLES = new Set(['system', 'user', 'assistant', 'tool']);

/** Only these four raster formats, as base64, may become an <img>: the host sniffed them, and we check again. */
const THUMBNAIL_SRC = /^data:image\/(?:png|jpeg|gif|webp);base64,[A-Za-z0-9+/]*={0,2}$/;
const MEDIA_ICON: Record<string, string> = { image: 'file-media', audio: 'unmute', video: 'device-camera-video', file: 'file' };

interface TurnOptions {
  /** Index of the first prompt turn where a pair's sides differ. */
  differs?: number | null;
}

function renderConversation(turns: TurnView[], d: DetailView): HTMLElement {
  const list = h('div', 'sw-conversation');
  if (typeof d.toolsPointer === 'string') {
    const tools = h('button', 'sw-button sw-tools-link');
    tools.type = 'button';
    tools.append(icon('tools'), h('span', '', t('Tool definitions')));
    tools.title = t('Show the tools this record offers in the JSON tree');
    const pointer = d.toolsPointer;
    tools.addEventListener('click', () => showInTree(pointer));
    list.append(tools);
  }
  if (Array.isArray(d.media) && d.media.length) {
    const media = h('div', 'sw-record-media');
    media.append(h('div', 'sw-record-media-head', t('Media of the record')));
    for (const p of d.media) if (p && typeof p === 'object') media.append(renderPart(p));
    list.append(media);
  }
  if (!turns.length) list.append(h('div', 'sw-muted', t('This conversation has no turns.')));
  appendTurns(list, turns, {});
  return list;
}

function appendTurns(list: HTMLElement, turns: unknown[], opts: TurnOptions): void {
  for (const t of turns) if (t && typeof t === 'object') list.append(renderTurn(t as TurnView, list, opts));
}

function showInTree(pointer: string): void {
  activeTab = 'json';
  showTab('json');
  revealPointer(pointer);
}

function renderTurn(tv: TurnView, scope: HTMLElement, opts: TurnOptions): HTMLElement {
  const role = str(tv.role);
  const turn = h('article', `sw-turn sw-role-${KNOWN_ROLES.has(role) ? role : 'other'}`);
  turn.dataset.role = role;
  turn.dataset.turn = String(tv.index);
  turn.dataset.pointer = str(tv.pointer);
  const head = h('div', 'sw-turn-head');
  head.append(h('span', 'sw-role', role || t('(no role)')));
  if (tv.tokens !== null && tv.tokens !== undefined) head.append(h('span', 'sw-turn-tokens', t('{0} tokens', formatCount(tv.tokens))));
  if (tv.trainable === false) {
    turn.classList.add('sw-turn-untrained');
    const tag = h('span', 'sw-tag sw-untrained-tag');
    tag.title = t('The record excludes this turn from the loss');
    tag.append(icon('circle-slash'), h('span', '', t('not trained on')));
    head.append(tag);
  }
  if (opts.differs !== null && opts.differs !== undefined && tv.index === opts.differs) {
    turn.classList.add('sw-turn-differs');
    const tag = h('span', 'sw-tag sw-differs-tag');
    tag.title = t('The prompts of chosen and rejected differ from this turn on');
    tag.append(icon('diff'), h('span', '', t('differs')));
    head.append(tag);
  }
  if (tv.answers && typeof tv.answers === 'object') head.append(answersLink(tv.answers, scope));
  head.append(h('span', 'sw-spacer-flex'));
  const show = iconButton('json', t('Show this turn in the JSON tree'), 'sw-turn-to-json');
  const pointer = str(tv.pointer);
  show.addEventListener('click', () => showInTree(pointer));
  head.append(show);
  const body = h('div', 'sw-turn-content');
  if (Array.isArray(tv.parts)) {
    for (const p of tv.parts) if (p && typeof p === 'object') body.append(renderPart(p));
  } else body.append(...visibleText(str(tv.content)));
  turn.append(head, body);
  return turn;
}

/** "answers call_1 · get_weather": a button that scrolls to the call when it is on screen. */
function answersLink(answers: { id: string; name: string | null }, scope: HTMLElement): HTMLElement {
  const id = str(answers.id);
  const name = answers.name === null || answers.name === undefined ? '' : str(answers.name);
  const link = h('button', 'sw-answers');
  link.type = 'button';
  link.dataset.callId = id;
  link.title = name ? t('Answers the call {0} to {1}', id, name) : t('Answers the call {0}, which no earlier turn makes', id);
  link.append(icon('reply'), h('span', '', name ? t('answers {0} · {1}', id, name) : t('answers {0}', id)));
  link.addEventListener('click', () => {
    const calls = [...scope.querySelectorAll<HTMLElement>('.sw-part-tool-call')].filter((c) => c.dataset.callId === id);
    const call = calls.at(-1);
    if (!call) return;
    for (const old of scope.querySelectorAll('.sw-part-flash')) old.classList.remove('sw-part-flash');
    call.classList.add('sw-part-flash');
    call.scrollIntoView({ block: 'nearest' });
  });
  return link;
}

function renderPart(p: PartView): HTMLElement {
  const el = renderPartBody(p);
  el.dataset.pointer = str(p.pointer);
  return el;
}

function renderPartBody(p: PartView): HTMLElement {
  switch (p.kind) {
    case 'text':
    {
      const d = h('div', 'sw-part sw-part-text');
      d.append(...visibleText(str(p.text)));
      return d;
    }
    case 'reasoning': {
      const box = h('details', 'sw-part sw-part-reasoning');
      const summary = h('summary', 'sw-part-reasoning-head');
      summary.append(icon('lightbulb'), h('span', '', t('Reasoning')));
      box.append(summary, h('div', 'sw-part-reasoning-text', str(p.text)));
      return box;
    }
    case 'tool-call': {
      const box = h('div', 'sw-part sw-part-tool-call');
      if (p.id !== null && p.id !== undefined) box.dataset.callId = str(p.id);
      const head = h('div', 'sw-tool-head');
      head.append(icon('tools'), h('span', 'sw-tool-label', t('calls')), h('span', 'sw-tool-name', str(p.name)));
      if (p.id !== null && p.id !== undefined) head.append(h('span', 'sw-call-id', str(p.id)));
      box.append(head);
      const args = str(p.arguments);
      if (args !== '') {
        const pre = h('pre', 'sw-tool-args');
        pre.append(h('code', '', args));
        box.append(pre);
      }
      return box;
    }
    case 'media': {
      const chip = str(p.chip);
      const src = typeof p.src === 'string' ? p.src : '';
      if (src && THUMBNAIL_SRC.test(src)) {
        const fig = h('figure', 'sw-part sw-part-media sw-thumb');
        const img = h('img', 'sw-thumb-image');
        img.alt = chip;
        img.src = src;
        fig.append(img, h('figcaption', 'sw-thumb-caption', chip));
        return fig;
      }
      const media = str(p.media);
      const ic = p.inline ? (Object.hasOwn(MEDIA_ICON, media) ? MEDIA_ICON[media] : 'file') : /^[a-z][a-z0-9+.-]*:/i.test(chip) ? 'link' : 'file';
      const box = h('span', 'sw-part sw-part-media sw-chip');
      box.title = p.inline ? t('{0} held in the record', media) : t('{0} at a location the view does not open', media);
      box.append(icon(ic), h('span', 'sw-chip-text', chip));
      return box;
    }
    default: {
      const box = h('span', 'sw-part sw-part-unknown sw-chip');
      box.append(icon('question'), h('span', 'sw-chip-text', t('part of type {0} not shown', JSON.stringify(str((p as { type?: unknown }).type)))));
      return box;
    }
  }
}

function renderPair(pair: PairView): HTMLElement {
  const box = h('div', 'sw-pair');
  const differs = typeof pair.promptDiffers === 'number' ? pair.promptDiffers : null;
  if (differs !== null) {
    const note = h('div', 'sw-note sw-pair-differs');
    note.append(icon('diff'), h('span', '', t('Chosen and rejected carry different prompts, from turn {0} on.', formatCount(differs + 1))));
    box.append(note);
  }
  const side = (cls: 'prompt' | 'chosen' | 'rejected', label: string, ic: string, s: PairSideView | undefined): HTMLElement => {
    const el = h('div', `sw-pair-side sw-pair-${cls}`);
    const head = h('div', 'sw-pair-head');
    head.append(icon(ic), h('span', '', label));
    if (s && s.tokens !== null && s.tokens !== undefined) head.append(h('span', 'sw-pair-tokens', t('{0} tokens', formatCount(s.tokens))));
    if (s && s.transcript) head.append(h('span', 'sw-tag', t('from a transcript')));
    el.append(head);
    if (!s || typeof s !== 'object' || !s.present) {
      el.append(h('div', 'sw-muted', t('Not in the record.')));
      return el;
    }
    el.dataset.pointer = str(s.pointer);
    if (Array.isArray(s.turns)) {
      const list = h('div', 'sw-conversation');
      if (!s.turns.length) list.append(h('div', 'sw-muted', t('No turns.')));
      appendTurns(list, s.turns, { differs: cls === 'prompt' ? null : differs });
      el.append(list);
    } else el.append(h('div', 'sw-pair-text', str(s.text)));
    return el;
  };
  if (pair.prompt && typeof pair.prompt === 'object' && pair.prompt.present) box.append(side('prompt', t('Prompt'), 'comment', pair.prompt));
  const sides = h('div', 'sw-pair-sides');
  sides.append(side('chosen', t('Chosen'), 'thumbsup', pair.chosen), side('rejected', t('Rejected'), 'thumbsdown', pair.rejected));
  box.append(sides);
  return box;
}

/** Each sequence as the chat template renders it, the spans the loss covers marked; text nodes only. */
function renderRendered(seqs: RenderedView[]): HTMLElement {
  const box = h('div', 'sw-rendered');
  for (const s of seqs) {
    if (!s || typeof s !== 'object') continue;
    const sec = h('section', 'sw-rendered-seq');
    const head = h('div', 'sw-rendered-head');
    const overhead = Number(s.rendered) - Number(s.content);
    head.append(
      h('span', 'sw-rendered-name', str(s.name)),
      h('span', 'sw-badge', t('{0} rendered', formatCount(Number(s.rendered) || 0))),
      h('span', 'sw-muted', t('{0} content · {1}{2} template', formatCount(Number(s.content) || 0), overhead >= 0 ? '+' : '−', formatCount(Math.abs(overhead) || 0))),
      h('span', 'sw-badge sw-trained-badge', t('{0} trained', formatCount(Number(s.trainable) || 0))),
    );
    sec.append(head);
    if (typeof s.error === 'string') {
      const err = h('div', 'sw-note sw-rendered-error');
      err.append(icon('error'), h('span', '', t('The chat template could not render this sequence: {0}', s.error)));
      sec.append(err);
    } else {
      const pre = h('pre', 'sw-rendered-text');
      const text = str(s.text);
      let at = 0;
      const spans = (Array.isArray(s.spans) ? s.spans : [])
        .map((x) => ({ start: Math.max(0, Number(x?.start) || 0), end: Math.min(text.length, Number(x?.end) || 0) }))
        .filter((x) => x.end > x.start)
        .sort((a, b) => a.start - b.start);
      for (const sp of spans) {
        if (sp.start < at) continue;
        if (sp.start > at) pre.append(document.createTextNode(text.slice(at, sp.start)));
        const mark = h('mark', 'sw-trained', text.slice(sp.start, sp.end));
        mark.title = t('Inside the loss: the model is trained on these tokens');
        pre.append(mark);
        at = sp.end;
      }
      if (at < text.length) pre.append(document.createTextNode(text.slice(at)));
      if (s.cut) pre.append(h('span', 'sw-muted', '…'));
      sec.append(pre);
    }
    box.append(sec);
  }
  return box;
}

function renderRaw(raw: string | undefined): HTMLElement {
  const box = h('div', 'sw-raw');
  const text = str(raw);
  box.textContent = text === '' ? t('(blank line)') : text;
  return box;
}

// ---- JSON tree ----
function pointerToken(key: string | number): string {
  return String(key).replace(/~/g, '~0').replace(/\//g, '~1');
}

function renderTree(value: unknown): HTMLElement {
  const tree = h('div', 'sw-tree');
  tree.setAttribute('role', 'tree');
  tree.append(treeNode(null, value, '', 0));
  return tree;
}

function treeNode(key: string | null, value: unknown, pointer: string, depth: number): HTMLElement {
  const node = h('div', 'sw-node');
  node.dataset.pointer = pointer;
  node.setAttribute('role', 'treeitem');
  node.setAttribute('aria-level', String(depth + 1));
  node.tabIndex = depth === 0 ? 0 : -1;
  const line = h('div', 'sw-node-line');
  const isArr = Array.isArray(value);
  const isObj = !isArr && value !== null && typeof value === 'object';
  const setOpen = (open: boolean) => {
    node.classList.toggle('sw-collapsed', !open);
    node.setAttribute('aria-expanded', String(open));
  };
  if (isArr || isObj) {
    const fold = iconButton('chevron-down', t('Fold'), 'sw-node-toggle');
    fold.tabIndex = -1;
    fold.addEventListener('click', () => setOpen(node.classList.contains('sw-collapsed')));
    line.append(fold);
  } else line.append(h('span', 'sw-node-leaf-pad'));
  // The tree pattern's keys: Up/Down move, Right opens (or goes to the first child), Left closes (or goes to the parent).
  node.addEventListener('keydown', (ev) => {
    if (ev.target !== node) return;
    // The items a person sees: those with no folded ancestor.
    const all = [...(node.closest('.sw-tree')?.querySelectorAll<HTMLElement>('[role="treeitem"]') ?? [])];
    const shown = all.filter((n) => !n.parentElement?.closest('.sw-node.sw-collapsed'));
    const i = shown.indexOf(node);
    const go = (el: HTMLElement | undefined) => {
      if (!el) return;
      node.tabIndex = -1;
      el.tabIndex = 0;
      el.focus();
    };
    const expandable = node.hasAttribute('aria-expanded');
    if (ev.key === 'ArrowDown') go(shown[i + 1]);
    else if (ev.key === 'ArrowUp') go(shown[i - 1]);
    else if (ev.key === 'ArrowRight' && expandable) {
      if (node.getAttribute('aria-expanded') === 'false') setOpen(true);
      else go(node.querySelector<HTMLElement>(':scope > .sw-node-children > [role="treeitem"]') ?? undefined);
    } else if (ev.key === 'ArrowLeft') {
      if (expandable && node.getAttribute('aria-expanded') === 'true') setOpen(false);
      else go(node.parentElement?.closest<HTMLElement>('[role="treeitem"]') ?? undefined);
    } else return;
    ev.preventDefault();
  });
  if (key !== null) line.append(h('span', 'sw-key', key), h('span', 'sw-punct', ': '));
  node.append(line);
  if (depth >= TREE_MAX_DEPTH) {
    line.append(h('span', 'sw-muted', t('… nested too deep to show')));
    return node;
  }
  if (isArr || isObj) {
    const items: [string, unknown][] = isArr
      ? (value as unknown[]).map((v, i) => [String(i), v])
      : Object.entries(value as Record<string, unknown>);
    line.append(h('span', 'sw-summary', isArr ? `[${formatCount(items.length)}]` : `{${formatCount(items.length)}}`));
    const children = h('div', 'sw-node-children');
    children.setAttribute('role', 'group');
    node.append(children);
    setOpen(depth < 6);
    let shown = 0;
    const more = h('button', 'sw-button sw-tree-more');
    more.type = 'button';
    const showBatch = (): void => {
      const stop = Math.min(items.length, shown + TREE_BATCH);
      for (; shown < stop; shown++) {
        const [k, v] = items[shown];
        children.insertBefore(treeNode(k, v, `${pointer}/${pointerToken(k)}`, depth + 1), more.isConnected ? more : null);
      }
      if (shown < items.length) {
        more.textContent = t('Show {0} more of {1}', formatCount(Math.min(TREE_BATCH, items.length - shown)), formatCount(items.length - shown));
        if (!more.isConnected) children.append(more);
      } else more.remove();
    };
    more.addEventListener('click', showBatch);
    showBatch();
    return node;
  }
  const v = h('span', `sw-value sw-t-${value === null ? 'null' : typeof value}`);
  v.append(...visibleText(typeof value === 'string' ? JSON.stringify(value) : value === null ? 'null' : str(value)));
  line.append(v);
  return node;
}

/** Scrolls the node at `pointer` (or its nearest shown ancestor) into view and marks it. */
function revealPointer(pointer: string): void {
  const tree = tabBody.querySelector('.sw-tree');
  if (!tree) return;
  for (const old of tree.querySelectorAll('.sw-node-revealed')) old.classList.remove('sw-node-revealed');
  const byPointer = new Map<string, HTMLElement>();
  for (const n of tree.querySelectorAll<HTMLElement>('.sw-node')) byPointer.set(n.dataset.pointer ?? '', n);
  let p = pointer;
  let node = byPointer.get(p);
  while (!node && p !== '') {
    p = p.slice(0, Math.max(0, p.lastIndexOf('/')));
    node = byPointer.get(p);
  }
  if (!node) return;
  for (let a: HTMLElement | null = node; a && a !== tree; a = a.parentElement) a.classList.remove('sw-collapsed');
  node.classList.add('sw-node-revealed');
  node.scrollIntoView({ block: 'center' });
}

function renderDetailFindings(findings: FindingView[]): HTMLElement {
  const list = h('div', 'sw-detail-findings');
  if (!findings.length) {
    const ok = h('div', 'sw-muted sw-all-clear');
    ok.append(icon('pass'), h('span', '', t('No findings for this entry.')));
    list.append(ok);
  }
  for (const f of findings) {
    if (!f || typeof f !== 'object') continue;
    const item = h('div', 'sw-finding sw-detail-finding');
    item.tabIndex = 0;
    item.setAttribute('role', 'button');
    item.dataset.id = String(f.id);
    if (f.pointer !== null && f.pointer !== undefined) item.dataset.pointer = str(f.pointer);
    const sev: Severity = isSeverity(f.severity) ? f.severity : 'info';
    item.dataset.severity = sev;
    item.title = t('Open the text at this place');
    item.append(
      severityIcon(sev),
      h('span', 'sw-rule', str(f.rule)),
      h('span', 'sw-message', str(f.message)),
      h('span', 'sw-place', str(f.place)),
    );
    const open = (): void => {
      const m: RecordViewToHost = { type: 'openText', entry: detail?.entry ?? selected };
      if (f.pointer !== null && f.pointer !== undefined) m.pointer = str(f.pointer);
      vscode.postMessage(m);
    };
    item.addEventListener('click', open);
    item.addEventListener('keydown', (ev) => {
      if (ev.key === 'Enter' || ev.key === ' ') {
        ev.preventDefault();
        open();
      }
    });
    list.append(item);
  }
  return list;
}

// ---- splitter: drag, or arrow keys while focused, to resize the detail pane ----
splitter.tabIndex = 0;
splitter.setAttribute('aria-label', t('Resize the detail pane'));
splitter.addEventListener('keydown', (ev) => {
  const vertical = getComputedStyle(main).flexDirection === 'column';
  const grow = vertical ? ev.key === 'ArrowUp' : ev.key === 'ArrowLeft';
  const shrink = vertical ? ev.key === 'ArrowDown' : ev.key === 'ArrowRight';
  if (!grow && !shrink) return;
  ev.preventDefault();
  const rect = main.getBoundingClientRect();
  const now = detailEl.getBoundingClientRect();
  const size = (vertical ? now.height : now.width) + (grow ? 24 : -24);
  const max = (vertical ? rect.height : rect.width) - 120;
  const v = Math.max(160, Math.min(max, size));
  main.style.setProperty('--sw-detail-size', `${v}px`);
  splitter.setAttribute('aria-valuenow', String(Math.round(v)));
  queueRender();
});
splitter.addEventListener('pointerdown', (ev) => {
  splitter.setPointerCapture(ev.pointerId);
  const vertical = getComputedStyle(main).flexDirection === 'column';
  const rect = main.getBoundingClientRect();
  const move = (e: PointerEvent): void => {
    const size = vertical ? rect.bottom - e.clientY : rect.right - e.clientX;
    const max = (vertical ? rect.height : rect.width) - 120;
    main.style.setProperty('--sw-detail-size', `${Math.max(160, Math.min(max, size))}px`);
  };
  const up = (): void => {
    splitter.removeEventListener('pointermove', move);
    splitter.removeEventListener('pointerup', up);
    queueRender();
  };
  splitter.addEventListener('pointermove', move);
  splitter.addEventListener('pointerup', up);
});

// ---- messages ----
function onInit(m: InitMessage): void {
  const sameFile = info?.fileName === m.fileName;
  info = m;
  entries = Math.max(0, Number(m.entries) || 0);
  complete = !!m.complete;
  progress = complete ? 1 : 0;
  columns = Array.isArray(m.columns) ? m.columns.filter((c) => c && typeof c === 'object') : [];
  resetRows();
  banner.hidden = true;
  viewOn = false;
  viewChip.hidden = true;
  fillSortOptions();
  fillFilterOptions();
  renderHeader();
  renderHeadRow();
  if (!sameFile) {
    selected = -1;
    detail = null;
    detailFor = -1;
    detailEl.hidden = true;
    splitter.hidden = true;
    viewport.scrollTop = 0;
  }
  renderRows();
  const saved = vscode.getState() as Partial<SavedState> | undefined;
  if (!sameFile && saved && saved.fileName === m.fileName && Number.isSafeInteger(saved.selected) && saved.selected! >= 0) {
    if (saved.selected! < entries) select(saved.selected!, { align: 'center' });
  }
}

function onMessage(m: HostToRecordView): void {
  switch (m.type) {
    case 'init':
      onInit(m);
      break;
    case 'entries': {
      const was = entries;
      entries = Math.max(0, Number(m.entries) || 0);
      complete = !!m.complete;
      progress = Number(m.progress) || 0;
      renderEntriesCount();
      if (entries !== was) queueRender();
      break;
    }
    case 'rows':
      onRows(m);
      break;
    case 'detail':
      onDetail(m.detail);
      break;
    case 'select': {
      if (!Number.isSafeInteger(m.entry) || m.entry < 0) break;
      openDetailPane(false);
      detailOpen = true;
      select(m.entry, { fromHost: true, reveal: m.pointer === undefined ? undefined : str(m.pointer), align: 'center' });
      break;
    }
    case 'columns':
      columns = Array.isArray(m.columns) ? m.columns.filter((c) => c && typeof c === 'object') : [];
      resetRows(); // cached rows lack cells for new columns
      fillSortOptions();
      renderHeadRow();
      renderStructure();
      renderRows();
      break;
    case 'layout':
      renderLayout(m);
      break;
    case 'refresh': {
      // New token counts or findings: ask again for the rows on screen, keep showing the old ones
      // meanwhile, and forget the rest so they are fetched fresh when scrolled to.
      const r = currentRenderedRange();
      const first = Math.floor(r.start / PAGE);
      const last = r.end > r.start ? Math.floor((r.end - 1) / PAGE) : first - 1;
      for (const p of pages.keys()) if (p < first || p > last) pages.delete(p);
      const visible: number[] = [];
      for (let p = first; p <= last; p++) visible.push(p);
      requestPages(visible);
      break;
    }
    case 'view':
      onView(m);
      break;
    case 'notice': {
      notice.replaceChildren(icon('shield'), h('span', 'sw-notice-text', str(m.message)));
      if (m.action && m.action.id === 'manageTrust') {
        const id = m.action.id;
        const link = h('button', 'sw-link', str(m.action.label));
        link.type = 'button';
        link.addEventListener('click', () => vscode.postMessage({ type: 'noticeAction', id }));
        notice.append(link);
      }
      notice.hidden = false;
      break;
    }
    case 'gotoInvalid':
      gotoInput.classList.add('sw-invalid');
      gotoInput.setAttribute('aria-invalid', 'true');
      gotoHint.textContent = str(m.message);
      break;
    case 'error':
      banner.replaceChildren(icon('error'), h('span', 'sw-banner-text', str(m.message)));
      banner.hidden = false;
      break;
  }
}

window.addEventListener('message', (ev: MessageEvent) => {
  const m = ev.data;
  if (!isMessage(m)) return;
  try {
    onMessage(m as HostToRecordView);
  } catch (err) {
    banner.replaceChildren(icon('error'), h('span', 'sw-banner-text', t('This view could not show a message from the extension: {0}', str((err as Error)?.message ?? err))));
    banner.hidden = false;
  }
});

renderEntriesCount();
vscode.postMessage({ type: 'ready' });
