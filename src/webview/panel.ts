// The side panel: a summary of the open shard (records, token percentiles, progress) and its findings,
// filterable by severity and text; a finding reveals its record or opens the text at its line.
// Browser code: DOM only. All host text is untrusted and reaches the DOM as text.

import type { Severity } from '../protocol.js';
import { isMessage, type FindingView, type HostToPanel, type PanelToHost, type ShardSummary } from '../protocol.js';
import { connect, formatBytes, formatCount, h, icon, isSeverity, severityIcon, str, t } from './common.js';
import { findingSeverity, renderGroupedFindings } from './findingsList.js';

/** Findings rendered at once; the rest wait behind a "show more" button. */
const RENDER_BATCH = 500;
const SEVERITIES: Severity[] = ['error', 'warning', 'info'];
const SEVERITY_LABEL: Record<Severity, string> = { error: t('Errors'), warning: t('Warnings'), info: t('Notes') };

interface PanelState {
  hidden: Severity[];
  text: string;
  /** Rule groups the person opened or closed (others follow the default: open unless large). */
  toggled?: Record<string, boolean>;
}

const vscode = connect<PanelToHost>();
const saved = (vscode.getState() ?? {}) as Partial<PanelState>;
const hidden = new Set<Severity>(Array.isArray(saved.hidden) ? saved.hidden.filter(isSeverity) : []);
let filterText = typeof saved.text === 'string' ? saved.text : '';
let summary: ShardSummary | null = null;
let findings: FindingView[] = [];
let totalFindings = 0;
let renderLimit = RENDER_BATCH;
const toggled = new Map<string, boolean>(Object.entries(saved.toggled ?? {}).filter(([, v]) => typeof v === 'boolean'));

const root = document.getElementById('sw-root') ?? document.body.appendChild(h('div', 'sw-root'));
root.classList.add('sw-panel');

const emptyEl = h('div', 'sw-empty');
const emptyText = h('p', 'sw-empty-text');
emptyEl.append(icon('inbox', 'sw-empty-icon'), emptyText);

const content = h('div', 'sw-panel-content');
const summaryEl = h('section', 'sw-summary');
summaryEl.setAttribute('aria-label', t('Shard summary'));
const findingsSection = h('section', 'sw-findings-section');
findingsSection.setAttribute('aria-label', t('Findings'));
const filterBar = h('div', 'sw-filter-bar');
const sevButtons = new Map<Severity, HTMLButtonElement>();
for (const sev of SEVERITIES) {
  const b = h('button', 'sw-sev-toggle');
  b.type = 'button';
  b.dataset.severity = sev;
  b.title = t('Show or hide {0}', SEVERITY_LABEL[sev].toLowerCase());
  b.append(severityIcon(sev), h('span', 'sw-count', '0'));
  b.addEventListener('click', () => {
    if (hidden.has(sev)) hidden.delete(sev);
    else hidden.add(sev);
    saveState();
    renderFindings();
  });
  sevButtons.set(sev, b);
  filterBar.append(b);
}
const textWrap = h('label', 'sw-filter-text-wrap');
const textInput = h('input', 'sw-filter-text');
textInput.type = 'search';
textInput.placeholder = t('Filter by rule, message or place');
textInput.setAttribute('aria-label', t('Filter findings'));
textInput.value = filterText;
textWrap.append(icon('filter'), textInput);
filterBar.append(textWrap);
const capNote = h('div', 'sw-capped');
const listEl = h('div', 'sw-findings');
listEl.setAttribute('role', 'listbox');
listEl.setAttribute('aria-label', t('Findings'));
const moreButton = h('button', 'sw-button sw-findings-more');
moreButton.type = 'button';
findingsSection.append(filterBar, capNote, listEl, moreButton);
content.append(summaryEl, findingsSection);
root.append(emptyEl, content);
content.hidden = true;
emptyEl.hidden = true;

function saveState(): void {
  vscode.setState({ hidden: [...hidden], text: filterText, toggled: Object.fromEntries(toggled) } satisfies PanelState);
}

textInput.addEventListener('input', () => {
  filterText = textInput.value;
  renderLimit = RENDER_BATCH;
  saveState();
  renderFindings();
});

moreButton.addEventListener('click', () => {
  renderLimit += RENDER_BATCH;
  renderFindings();
});

// ---- summary ----
const PHASE_TEXT: Record<ShardSummary['phase'], string> = {
  indexing: t('Indexing'),
  analysing: t('Analysing'),
  done: t('Done'),
  failed: t('Failed'),
  cancelled: t('Cancelled'),
};

/** Makes a figure a way in: clicking it shows those records in the record view. */
function linkStat(el: HTMLElement, what: 'max' | 'p99', title: string): HTMLElement {
  const v = el.querySelector('.sw-stat-value')!;
  const b = h('button', 'sw-stat-value sw-stat-link', v.textContent ?? '');
  b.type = 'button';
  b.title = title;
  b.addEventListener('click', () => vscode.postMessage({ type: 'showRecords', what }));
  v.replaceWith(b);
  return el;
}

function stat(label: string, value: string, key: string, cls = ''): HTMLElement {
  const s = h('div', `sw-stat${cls ? ` ${cls}` : ''}`);
  s.dataset.stat = key;
  s.append(h('span', 'sw-stat-label', label), h('span', 'sw-stat-value', value));
  return s;
}

function renderSummary(s: ShardSummary): void {
  summaryEl.replaceChildren();
  const head = h('div', 'sw-summary-head');
  head.append(icon('database'), h('span', 'sw-file-name', str(s.fileName)));
  head.title = str(s.path);
  const phase = PHASE_TEXT[s.phase] ?? str(s.phase);
  const phaseEl = h('span', `sw-badge sw-phase sw-phase-${PHASE_TEXT[s.phase] ? s.phase : 'other'}`, phase);
  head.append(phaseEl);
  summaryEl.append(head);
  summaryEl.append(h('div', 'sw-muted sw-summary-sub', `${str(s.format)} · ${formatBytes(s.sizeBytes)}`));
  if (typeof s.progressText === 'string' && s.progressText) summaryEl.append(h('div', 'sw-muted sw-progress-text', str(s.progressText)));

  if (s.phase === 'indexing' || s.phase === 'analysing') {
    const pct = Math.round(Math.max(0, Math.min(1, Number(s.progress) || 0)) * 100);
    const bar = h('div', 'sw-progress');
    bar.setAttribute('role', 'progressbar');
    bar.setAttribute('aria-valuenow', String(pct));
    bar.title = t('{0} {1}%', phase, pct);
    const fill = h('div', 'sw-progress-fill');
    fill.style.width = `${pct}%`;
    bar.append(fill);
    summaryEl.append(bar);
  }
  if (s.phase === 'failed' && s.error !== undefined) {
    const err = h('div', 'sw-banner sw-banner-error');
    err.setAttribute('role', 'alert');
    err.append(icon('error'), h('span', 'sw-banner-text', str(s.error)));
    summaryEl.append(err);
  }

  const grid = h('div', 'sw-stats');
  grid.append(
    stat(t('Records'), formatCount(s.records), 'records'),
    stat(t('Blank lines'), formatCount(s.blankLines), 'blankLines', s.blankLines > 0 ? 'sw-stat-flag' : ''),
    stat(t('Invalid lines'), formatCount(s.invalidLines), 'invalidLines', s.invalidLines > 0 ? 'sw-stat-bad' : ''),
  );
  summaryEl.append(grid);

  const lay = s.layout;
  if (lay && typeof lay === 'object' && typeof lay.id === 'string') {
    const row = h('div', 'sw-layout');
    row.dataset.stat = 'layout';
    const share = Number(lay.share);
    row.append(icon('symbol-structure'), h('span', '', t('Layout')), h('span', 'sw-badge sw-layout-id', lay.id));
    if (Number.isFinite(share) && share < 1) row.append(h('span', 'sw-muted', t('{0}% of records', Math.round(share * 1000) / 10)));
    summaryEl.append(row);
  }

  const tk = s.tokens;
  if (tk && typeof tk === 'object') {
    const tok = h('div', 'sw-tokens');
    const tHead = h('div', 'sw-tokens-head');
    const badge = h('span', 'sw-badge sw-encoding', str(s.tokenizerLabel ?? tk.encoding));
    badge.title = str(tk.tokenizer ?? tk.encoding);
    tHead.append(icon('symbol-numeric'), h('span', '', t('Tokens')), badge);
    tok.append(tHead);
    const tg = h('div', 'sw-stats');
    tg.append(
      stat(t('Total'), formatCount(tk.total), 'total'),
      stat(t('Prompt'), formatCount(Number(tk.prompt) || 0), 'prompt'),
      stat(t('Response'), formatCount(Number(tk.response) || 0), 'response'),
      stat(t('p50'), formatCount(tk.p50), 'p50'),
      stat(t('p90'), formatCount(tk.p90), 'p90'),
      linkStat(stat(t('p99'), formatCount(tk.p99), 'p99'), 'p99', t('Show the records of {0} tokens or more, longest first', formatCount(tk.p99))),
      linkStat(stat(t('Max'), formatCount(tk.max), 'max'), 'max', t('Show the records sorted by tokens, the longest first')),
    );
    // With a chat template: what the model sees, and what the loss covers (the per-record figures above are then rendered lengths).
    if (typeof tk.rendered === 'number') {
      tg.append(stat(t('Rendered'), formatCount(tk.rendered), 'rendered'), stat(t('Trained'), formatCount(Number(tk.trainable) || 0), 'trainable'));
    }
    tok.append(tg);
    // No verdict before the check is complete: "so far" until then, never a green 0.
    const done = s.phase === 'done';
    const over = h(tk.overContext > 0 ? 'button' : 'div', `sw-over${tk.overContext > 0 ? ' sw-over-some sw-stat-link' : ''}`);
    over.dataset.stat = 'overContext';
    over.append(
      icon(tk.overContext > 0 ? 'warning' : done ? 'pass' : 'loading', !done && tk.overContext === 0 ? 'codicon-modifier-spin' : ''),
      h(
        'span',
        '',
        done
          ? t(tk.overContext === 1 ? 'Over {0} tokens: {1} record' : 'Over {0} tokens: {1} records', formatCount(tk.contextLength), formatCount(tk.overContext))
          : t(tk.overContext === 1 ? 'Over {0} tokens so far: {1} record' : 'Over {0} tokens so far: {1} records', formatCount(tk.contextLength), formatCount(tk.overContext)),
      ),
    );
    if (tk.overContext > 0) {
      (over as HTMLButtonElement).type = 'button';
      over.title = t('Show the records over the context length in the record view');
      over.addEventListener('click', () => vscode.postMessage({ type: 'showRecords', what: 'overContext' }));
    }
    tok.append(over);
    summaryEl.append(tok);
  }
}

// ---- findings ----
function matches(f: FindingView, needle: string): boolean {
  if (!needle) return true;
  return `${str(f.rule)}\n${str(f.message)}\n${str(f.place)}\n${str(f.pointer ?? '')}`.toLowerCase().includes(needle);
}

function renderFindings(): void {
  const bySev = summary?.findingsBySeverity;
  for (const sev of SEVERITIES) {
    const b = sevButtons.get(sev)!;
    const n = bySev && typeof bySev === 'object' ? Number(bySev[sev]) || 0 : findings.filter((f) => f.severity === sev).length;
    b.querySelector('.sw-count')!.textContent = formatCount(n);
    const on = !hidden.has(sev);
    b.classList.toggle('sw-off', !on);
    b.setAttribute('aria-pressed', String(on));
  }
  const needle = filterText.trim().toLowerCase();
  const shown = findings.filter((f) => !hidden.has(findingSeverity(f)) && matches(f, needle));
  const focusedId = (document.activeElement as HTMLElement | null)?.closest?.('.sw-finding')?.getAttribute('data-id');

  // Grouped by rule, most severe first, then the largest; each group collapsible with its count.
  const budget = renderGroupedFindings(listEl, shown, {
    totals: (summary?.findingsByRule ?? {}) as Record<string, number>,
    toggled,
    limit: renderLimit,
    toggle: (rule, open) => {
      toggled.set(rule, open);
      saveState();
      renderFindings();
    },
    activate: (f) => vscode.postMessage({ type: 'reveal', id: f.id }),
    openText: (f) => vscode.postMessage({ type: 'openText', id: f.id }),
  });
  if (!shown.length) {
    const none = h('div', 'sw-muted sw-no-findings');
    if (findings.length) none.append(icon('filter'), h('span', '', t('No finding matches the filter.')));
    else if (summary && summary.phase === 'done') none.append(icon('pass'), h('span', '', t('No findings in this shard.')));
    else none.append(h('span', '', t('No findings yet.')));
    listEl.append(none);
  }
  moreButton.hidden = budget >= 0;
  moreButton.textContent = t('Show {0} more', formatCount(Math.min(RENDER_BATCH, shown.length - renderLimit)));

  const notes: string[] = [];
  if (totalFindings > findings.length) notes.push(t('Showing {0} of {1} findings', formatCount(findings.length), formatCount(totalFindings)));
  if (shown.length !== findings.length) notes.push(t('{0} match the filter', formatCount(shown.length)));
  capNote.textContent = notes.join(' · ');
  capNote.hidden = notes.length === 0;

  if (focusedId) (listEl.querySelector(`.sw-finding[data-id="${Number(focusedId)}"]`) as HTMLElement | null)?.focus();
}

// ---- messages ----
function onMessage(m: HostToPanel): void {
  if (m.type === 'empty') {
    summary = null;
    findings = [];
    totalFindings = 0;
    emptyText.textContent = str(m.message) || t('Open a shard to see its summary and findings here.');
    emptyEl.hidden = false;
    content.hidden = true;
  } else if (m.type === 'state') {
    if (!m.summary || typeof m.summary !== 'object') return;
    // Another shard: its findings start unfiltered by text (the severity toggles are a preference and stay).
    if (summary && summary.path !== m.summary.path && filterText) {
      filterText = '';
      textInput.value = '';
      saveState();
    }
    summary = m.summary;
    findings = Array.isArray(m.findings) ? m.findings.filter((f) => f && typeof f === 'object') : [];
    totalFindings = Math.max(findings.length, Number(m.totalFindings) || 0);
    emptyEl.hidden = true;
    content.hidden = false;
    renderSummary(summary);
    renderFindings();
  }
}

window.addEventListener('message', (ev: MessageEvent) => {
  const m = ev.data;
  if (!isMessage(m)) return;
  try {
    onMessage(m as HostToPanel);
  } catch (err) {
    emptyText.textContent = t('The panel could not show a message from the extension: {0}', str((err as Error)?.message ?? err));
    emptyEl.hidden = false;
  }
});

vscode.postMessage({ type: 'ready' });
