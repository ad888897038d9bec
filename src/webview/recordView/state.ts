// What the record view knows of its shard and its selection, shared by its parts (one object, so
// that every part reads and writes the same values), and its one connection to the host.

import type { ColumnInfo, DetailView, HostToRecordView, RecordViewToHost, ViewQuery } from '../../protocol.js';
import { connect, h } from '../common.js';

export type InitMessage = Extract<HostToRecordView, { type: 'init' }>;
export type Tab = 'conversation' | 'pair' | 'rendered' | 'json' | 'findings';

/** What the webview keeps across reloads (VS Code's webview state). */
export interface SavedState {
  fileName: string;
  selected: number;
}

export interface ViewState {
  info: InitMessage | null;
  /** Entries of the grid: the shard's, or the view's while a search, sort or filter is on. */
  entries: number;
  complete: boolean;
  progress: number;
  columns: ColumnInfo[];
  selected: number;
  detail: DetailView | null;
  /** The entry whose detail is asked for: an answer for another is stale. */
  detailFor: number;
  activeTab: Tab | null;
  /** Whether the person wants the detail pane (it shows once an entry is selected). */
  detailOpen: boolean;
  viewOn: boolean;
  viewTotal: number;
  query: ViewQuery | null;
}

export const state: ViewState = {
  info: null,
  entries: 0,
  complete: true,
  progress: 0,
  columns: [],
  selected: -1,
  detail: null,
  detailFor: -1,
  activeTab: null,
  detailOpen: true,
  viewOn: false,
  viewTotal: 0,
  query: null,
};

export const vscode = connect<RecordViewToHost>();

export const root = document.getElementById('sw-root') ?? document.body.appendChild(h('div', 'sw-root'));
root.classList.add('sw-record-view');

/** Whether the shard's entries are rows of a table (the host sends the format's traits). */
export const isTable = (): boolean => !!state.info && state.info.traits?.textual === false;
