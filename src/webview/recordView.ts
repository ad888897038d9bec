// The record view: a header describing the shard, a virtual-scrolled table of entries paged from the
// host, and a detail pane (conversation, preference pair, JSON tree, findings) for the selected entry.
// Browser code: DOM only. All host text is untrusted and reaches the DOM as text.
//
// This file wires the parts together and answers the host's messages; the parts live in
// recordView/: state, header, toolbar (go to, search, sort, filter), rows (the grid) with pages (its
// cache) and gridGeometry (its arithmetic, pure), detail with turns and jsonTree, and splitter. The
// findings lists are shared with the panel (findingsList.ts).

import { isMessage, type HostToRecordView, type RecordViewToHost } from '../protocol.js';
import { h, str, t } from './common.js';
import { detailEl, hideDetailPane, onDetail, openDetailPane, showDetailLoading, toggleDetailPane, wireDetail } from './recordView/detail.js';
import { headerParts, hideError, renderEntriesCount, renderHeader, renderLayout, renderStructure, showError, showNotice } from './recordView/header.js';
import { onRows, refreshPages, resetPages } from './recordView/pages.js';
import {
  currentRenderedRange,
  focusGrid,
  queueRender,
  renderEmptyNote,
  renderHeadRow,
  renderRows,
  resetScroll,
  scrollToEntry,
  setContentPos,
  tableEl,
  wireRows,
} from './recordView/rows.js';
import { splitter, wireSplitter } from './recordView/splitter.js';
import { root, state, vscode, type InitMessage, type SavedState } from './recordView/state.js';
import { clearViewChip, detailToggle, fillFilterOptions, fillSortOptions, onView, showGotoError, sortBy, toolbar, wireToolbar } from './recordView/toolbar.js';

const main = h('div', 'sw-main');
main.append(tableEl, splitter, detailEl);
root.append(...headerParts, toolbar, main);

/** The entry count in the header, and the grid's note when there are no entries. */
function renderCounts(): void {
  renderEntriesCount();
  renderEmptyNote();
}

// ---- selection ----
function select(entry: number, opts: { fromHost?: boolean; reveal?: string; align?: 'nearest' | 'center' } = {}): void {
  if (state.entries <= 0 && !opts.fromHost) return;
  const e = opts.fromHost ? Math.max(0, entry) : Math.max(0, Math.min(state.entries - 1, entry));
  const changed = e !== state.selected;
  state.selected = e;
  scrollToEntry(e, opts.align ?? 'nearest');
  queueRender();
  vscode.setState({ fileName: state.info?.fileName ?? '', selected: state.selected } satisfies SavedState);
  if (!opts.fromHost && changed) vscode.postMessage({ type: 'selected', entry: e });
  if (changed || opts.reveal !== undefined || opts.fromHost) {
    state.detailFor = e;
    showDetailLoading(e);
    const msg: RecordViewToHost = { type: 'requestDetail', entry: e };
    if (opts.reveal !== undefined) msg.reveal = opts.reveal;
    vscode.postMessage(msg);
  }
}

wireRows({ select: (e) => select(e), openDetail: openDetailPane, sortBy });
wireToolbar({
  select,
  focusGrid,
  // Another view: its entries from the top, nothing selected, no page of the old view kept.
  viewChanged: () => {
    renderHeadRow();
    state.selected = -1;
    state.detailFor = -1;
    hideDetailPane();
    resetPages();
    setContentPos(0);
    renderCounts();
    renderRows();
  },
});
wireDetail(focusGrid);
detailToggle.addEventListener('click', toggleDetailPane);
wireSplitter(main, detailEl, queueRender);

// ---- messages ----
function onInit(m: InitMessage): void {
  const sameFile = state.info?.fileName === m.fileName;
  state.info = m;
  state.entries = Math.max(0, Number(m.entries) || 0);
  state.complete = !!m.complete;
  state.progress = state.complete ? 1 : 0;
  state.columns = Array.isArray(m.columns) ? m.columns.filter((c) => c && typeof c === 'object') : [];
  resetPages();
  hideError();
  state.viewOn = false;
  clearViewChip();
  fillSortOptions();
  fillFilterOptions();
  renderHeader();
  renderCounts();
  renderHeadRow();
  if (!sameFile) {
    state.selected = -1;
    state.detail = null;
    state.detailFor = -1;
    hideDetailPane();
    resetScroll();
  }
  renderRows();
  const saved = vscode.getState() as Partial<SavedState> | undefined;
  if (!sameFile && saved && saved.fileName === m.fileName && Number.isSafeInteger(saved.selected) && saved.selected! >= 0) {
    if (saved.selected! < state.entries) select(saved.selected!, { align: 'center' });
  }
}

function onMessage(m: HostToRecordView): void {
  switch (m.type) {
    case 'init':
      onInit(m);
      break;
    case 'entries': {
      const was = state.entries;
      state.entries = Math.max(0, Number(m.entries) || 0);
      state.complete = !!m.complete;
      state.progress = Number(m.progress) || 0;
      renderCounts();
      if (state.entries !== was) queueRender();
      break;
    }
    case 'rows':
      if (onRows(m)) queueRender();
      break;
    case 'detail':
      onDetail(m.detail);
      break;
    case 'select': {
      if (!Number.isSafeInteger(m.entry) || m.entry < 0) break;
      openDetailPane(false);
      state.detailOpen = true;
      select(m.entry, { fromHost: true, reveal: m.pointer === undefined ? undefined : str(m.pointer), align: 'center' });
      break;
    }
    case 'columns':
      state.columns = Array.isArray(m.columns) ? m.columns.filter((c) => c && typeof c === 'object') : [];
      resetPages(); // cached rows lack cells for new columns
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
      refreshPages(r.start, r.end);
      break;
    }
    case 'view':
      onView(m);
      break;
    case 'notice':
      showNotice(m);
      break;
    case 'gotoInvalid':
      showGotoError(str(m.message));
      break;
    case 'error':
      showError(str(m.message));
      break;
  }
}

window.addEventListener('message', (ev: MessageEvent) => {
  const m = ev.data;
  if (!isMessage(m)) return;
  try {
    onMessage(m as HostToRecordView);
  } catch (err) {
    showError(t('This view could not show a message from the extension: {0}', str((err as Error)?.message ?? err)));
  }
});

renderCounts();
vscode.postMessage({ type: 'ready' });
