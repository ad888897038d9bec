// The record view's header — the shard's name, format, layout, size, entry count, indexing progress,
// facts and structure (columns, row groups) — and the two notes under it: the error banner and the
// host's one-line notice.

import type { GroupInfo, HostToRecordView } from '../../protocol.js';
import { formatBytes, formatCount, h, icon, str, t } from '../common.js';
import { numberColumnWidths } from './gridGeometry.js';
import { isTable, root, state, vscode } from './state.js';

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

// A one-line note from the host (Restricted Mode holding settings back), with its action.
const notice = h('div', 'sw-note sw-notice');
notice.setAttribute('role', 'status');
notice.hidden = true;

/** The header and the two notes under it, in their order. */
export const headerParts: readonly HTMLElement[] = [header, banner, notice];

export function renderHeader(): void {
  const info = state.info;
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
}

/** The shard's layout beside its format: "layout turns · 98%", chosen by a setting or decided from the records. */
export function renderLayout(m: { id: string | null; share: number; chosen: boolean }): void {
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
  const most = Math.max(state.entries, state.viewTotal);
  const widths = numberColumnWidths(formatCount(Math.max(1, most)).length);
  root.style.setProperty('--sw-col-record', widths.record);
  root.style.setProperty('--sw-col-place', widths.place);
}

/** The entry count ("1,204 of 9,000 lines" while a view is on) and the indexing progress. */
export function renderEntriesCount(): void {
  fitNumberColumns();
  const unit = state.info?.traits?.entries ?? 'lines';
  entriesEl.textContent = state.viewOn
    ? t('{0} of {1} {2}', formatCount(state.entries), formatCount(state.viewTotal), unit)
    : t('{0} {1}', formatCount(state.entries), unit);
  indexingEl.hidden = state.complete;
  const pct = Math.round(Math.max(0, Math.min(1, state.progress)) * 100);
  indexingEl.querySelector('.sw-indexing-text')!.textContent = t('indexing {0}%', pct);
  indexBarFill.style.width = `${pct}%`;
  indexBar.setAttribute('aria-valuenow', String(pct));
}

export function renderStructure(): void {
  const { info, columns } = state;
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

export function hideError(): void {
  banner.hidden = true;
}

/** Shows an error in the banner under the header. */
export function showError(message: string): void {
  banner.replaceChildren(icon('error'), h('span', 'sw-banner-text', message));
  banner.hidden = false;
}

export function showNotice(m: Extract<HostToRecordView, { type: 'notice' }>): void {
  notice.replaceChildren(icon('shield'), h('span', 'sw-notice-text', str(m.message)));
  if (m.action && m.action.id === 'manageTrust') {
    const id = m.action.id;
    const link = h('button', 'sw-link', str(m.action.label));
    link.type = 'button';
    link.addEventListener('click', () => vscode.postMessage({ type: 'noticeAction', id }));
    notice.append(link);
  }
  notice.hidden = false;
}
