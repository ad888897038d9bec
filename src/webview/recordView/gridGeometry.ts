// The arithmetic of the record view's virtual grid: which entries stand under the scroll bar, where
// the rendered rows sit, where to scroll to show an entry, which pages hold a range, how wide the
// number columns and the detail pane may be. Pure: numbers in, numbers (or CSS text) out, no DOM —
// the callers read the viewport and apply the results (rows.ts, pages.ts, splitter.ts).

/** Keep in step with `--sw-row-height` in recordView.css. */
export const ROW_HEIGHT = 24;
/** Rows per `requestRows` page. */
export const PAGE = 128;
/** Rows rendered above and below the visible ones. */
export const OVERSCAN = 8;
/** Browsers cap element heights (tens of millions of px); past this the scroll position is scaled. */
export const MAX_SPACER = 8_000_000;
/** The detail pane is never narrower (or lower) than this… */
export const PANE_MIN = 160;
/** …and always leaves this much of the view to the table. */
export const PANE_KEEP = 120;
/** One arrow key press on the splitter resizes the pane by this much. */
export const PANE_STEP = 24;

export interface Geometry {
  /** Entries of the grid (of the view, when a search, sort or filter is on). */
  entries: number;
  /** Height of the viewport. */
  viewH: number;
  /** Height of the scrolled spacer: the content's, capped at MAX_SPACER. */
  spacerH: number;
  /** Largest scroll position of the spacer. */
  maxScroll: number;
  /** Largest position in the unscaled content (entries × ROW_HEIGHT). */
  contentMax: number;
}

export function gridGeometry(entries: number, viewH: number): Geometry {
  const total = entries * ROW_HEIGHT;
  const spacerH = Math.min(total, MAX_SPACER);
  return { entries, viewH, spacerH, maxScroll: Math.max(0, spacerH - viewH), contentMax: Math.max(0, total - viewH) };
}

/** The content position (in unscaled px) the scroll bar stands at. */
export function contentPos(g: Geometry, scrollTop: number): number {
  const st = Math.min(scrollTop, g.maxScroll);
  return g.maxScroll > 0 ? st * (g.contentMax / g.maxScroll) : 0;
}

/** The scroll position that shows the content from `pos` (unscaled px, clamped to the content). */
export function scrollTopFor(g: Geometry, pos: number): number {
  const p = Math.max(0, Math.min(g.contentMax, pos));
  return g.contentMax > 0 ? p * (g.maxScroll / g.contentMax) : 0;
}

/** The first entry at the top of the viewport and how many whole rows the viewport holds (at least 1). */
export function visibleRange(g: Geometry, scrollTop: number): { first: number; count: number } {
  const first = Math.floor(contentPos(g, scrollTop) / ROW_HEIGHT);
  return { first, count: Math.max(1, Math.floor(g.viewH / ROW_HEIGHT)) };
}

/**
 * The rows to render for a scroll position — the visible ones and OVERSCAN on each side, [start, end) —
 * and how far down the spacer their layer is moved so that they stand where the scroll bar says.
 */
export function rowWindow(g: Geometry, scrollTop: number): { start: number; end: number; shift: number } {
  const st = Math.min(scrollTop, g.maxScroll);
  const pos = contentPos(g, scrollTop);
  const first = Math.floor(pos / ROW_HEIGHT);
  const offset = pos - first * ROW_HEIGHT;
  const visible = Math.ceil((g.viewH + offset) / ROW_HEIGHT) + 1;
  const start = Math.max(0, first - OVERSCAN);
  const end = Math.min(g.entries, first + visible + OVERSCAN);
  return { start, end, shift: st - offset - (first - start) * ROW_HEIGHT };
}

/** The entries [start, end) the rendered rows cover at a scroll position (what page requests aim at). */
export function renderedRange(g: Geometry, scrollTop: number): { start: number; end: number } {
  const { first, count } = visibleRange(g, scrollTop);
  return { start: Math.max(0, first - OVERSCAN), end: Math.min(g.entries, first + count + 1 + OVERSCAN) };
}

/**
 * The scroll position that shows `entry`: centred, or moved just enough (`nearest`); null when
 * `nearest` finds it on screen already.
 */
export function scrollTopToShow(g: Geometry, scrollTop: number, entry: number, align: 'nearest' | 'center'): number | null {
  const pos = contentPos(g, scrollTop);
  const top = entry * ROW_HEIGHT;
  if (align === 'center') return scrollTopFor(g, top - (g.viewH - ROW_HEIGHT) / 2);
  if (top < pos) return scrollTopFor(g, top);
  if (top + ROW_HEIGHT > pos + g.viewH) return scrollTopFor(g, top + ROW_HEIGHT - g.viewH);
  return null;
}

/**
 * The entry a grid key moves the selection to (clamped to the entries), or null for another key.
 * With nothing selected, ArrowDown selects the first visible row.
 */
export function keyTarget(key: string, selected: number, range: { first: number; count: number }, entries: number): number | null {
  const cur = selected < 0 ? range.first - 1 : selected;
  const next =
    key === 'ArrowDown' ? cur + 1
    : key === 'ArrowUp' ? cur - 1
    : key === 'PageDown' ? cur + range.count
    : key === 'PageUp' ? cur - range.count
    : key === 'Home' ? 0
    : key === 'End' ? entries - 1
    : null;
  return next === null ? null : Math.max(0, Math.min(entries - 1, next));
}

/** The next (or previous) entry of the view from the selection; from nothing, the first (or the last). */
export function stepTarget(selected: number, direction: 1 | -1, entries: number): number {
  const from = selected < 0 ? (direction > 0 ? -1 : entries) : selected;
  return Math.max(0, Math.min(entries - 1, from + direction));
}

/** The pages holding the entries [start, end), in order. */
export function pagesSpanning(start: number, end: number): number[] {
  const out: number[] = [];
  if (end <= start) return out;
  for (let p = Math.floor(start / PAGE); p <= Math.floor((end - 1) / PAGE); p++) out.push(p);
  return out;
}

/** The entries page `page` asks for while the shard (or view) holds `entries`. */
export function pageSpan(page: number, entries: number): { start: number; count: number } {
  const start = page * PAGE;
  return { start, count: Math.min(PAGE, Math.max(0, entries - start)) };
}

/** Widths of the record and place columns that fit a number of `digits` characters (never cut). */
export function numberColumnWidths(digits: number): { record: string; place: string } {
  return { record: `max(64px, calc(${digits}ch + 20px))`, place: `max(84px, calc(${digits + 4}ch + 20px))` };
}

/** The grid's column template: the four fixed columns, then the fields sharing the rest (or one filler). */
export function gridTemplate(fields: number): string {
  return `var(--sw-col-record) var(--sw-col-place) var(--sw-col-tokens) var(--sw-col-marker)${
    fields ? ` repeat(${fields}, minmax(var(--sw-col-field-min), 1fr))` : ' 1fr'
  }`;
}

/** A detail pane size kept between PANE_MIN and what leaves PANE_KEEP of `available` to the table. */
export function clampPaneSize(size: number, available: number): number {
  return Math.max(PANE_MIN, Math.min(available - PANE_KEEP, size));
}

/** Whether an arrow key on the splitter grows (1) or shrinks (-1) the pane, or does neither (0). */
export function splitterKeyDirection(key: string, vertical: boolean): 1 | -1 | 0 {
  const grow = vertical ? key === 'ArrowUp' : key === 'ArrowLeft';
  const shrink = vertical ? key === 'ArrowDown' : key === 'ArrowRight';
  return grow ? 1 : shrink ? -1 : 0;
}
