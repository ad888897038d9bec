// The toolbar over the grid: Go to, and the search, sort and filter the host runs over the whole
// shard in its worker (a "view"), with the chip that names the view and clears it.

import type { FilterSpec, HostToRecordView, Severity, SortSpec, ViewQuery } from '../../protocol.js';
import { formatCount, h, icon, iconButton, str, t } from '../common.js';
import { stepTarget } from './gridGeometry.js';
import { state, vscode } from './state.js';

/** What the toolbar asks of the rest of the view. */
export interface ToolbarHooks {
  select(entry: number, opts: { align: 'center' }): void;
  /** The grid now shows another view: its entries, from the top, nothing selected. */
  viewChanged(): void;
  focusGrid(): void;
}

let hooks: ToolbarHooks | null = null;

export const toolbar = h('div', 'sw-toolbar');
const gotoLabel = h('label', 'sw-goto');
const gotoInput = h('input', 'sw-goto-input');
gotoInput.type = 'text';
gotoInput.spellcheck = false;
gotoInput.placeholder = t('Go to: 12 · line 40 · row 7');
gotoInput.setAttribute('aria-label', t('Go to record, line or row'));
gotoLabel.append(icon('arrow-right'), gotoInput);
const gotoHint = h('span', 'sw-goto-hint');
export const detailToggle = iconButton('split-horizontal', t('Show or hide the detail pane'), 'sw-detail-toggle');

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

let searchTimer: ReturnType<typeof setTimeout> | undefined;

// ---- go to ----
gotoInput.addEventListener('keydown', (ev) => {
  if (ev.key === 'Escape') {
    gotoInput.value = '';
    gotoInput.classList.remove('sw-invalid');
    gotoHint.textContent = '';
    hooks?.focusGrid();
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

/** The host could not read the place typed into Go to. */
export function showGotoError(message: string): void {
  gotoInput.classList.add('sw-invalid');
  gotoInput.setAttribute('aria-invalid', 'true');
  gotoHint.textContent = message;
}

// ---- search, sort, filter ----
export function fillSortOptions(): void {
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
  for (const c of state.columns) {
    if (!/^(string|int|uint|float|double|bool|number|boolean|large_string|utf8|date|timestamp)/i.test(str(c.type)) && str(c.type) !== '') continue;
    add(`column:asc:${str(c.name)}`, `${str(c.name)}, ascending`);
    add(`column:desc:${str(c.name)}`, `${str(c.name)}, descending`);
  }
  sortSelect.value = [...sortSelect.options].some((o) => o.value === keep) ? keep : '';
}

export function fillFilterOptions(): void {
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
  else if (f === 'kept' && state.query?.filter) q.filter = state.query.filter;
  return q.search || q.sort || q.filter ? q : null;
}

function sendQuery(): void {
  clearTimeout(searchTimer);
  vscode.postMessage({ type: 'query', query: currentQuery() });
}

/** Sorts as the sort box's option `value` says ('' for file order). */
export function sortBy(value: string): void {
  sortSelect.value = value;
  sendQuery();
}

searchInput.addEventListener('input', () => {
  clearTimeout(searchTimer);
  searchTimer = setTimeout(sendQuery, 300);
});
searchInput.addEventListener('keydown', (ev) => {
  if (ev.key === 'Enter') {
    ev.preventDefault();
    clearTimeout(searchTimer);
    if (JSON.stringify(currentQuery()) !== JSON.stringify(state.query)) return sendQuery();
    stepSelection(ev.shiftKey ? -1 : 1);
  } else if (ev.key === 'Escape') {
    searchInput.value = '';
    sendQuery();
    hooks?.focusGrid();
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
    filterSelect.value = state.query?.filter ? 'kept' : '';
    vscode.postMessage({ type: 'pickRule' });
    return;
  }
  sendQuery();
});

/** Moves the selection to the next or previous record of the view (the view holds only matches). */
function stepSelection(direction: 1 | -1): void {
  if (state.entries <= 0) return;
  hooks?.select(stepTarget(state.selected, direction, state.entries), { align: 'center' });
}

/** The host's view: searching, failed, or on (with its query, count and label) or off. */
export function onView(m: Extract<HostToRecordView, { type: 'view' }>): void {
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
  state.viewOn = !!m.active;
  state.viewTotal = Math.max(0, Number(m.total) || 0);
  const query = (state.query = m.active && m.query && typeof m.query === 'object' ? m.query : null);
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
  if (state.viewOn) {
    const clear = iconButton('close', t('Show every record in file order'), 'sw-view-clear');
    clear.addEventListener('click', () => {
      searchInput.value = '';
      sortSelect.value = '';
      filterSelect.value = '';
      sendQuery();
    });
    const unit = count === 1 ? 'record' : 'records';
    viewChip.append(icon('filter'), h('span', 'sw-view-count', `${formatCount(count)} ${unit}`), h('span', 'sw-view-label', str(m.label)), clear);
    viewChip.title = t('{0} of {1} lines or rows: {2}', formatCount(count), formatCount(state.viewTotal), str(m.label));
  }
  viewChip.hidden = !state.viewOn;
  state.entries = count;
  hooks?.viewChanged();
}

/** A new shard starts with no view: the chip goes. */
export function clearViewChip(): void {
  viewChip.hidden = true;
}

function describeFilter(f: FilterSpec): string {
  return f.kind === 'rule' ? t('Rule {0}', str(f.rule)) : f.kind === 'column' ? `${str(f.column)} = ${JSON.stringify(f.value)}` : f.kind === 'tokensAtLeast' ? t('{0} tokens or more', formatCount(f.tokens)) : t('Filtered');
}

/** Connects the toolbar to the rest of the view and takes Ctrl+F and F8 for the whole view; call once. */
export function wireToolbar(given: ToolbarHooks): void {
  hooks = given;
  window.addEventListener('keydown', (ev) => {
    if ((ev.ctrlKey || ev.metaKey) && !ev.altKey && ev.key.toLowerCase() === 'f') {
      ev.preventDefault();
      searchInput.focus();
      searchInput.select();
    } else if (ev.key === 'F8') {
      ev.preventDefault();
      vscode.postMessage({ type: 'step', direction: ev.shiftKey ? -1 : 1, from: state.selected });
    }
  });
}
