// The rows of the grid, asked from the host a page at a time and kept in a small cache: pages are
// asked for when they come into view (a fast drag waits for a pause), and an answer for a request
// the view has forgotten (a reload, a new view) is dropped.

import type { HostToRecordView, RowView } from '../../protocol.js';
import { Lru } from '../common.js';
import { PAGE, pageSpan, pagesSpanning } from './gridGeometry.js';
import { state, vscode } from './state.js';

/** Pages kept in memory. */
const CACHE_PAGES = 64;
/** Page requests wait for the scrolling to pause this long, so a fast drag does not flood the host. */
const REQUEST_DELAY_MS = 40;

interface Page {
  rows: (RowView | undefined)[];
  /** Entries known when the page was answered: a short page is re-asked only once more are known. */
  entriesAt: number;
}

const pages = new Lru<number, Page>(CACHE_PAGES);
const pending = new Map<number, number>(); // requestId → page
const inFlight = new Set<number>();
let nextRequestId = 1;
let requestTimer: ReturnType<typeof setTimeout> | undefined;

/** The row of `entry` when its page is at hand. */
export function rowAt(entry: number): RowView | undefined {
  return pages.peek(Math.floor(entry / PAGE))?.rows[entry % PAGE];
}

/**
 * Asks for the pages of [start, end) not at hand: at once for the first screen and small moves,
 * else after a pause, then for the range `rendered()` gives at that time.
 */
export function scheduleRequests(start: number, end: number, rendered: () => { start: number; end: number }): void {
  clearTimeout(requestTimer);
  const wanted = missingPages(start, end);
  if (!wanted.length) return;
  // The first screen and small moves are asked for at once; a drag waits for a pause.
  if (pages.size === 0 || wanted.length === 1) {
    requestPages(wanted);
    return;
  }
  requestTimer = setTimeout(() => {
    const r = rendered();
    requestPages(missingPages(r.start, r.end));
  }, REQUEST_DELAY_MS);
}

function missingPages(start: number, end: number): number[] {
  return pagesSpanning(start, end).filter((p) => {
    if (inFlight.has(p)) return false;
    const page = pages.peek(p);
    const need = Math.min(PAGE, state.entries - p * PAGE);
    return !(page && (page.rows.filter(Boolean).length >= need || page.entriesAt >= state.entries));
  });
}

function requestPages(list: number[]): void {
  for (const p of list) {
    if (inFlight.has(p)) continue;
    const requestId = nextRequestId++;
    pending.set(requestId, p);
    inFlight.add(p);
    vscode.postMessage({ type: 'requestRows', requestId, ...pageSpan(p, state.entries) });
  }
}

/** Stores the rows of an answer; false when nobody asked for it (then nothing changes). */
export function onRows(m: Extract<HostToRecordView, { type: 'rows' }>): boolean {
  const p = pending.get(m.requestId);
  if (p === undefined) return false; // stale: asked before a reload, or never asked
  pending.delete(m.requestId);
  inFlight.delete(p);
  const page: Page = { rows: new Array(PAGE), entriesAt: state.entries };
  const rows = Array.isArray(m.rows) ? m.rows : [];
  const base = p * PAGE;
  const start = Number.isSafeInteger(m.start) ? m.start : base;
  rows.forEach((r, i) => {
    if (!r || typeof r !== 'object') return;
    const e = Number.isSafeInteger(r.entry) ? r.entry : start + i;
    if (e >= base && e < base + PAGE) page.rows[e - base] = r;
  });
  pages.set(p, page);
  return true;
}

/**
 * New token counts or findings: asks again for the pages of the rows on screen (the old rows stay
 * shown meanwhile) and forgets the rest, so they are fetched fresh when scrolled to.
 */
export function refreshPages(start: number, end: number): void {
  const visible = pagesSpanning(start, end);
  for (const p of pages.keys()) if (!visible.includes(p)) pages.delete(p);
  requestPages(visible);
}

/** Forgets every page and every request (a new shard, new columns, a new view). */
export function resetPages(): void {
  pages.clear();
  pending.clear();
  inFlight.clear();
  clearTimeout(requestTimer);
}
