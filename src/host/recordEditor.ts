// The read-only custom editor: one webview per open shard, paging records from the shard's worker.

import { openChoice } from './openChoice.js';
import { traitsOf } from '../engine/sources/traits.js';
import { SECTION, clamp } from './settings.js';
import { ViewOrder } from './viewOrder.js';
import { scalarAt, type ViewQuery } from '../engine/query.js';
import type { Entry } from '../engine/sources/source.js';
import { PLACE_HINT, formatPlace, parsePlace, type PlaceKind } from '../engine/places.js';
import * as vscode from 'vscode';
import { readRecord } from '../engine/layouts/index.js';
import type { ColumnInfo } from '../engine/sources/source.js';
import type { DetailView, HostToRecordView, RecordViewToHost } from '../protocol.js';
import { pairView, recordMediaViews, renderedViews, thumbnailBudget, turnViews } from './detailView.js';
import { tokenizerKindOf } from '../engine/tokens/kinds.js';
import { tokenizerOf } from '../engine/tokens/tokenizer.js';
import { isMessage } from '../protocol.js';
import { openAtFinding } from './openText.js';
import { ShardDocument } from './shardDocument.js';
import { columnsFromEntries, cut, cutValue, rowOf, DETAIL_STRING_CHARS } from './views.js';
import { webviewHtml } from './webviewAssets.js';
import { isCancelled } from '../engine/errors.js';

export const RECORD_VIEW_TYPE = 'shardwise.recordView';

export type RowAction = 'copyRecord' | 'copyPlace' | 'openAtLine' | 'showInPanel' | 'filterLikeThis';

export interface ActiveShard {
  document: ShardDocument;
  panel: vscode.WebviewPanel;
  /** Selects a file entry (leaving the view's filter when it hides the entry). */
  select(entry: number, pointer?: string): void;
  /** Searches, sorts or filters the record view (null: the whole shard in file order). */
  query(q: ViewQuery | null, selectFirst?: boolean): void;
  /** A row's context-menu action, at a position of the view (and a column, for a cell). */
  rowAction(action: RowAction, position: number, column?: string): Promise<void>;
}

export class RecordEditorProvider implements vscode.CustomReadonlyEditorProvider<ShardDocument> {
  private readonly activeChanged = new vscode.EventEmitter<ActiveShard | null>();
  readonly onDidChangeActive = this.activeChanged.event;
  private readonly docsChanged = new vscode.EventEmitter<ShardDocument>();
  /** Any open shard's findings or progress changed. */
  readonly onDidChangeDocument = this.docsChanged.event;
  private current: ActiveShard | null = null;
  readonly editors = new Set<ActiveShard>();

  constructor(private readonly context: vscode.ExtensionContext) {}

  get active(): ActiveShard | null {
    return this.current;
  }

  /** Open shards by URI, including those lingering after their last record view closed. */
  private readonly shards = new Map<string, ShardDocument>();

  async openCustomDocument(uri: vscode.Uri): Promise<ShardDocument> {
    const key = uri.toString();
    // A record view replaced for a moment (a preview tab taken by a Problems entry) comes back to its shard as it was.
    const kept = this.shards.get(key);
    if (kept?.revive()) return kept;
    const doc = new ShardDocument(uri);
    this.shards.set(key, doc);
    doc.onDidChange(() => this.docsChanged.fire(doc));
    doc.onDidDispose(() => {
      if (this.shards.get(key) === doc) this.shards.delete(key);
    });
    return doc;
  }

  /** Files the person asked to see in the record view (the command, or a second opening). */
  readonly explicit = new Set<string>();
  private handedToText = new Set<string>();

  async resolveCustomEditor(document: ShardDocument, panel: vscode.WebviewPanel): Promise<void> {
    // A small JSON Lines file is text people also edit: it goes to the text editor unless the
    // settings or the person say otherwise (once handed over, opening it here again keeps it here).
    const key = document.uri.toString();
    const s = vscode.workspace.getConfiguration(SECTION, document.uri);
    const size = await vscode.workspace.fs.stat(document.uri).then((st) => st.size, () => null);
    const choice = openChoice({
      fileName: document.fileName,
      sizeBytes: size,
      mode: (['large', 'always', 'never'] as const).find((m) => m === s.get<string>('recordView.lines', 'large')) ?? 'large',
      largeBytes: clamp(s.get<number>('recordView.largeMiB', 8), 0, 65536, 8) * 1024 * 1024,
      explicit: this.explicit.delete(key) || this.handedToText.has(key),
    });
    if (choice === 'text') {
      this.handedToText.add(key);
      const column = panel.viewColumn;
      panel.dispose();
      await vscode.commands.executeCommand('vscode.openWith', document.uri, 'default', column);
      return;
    }
    const webview = panel.webview;
    webview.options = {
      enableScripts: true,
      localResourceRoots: [vscode.Uri.joinPath(this.context.extensionUri, 'dist'), vscode.Uri.joinPath(this.context.extensionUri, 'media')],
    };
    webview.html = webviewHtml(this.context, webview, 'recordView', document.fileName);
    const post = (m: HostToRecordView) => void webview.postMessage(m);
    let columns: ColumnInfo[] = [];
    let ready = false;
    let loaded = false;
    let loadError: string | null = null;

    // ---- the view's order (search, sort, filter): positions ↔ entries ----
    let view: ViewOrder | null = null;
    let viewGen = 0;
    const toEntry = (pos: number) => (view ? view.entryAt(pos) : pos);
    const toPos = (entry: number) => (view ? view.positionOf(entry) : entry);
    const postView = (extra: { searching?: number; error?: string } = {}) => {
      const total = document.info?.entries ?? 0;
      post({ type: 'view', active: view !== null, count: view ? view.count : total, total, label: view?.label ?? '', query: view?.query ?? null, ...extra });
    };
    const runQuery = async (q: ViewQuery | null) => {
      const gen = ++viewGen;
      const empty = !q || (!q.filter && !q.sort && !(q.search && q.search.text !== ''));
      if (empty) {
        view = null;
        postView();
        return;
      }
      try {
        const built = await ViewOrder.build(document, q!, (share) => {
          if (gen === viewGen) postView({ searching: share });
        });
        if (gen !== viewGen) return;
        view = built;
        postView();
      } catch (err) {
        if (gen !== viewGen || isCancelled(err)) return;
        postView({ error: (err as Error).message });
      }
    };
    /** A selection asked for while the webview is hidden or reloading: made once it is ready again. */
    let pendingSelect: { entry: number; pointer?: string } | null = null;
    /** Selects an entry, leaving the view first when it does not show it. */
    const selectEntry = (entry: number, pointer?: string) => {
      if (!ready || !panel.visible) {
        pendingSelect = { entry, pointer };
        return;
      }
      if (view && view.positionOf(entry) < 0) {
        view = null;
        viewGen++;
        postView();
      }
      post({ type: 'select', entry: toPos(entry), pointer });
    };
    const editor: ActiveShard = {
      document,
      panel,
      select: (entry, pointer) => selectEntry(entry, pointer),
      rowAction: async (action, position, column) => {
        const entry = toEntry(position);
        if (entry < 0) return;
        const [e] = await document.session!.read(entry, entry + 1);
        if (!e) return;
        switch (action) {
          case 'copyRecord':
            await vscode.env.clipboard.writeText(e.value !== undefined ? JSON.stringify(e.value) : (e.text ?? ''));
            return;
          case 'copyPlace': {
            const rel = vscode.workspace.asRelativePath(document.uri, false);
            await vscode.env.clipboard.writeText(e.line !== null ? `${rel}:${e.line}` : `${rel}#${formatPlace({ line: null, entry: e.entry }).replace(' ', '')}`);
            return;
          }
          case 'openAtLine':
            await openAtFinding(document, entry, undefined);
            return;
          case 'showInPanel':
            await vscode.commands.executeCommand('shardwise.showReport');
            post({ type: 'select', entry: position });
            return;
          case 'filterLikeThis': {
            const value = column !== undefined ? scalarAt(e.value, column) : undefined;
            if (column === undefined || value === undefined) {
              void vscode.window.showInformationMessage(vscode.l10n.t('Shardwise: "{0}" of this record is not a single value to filter by.', column ?? ''));
              return;
            }
            await runQuery({ ...(view?.query ?? {}), filter: { kind: 'column', column, value } });
            return;
          }
        }
      },
      query: (q, selectFirst) =>
        void runQuery(q).then(() => {
          if (selectFirst && view && view.count > 0) post({ type: 'select', entry: 0 });
        }),
    };
    this.editors.add(editor);
    const setActive = () => {
      if (panel.active) {
        this.current = editor;
        this.activeChanged.fire(editor);
      } else if (this.current === editor && !panel.visible) {
        // Keep the last shard in the panel while another editor has focus.
      }
    };
    panel.onDidChangeViewState(() => {
      // A hidden webview is not kept: it reloads when shown again and says so with a new 'ready'.
      if (!panel.visible) ready = false;
      setActive();
    });

    let lastEntries = -1;
    let lastComplete = false;
    const sendInit = async () => {
      if (!ready || !loaded) return;
      const info = document.info!;
      if (info.columns?.length) columns = info.columns;
      else {
        // JSONL: columns are the top-level fields of the first records (the first page shows as
        // soon as they are indexed, long before the whole file is).
        await document.whenEntries(200, 3000);
        const n = Math.min(document.info?.entries ?? 0, 200);
        const first = n > 0 ? await document.session!.read(0, n).catch(() => []) : [];
        columns = columnsFromEntries(first);
      }
      const now = document.info ?? info;
      lastEntries = now.entries;
      lastComplete = now.complete;
      post({
        type: 'init',
        fileName: document.fileName,
        format: now.format,
        sizeBytes: now.sizeBytes,
        columns,
        groups: now.groups,
        facts: now.facts,
        entries: now.entries,
        complete: now.complete,
        traits: traitsOf(now.format),
      });
      lastLayout = '';
      sendLayout();
      const pending = pendingSelect ?? this.pendingReveal.get(key);
      pendingSelect = null;
      this.pendingReveal.delete(key);
      if (pending) selectEntry(pending.entry, pending.pointer);
      if (document.settings?.trustNote) post({ type: 'notice', message: document.settings.trustNote, action: { label: vscode.l10n.t('Manage Workspace Trust'), id: 'manageTrust' } });
      // A file that opens broken (no footer, cut short) says so at the top, not only in the panel.
      const broken = now.findings.filter((f) => f.severity === 'error');
      if (broken.length) {
        const more = broken.length > 1 ? ` (and ${broken.length - 1} more problems: see the Shard Report)` : '';
        post({ type: 'error', message: `${document.fileName} cannot be read whole: ${broken[0].message}${more}` });
      }
    };

    // Token counts and markers arrive with the analysis: refresh the rows on screen now and then.
    let lastRefresh = 0;
    let lastPhase = document.phase;
    let lastTally = document.tally;
    let lastLayout = '';
    const sendLayout = () => {
      const l = document.tally.layout();
      const chosen = (document.settings?.config.layout.id ?? 'auto') !== 'auto';
      const key = `${l?.id ?? ''}|${Math.round((l?.share ?? 0) * 1000)}|${chosen}`;
      if (key === lastLayout) return;
      lastLayout = key;
      post({ type: 'layout', id: l?.id ?? null, share: l?.share ?? 0, chosen });
    };
    const sub = document.onDidChange(() => {
      if (!ready || !document.info) return;
      sendLayout();
      const now = Date.now();
      // A new tally (a new context length answered from the kept counts) changes the markers too.
      if (columns.length && (document.phase !== lastPhase || document.tally !== lastTally || (document.phase === 'analysing' && now - lastRefresh > 1500))) {
        lastPhase = document.phase;
        lastTally = document.tally;
        lastRefresh = now;
        post({ type: 'refresh' });
      }
      const { entries, complete } = document.info;
      // With a view on, the count is the view's: the whole shard's growth does not change it.
      if (!view && (entries !== lastEntries || complete !== lastComplete)) {
        lastEntries = entries;
        lastComplete = complete;
        // The header's indexing share is the index's own, never the check's.
        post({ type: 'entries', entries, complete, progress: document.progressState.indexComplete ? 1 : document.progressState.indexed });
      }
    });

    webview.onDidReceiveMessage(async (raw: unknown) => {
      if (!isMessage(raw)) return;
      const msg = raw as RecordViewToHost;
      try {
        switch (msg.type) {
          case 'ready':
            ready = true;
            if (loadError) post({ type: 'error', message: loadError });
            else await sendInit();
            break;
          case 'requestRows': {
            const total = view ? view.count : document.info?.entries ?? 0;
            const start = Math.max(0, Math.min(msg.start, total));
            const end = Math.min(total, start + Math.max(0, Math.min(msg.count, 1000)));
            if (view) {
              // The view speaks in positions: each row goes where the view shows it.
              const at = end > start ? await readPositions(document, view, start, end) : [];
              const rows = at.flatMap((e, i) =>
                e ? [{ ...rowOf(e, columns, document.byEntry.get(e.entry), e.record !== null ? document.tokensOfEntry(e) : null), entry: start + i }] : [],
              );
              post({ type: 'rows', requestId: msg.requestId, start, rows });
              break;
            }
            const entries = end > start ? await document.session!.read(start, end) : [];
            const rows = entries.map((e) =>
              rowOf(e, columns, document.byEntry.get(e.entry), e.record !== null ? document.tokensOfEntry(e) : null),
            );
            post({ type: 'rows', requestId: msg.requestId, start, rows });
            break;
          }
          case 'requestDetail': {
            const d = await this.detail(document, toEntry(msg.entry), msg.reveal);
            // The view speaks in positions.
            post({ type: 'detail', detail: { ...d, entry: msg.entry } });
            break;
          }
          case 'query':
            await runQuery(msg.query);
            break;
          case 'step': {
            const count = view ? view.count : document.info?.entries ?? 0;
            for (let p = msg.from + msg.direction; p >= 0 && p < count; p += msg.direction) {
              if ((document.byEntry.get(toEntry(p))?.length ?? 0) > 0) {
                post({ type: 'select', entry: p });
                break;
              }
            }
            break;
          }
          case 'pickRule': {
            const rules = [...document.tally.byRule.entries()].sort((a, b) => b[1] - a[1]);
            if (!rules.length) {
              void vscode.window.showInformationMessage(document.phase === 'done' ? vscode.l10n.t('Shardwise: {0} has no findings.', document.fileName) : vscode.l10n.t('Shardwise: {0} has no findings so far.', document.fileName));
              break;
            }
            const pick = await vscode.window.showQuickPick(
              rules.map(([rule, n]) => ({ label: rule, description: `${n.toLocaleString(vscode.env.language)} ${n === 1 ? 'finding' : 'findings'}` })),
              { title: vscode.l10n.t('Show the records with findings of a rule'), placeHolder: vscode.l10n.t('A rule of this shard') },
            );
            if (pick) await runQuery({ ...(view?.query ?? {}), filter: { kind: 'rule', rule: pick.label } });
            break;
          }
          case 'goto': {
            const target = parsePlace(String(msg.text ?? ''));
            if (!target) {
              post({ type: 'gotoInvalid', message: PLACE_HINT });
              break;
            }
            const entry = document.entryOfPlace(target);
            const total = document.info?.entries ?? 0;
            if (entry < 0 || entry >= total) {
              post({ type: 'gotoInvalid', message: noSuchPlace(document, target.kind, target.value) });
            } else selectEntry(entry);
            break;
          }
          case 'openText': {
            const entry = toEntry(msg.entry);
            const list = document.byEntry.get(entry) ?? [];
            const f = list.find((x) => msg.pointer !== undefined && x.pointer === msg.pointer) ?? null;
            await openAtFinding(document, entry, f ?? undefined, msg.pointer);
            break;
          }
          case 'selected':
            break;
          case 'noticeAction':
            if (msg.id === 'manageTrust') await vscode.commands.executeCommand('workbench.trust.manage');
            break;
        }
      } catch (err) {
        post({ type: 'error', message: (err as Error).message });
      }
    });

    // The file changed on disk and was opened again: the view starts over and says why.
    const reopened = document.onDidReopen((sentence) => {
      view = null;
      void sendInit().then(() => post({ type: 'notice', message: sentence }));
    });

    panel.onDidDispose(() => {
      sub.dispose();
      reopened.dispose();
      this.editors.delete(editor);
      if (this.current === editor) {
        this.current = null;
        this.activeChanged.fire(null);
      }
    });

    this.current = editor;
    this.activeChanged.fire(editor);
    try {
      if (!document.session) await document.load();
      loaded = true;
      await sendInit();
    } catch (err) {
      loadError = (err as Error).message;
      document.phase = 'failed';
      document.error = loadError;
      this.docsChanged.fire(document);
      if (ready) post({ type: 'error', message: loadError });
      void vscode.window.showErrorMessage(vscode.l10n.t('Shardwise: {0}', loadError));
    }
  }

  async detail(document: ShardDocument, entry: number, reveal?: string): Promise<DetailView> {
    const [e] = await document.session!.read(entry, entry + 1);
    if (!e) throw new Error(`entry ${entry} is not in this shard`);
    const findings = (document.byEntry.get(entry) ?? []).map((f) => document.viewOf(f));
    // Same form as RowView.place (one formatter: engine/places.ts).
    const place = formatPlace({ line: e.line, entry: e.entry, record: e.record });
    const detail: DetailView = {
      entry,
      record: e.record,
      place,
      truncated: false,
      tokens: e.record !== null ? document.tokensOfEntry(e) : null,
      findings,
      reveal,
    };
    if (e.value === undefined) {
      detail.raw = cut(e.text ?? '', DETAIL_STRING_CHARS);
      detail.truncated = (e.text ?? '').length > DETAIL_STRING_CHARS;
      return detail;
    }
    const { value, truncated } = cutValue(e.value);
    detail.value = value;
    detail.truncated = truncated;
    const config = document.settings.config;
    const reading = safe(() => readRecord(e.value, config));
    if (reading) {
      detail.layout = reading.layout;
      const hasTurns = reading.turnLists.some((l) => l.turns.length > 0);
      const counts = hasTurns || reading.pair ? await document.session!.turnTokens(e.value, config).catch(() => []) : [];
      const byPointer = new Map(counts.map((c) => [c.pointer, c.tokens]));
      const cutText = (s: string) => cut(s, DETAIL_STRING_CHARS);
      const budget = thumbnailBudget();
      const turns = safe(() => turnViews(reading, byPointer, cutText, budget));
      if (turns && turns.length) detail.turns = turns;
      const pair = safe(() => pairView(reading, byPointer, cutText, budget));
      if (pair) detail.pair = pair;
      const media = safe(() => recordMediaViews(reading, cutText, budget));
      if (media && media.length) detail.media = media;
      if (reading.toolsPointer !== undefined) detail.toolsPointer = reading.toolsPointer;
      // Only some tokenizer kinds carry a chat template (a model folder's); the reading worker renders it.
      if (tokenizerKindOf(tokenizerOf(config)).chatTemplates) {
        const r = await document.session!.rendered(e.value, config).catch(() => null);
        if (r) detail.rendered = renderedViews(r, DETAIL_STRING_CHARS);
      }
    }
    return detail;
  }

  /** Brings the document's record view forward and acts on it; false when none shows it. */
  private withEditorOf(document: ShardDocument, act: (ed: ActiveShard) => void): boolean {
    const ed = [...this.editors].find((e) => e.document === document);
    if (!ed) return false;
    ed.panel.reveal(ed.panel.viewColumn, false);
    act(ed);
    return true;
  }

  /** Runs a query in the document's record view (and selects its first record when asked). */
  queryInActive(document: ShardDocument, q: ViewQuery, selectFirst: boolean): boolean {
    return this.withEditorOf(document, (ed) => ed.query(q, selectFirst));
  }

  revealInActive(document: ShardDocument, entry: number, pointer?: string): boolean {
    return this.withEditorOf(document, (ed) => ed.select(entry, pointer));
  }

  /** Brings the document's record view forward without changing its selection. */
  revealEditorOf(document: ShardDocument): boolean {
    return this.withEditorOf(document, () => undefined);
  }

  /** The open shard of a file, if a record view shows it. */
  documentOf(uri: vscode.Uri): ShardDocument | undefined {
    return [...this.editors].find((e) => e.document.uri.toString() === uri.toString())?.document;
  }

  /** Selects an entry in the record view of `uri` that is about to open, once it shows its first page. */
  revealWhenOpen(uri: vscode.Uri, entry: number, pointer?: string): void {
    this.pendingReveal.set(uri.toString(), { entry, pointer });
  }
  private readonly pendingReveal = new Map<string, { entry: number; pointer?: string }>();
}

function safe<T>(f: () => T): T | null {
  try {
    return f();
  } catch {
    return null;
  }
}

/** Why a typed place is not in the shard, in its own words: "There is no record 90 (the shard has 80 records)". */
export function noSuchPlace(document: { info?: { entries: number; complete: boolean } | null; tally: { records: number } }, kind: PlaceKind, value: number): string {
  const so = document.info?.complete ? '' : ' so far';
  if (kind === 'record') return `There is no record ${value} (the shard has ${document.tally.records.toLocaleString('en-US')} records${so}).`;
  const n = document.info?.entries ?? 0;
  return `There is no ${kind} ${value} (the shard has ${n.toLocaleString('en-US')} ${kind}s${so}).`;
}

/** The entries at view positions [start, end) (undefined where one cannot be read), read in runs of consecutive entries. */
async function readPositions(document: ShardDocument, view: ViewOrder, start: number, end: number): Promise<(Entry | undefined)[]> {
  const want: number[] = [];
  for (let p = start; p < end; p++) want.push(view.entryAt(p));
  const sorted = [...new Set(want)].sort((a, b) => a - b);
  const got = new Map<number, Entry>();
  for (let i = 0; i < sorted.length; ) {
    let j = i;
    while (j + 1 < sorted.length && sorted[j + 1] === sorted[j] + 1 && j - i < 255) j++;
    for (const e of await document.session!.read(sorted[i], sorted[j] + 1)) got.set(e.entry, e);
    i = j + 1;
  }
  return want.map((e) => got.get(e));
}
