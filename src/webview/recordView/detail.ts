// The detail pane: the selected entry's place, tokens and layout, and its tabs — conversation, pair,
// rendered sequences, JSON tree (or the raw line) and findings — with the WAI-ARIA tabs pattern.

import type { DetailView, FindingView, RecordViewToHost } from '../../protocol.js';
import { formatCount, h, icon, iconButton, str, t } from '../common.js';
import { findingList, worstSeverity } from '../findingsList.js';
import { renderTree, revealPointer } from './jsonTree.js';
import { rowAt } from './pages.js';
import { splitter } from './splitter.js';
import { isTable, state, type Tab, vscode } from './state.js';
import { renderConversation, renderPair, renderRendered } from './turns.js';

export const detailEl = h('section', 'sw-detail');
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

/** Shows or hides the pane and the splitter beside it. */
function setShown(shown: boolean): void {
  detailEl.hidden = !shown;
  splitter.hidden = !shown;
}

/** Hides the pane (it stays wanted: the next selection shows it again). */
export function hideDetailPane(): void {
  setShown(false);
}

/** Shows the pane when an entry is selected, focusing its active tab when `focus`. */
export function openDetailPane(focus: boolean): void {
  state.detailOpen = true;
  setShown(state.selected >= 0);
  if (focus && !detailEl.hidden) {
    (tabsEl.querySelector('.sw-tab-active') as HTMLElement | null)?.focus() ?? detailEl.focus();
  }
}

/** The toolbar's button: hides the shown pane, or shows it. */
export function toggleDetailPane(): void {
  if (state.detailOpen && !detailEl.hidden) {
    state.detailOpen = false;
    setShown(false);
  } else openDetailPane(false);
}

/** Connects the pane's close button, which hands the focus to `closed`. */
export function wireDetail(closed: () => void): void {
  detailClose.addEventListener('click', () => {
    state.detailOpen = false;
    setShown(false);
    closed();
  });
}

openLineButton.addEventListener('click', () => {
  if (state.selected >= 0) vscode.postMessage({ type: 'openText', entry: state.detail?.entry ?? state.selected });
});

/** The pane while the detail of `entry` is on its way: its title from the row when at hand. */
export function showDetailLoading(entry: number): void {
  if (!state.detailOpen) return;
  setShown(true);
  detailEl.classList.add('sw-detail-loading');
  detailTitle.textContent = rowAt(entry) ? placeTitle(rowAt(entry)!.record, str(rowAt(entry)!.place)) : t('Entry {0}', formatCount(entry + 1));
}

function placeTitle(record: number | null | undefined, place: string): string {
  const rec = record === null || record === undefined ? t('No record') : t('Record #{0}', formatCount(record + 1));
  const columnar = isTable();
  return place ? `${rec} · ${columnar || /^row\b/i.test(place) ? place : `line ${place}`}` : rec;
}

export function onDetail(d: DetailView): void {
  if (!d || typeof d !== 'object') return;
  if (d.entry !== state.detailFor) return; // an answer for a selection the user has moved past
  state.detail = d;
  detailEl.classList.remove('sw-detail-loading');
  if (!state.detailOpen) return;
  setShown(true);
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
  const names = tabs.map((x) => x[0]);
  let tab: Tab = state.activeTab && names.includes(state.activeTab) ? state.activeTab : names[0];
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
    if (id === 'findings' && findings.length) b.dataset.severity = worstSeverity(findings);
    b.addEventListener('click', () => {
      state.activeTab = id;
      showTab(id);
    });
    // Tabs as WAI-ARIA describes them: arrows (and Home/End) move between tabs and select them.
    b.addEventListener('keydown', (ev) => {
      const all = [...tabsEl.querySelectorAll<HTMLElement>('.sw-tab')];
      const i = all.indexOf(b);
      const to = ev.key === 'ArrowRight' ? (i + 1) % all.length : ev.key === 'ArrowLeft' ? (i - 1 + all.length) % all.length : ev.key === 'Home' ? 0 : ev.key === 'End' ? all.length - 1 : -1;
      if (to < 0) return;
      ev.preventDefault();
      const next = all[to].dataset.tab as Tab;
      state.activeTab = next;
      showTab(next);
      all[to].focus();
    });
    tabsEl.append(b);
  }
  showTab(tab);
  if (d.reveal !== undefined) revealPointer(tabBody, str(d.reveal));
}

function showTab(tab: Tab): void {
  const detail = state.detail;
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
      tabBody.append(renderConversation(Array.isArray(detail.turns) ? detail.turns : [], detail, showInTree));
      break;
    case 'pair':
      if (detail.pair && typeof detail.pair === 'object') tabBody.append(renderPair(detail.pair, showInTree));
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

function showInTree(pointer: string): void {
  state.activeTab = 'json';
  showTab('json');
  revealPointer(tabBody, pointer);
}

function renderRaw(raw: string | undefined): HTMLElement {
  const box = h('div', 'sw-raw');
  const text = str(raw);
  box.textContent = text === '' ? t('(blank line)') : text;
  return box;
}

/** The entry's findings; each opens the text at its place. */
function renderDetailFindings(findings: FindingView[]): HTMLElement {
  return findingList(findings, {
    className: 'sw-detail-findings',
    empty: () => {
      const ok = h('div', 'sw-muted sw-all-clear');
      ok.append(icon('pass'), h('span', '', t('No findings for this entry.')));
      return ok;
    },
    item: {
      layout: 'inline',
      className: 'sw-detail-finding',
      role: 'button',
      tabStop: true,
      title: t('Open the text at this place'),
      activate: (f) => {
        const m: RecordViewToHost = { type: 'openText', entry: state.detail?.entry ?? state.selected };
        if (f.pointer !== null && f.pointer !== undefined) m.pointer = str(f.pointer);
        vscode.postMessage(m);
      },
    },
  });
}
