// The record view's grid arithmetic, without a browser: which rows a scroll position shows, where the
// rendered rows stand, where to scroll to show a row, which pages a range needs, how the detail pane
// is kept in bounds. The expected values are worked out by hand from the rows' pixel positions
// (row e spans [e·24, e·24 + 24) of the unscaled content).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  clampPaneSize,
  contentPos,
  gridGeometry,
  gridTemplate,
  keyTarget,
  MAX_SPACER,
  pageSpan,
  pagesSpanning,
  renderedRange,
  ROW_HEIGHT,
  rowWindow,
  scrollTopFor,
  scrollTopToShow,
  splitterKeyDirection,
  stepTarget,
  visibleRange,
} from '../../../src/webview/recordView/gridGeometry.js';

describe('the row height', () => {
  it('is the one the style sheet gives the rows', () => {
    const css = readFileSync(join(__dirname, '../../../media/recordView.css'), 'utf8');
    expect(css).toMatch(new RegExp(`--sw-row-height:\\s*${ROW_HEIGHT}px`));
    expect(ROW_HEIGHT).toBe(24); // the hand-worked cases below assume it
  });
});

describe('a grid short enough to scroll unscaled (1,000 rows, 10 on screen)', () => {
  const g = gridGeometry(1000, 240);

  it('scrolls through the whole content', () => {
    expect(g.spacerH).toBe(24_000);
    expect(g.maxScroll).toBe(23_760); // the last screen starts at row 990
    expect(g.contentMax).toBe(23_760);
    expect(contentPos(g, 2410)).toBe(2410);
  });

  it('shows the rows under the scroll bar', () => {
    expect(visibleRange(g, 0)).toEqual({ first: 0, count: 10 });
    expect(visibleRange(g, 2400)).toEqual({ first: 100, count: 10 });
    expect(visibleRange(g, 2423)).toEqual({ first: 100, count: 10 }); // row 100 still shows its last pixel
    expect(visibleRange(g, 2424)).toEqual({ first: 101, count: 10 });
    expect(visibleRange(g, 23_760)).toEqual({ first: 990, count: 10 });
    // A scroll position past the end (a shrinking grid) counts as the end.
    expect(visibleRange(g, 50_000)).toEqual({ first: 990, count: 10 });
  });

  it('renders the visible rows and 8 on each side, each at its own place', () => {
    // At 2410 rows 100 (cut by 10 px) to 110 (cut at the bottom) show: 11 rows, plus one spare.
    const w = rowWindow(g, 2410);
    expect(w).toEqual({ start: 92, end: 120, shift: 92 * 24 });
    for (const e of [w.start, 100, w.end - 1]) expect(w.shift + (e - w.start) * ROW_HEIGHT).toBe(e * 24);
    expect(rowWindow(g, 0)).toEqual({ start: 0, end: 19, shift: 0 });
    // At the end the window stops at the last row, whose bottom is the spacer's.
    const last = rowWindow(g, 23_760);
    expect(last.start).toBe(982);
    expect(last.end).toBe(1000);
    expect(last.shift + (last.end - last.start) * ROW_HEIGHT).toBe(g.spacerH);
  });

  it('aims page requests at whole screens', () => {
    expect(renderedRange(g, 2410)).toEqual({ start: 92, end: 119 });
    expect(renderedRange(g, 23_760)).toEqual({ start: 982, end: 1000 });
  });

  it('scrolls just enough to show a row, or centres it', () => {
    // Rows 100–109 fill the screen at 2400.
    expect(scrollTopToShow(g, 2400, 105, 'nearest')).toBeNull();
    expect(scrollTopToShow(g, 2400, 109, 'nearest')).toBeNull();
    expect(scrollTopToShow(g, 2400, 110, 'nearest')).toBe(2424); // row 110's bottom (2664) at the screen's
    expect(scrollTopToShow(g, 2400, 99, 'nearest')).toBe(2376);
    expect(scrollTopToShow(g, 2400, 50, 'nearest')).toBe(1200);
    // Centred: the row's middle (12,012) at the screen's middle (top + 120).
    expect(scrollTopToShow(g, 0, 500, 'center')).toBe(11_892);
    expect(scrollTopToShow(g, 5000, 0, 'center')).toBe(0);
    expect(scrollTopToShow(g, 0, 999, 'center')).toBe(23_760);
  });
});

describe('a grid taller than a browser lets an element be (1,000,000 rows, 25 on screen)', () => {
  const g = gridGeometry(1_000_000, 600);

  it('scales the scroll bar onto the content', () => {
    expect(g.spacerH).toBe(MAX_SPACER);
    expect(g.maxScroll).toBe(MAX_SPACER - 600);
    expect(g.contentMax).toBe(24_000_000 - 600);
    // Half way down the scroll bar is half way through the content.
    expect(contentPos(g, g.maxScroll / 2)).toBeCloseTo(g.contentMax / 2, 6);
    expect(visibleRange(g, g.maxScroll / 2).first).toBe(499_987); // 11,999,700 px / 24 = 499,987.5
    expect(visibleRange(g, g.maxScroll)).toEqual({ first: 999_975, count: 25 });
  });

  it('maps a content position to the scroll bar and back', () => {
    for (const pos of [0, 24, 1_234_567, 12_000_000, g.contentMax]) expect(contentPos(g, scrollTopFor(g, pos))).toBeCloseTo(pos, 4);
    expect(scrollTopFor(g, -50)).toBe(0);
    expect(scrollTopFor(g, 1e12)).toBe(g.maxScroll);
  });

  it('places the rendered rows inside the spacer, the first visible one cut by its offset', () => {
    const st = g.maxScroll / 2;
    const w = rowWindow(g, st);
    expect(w.start).toBe(499_987 - 8);
    // Content 11,999,700 is 12 px into row 499,987: that row starts 12 px above the screen's top.
    expect(w.shift + (499_987 - w.start) * ROW_HEIGHT).toBeCloseTo(st - 12, 6);
    const bottom = rowWindow(g, g.maxScroll);
    expect(bottom.end).toBe(1_000_000);
    expect(bottom.shift + (bottom.end - bottom.start) * ROW_HEIGHT).toBe(MAX_SPACER);
  });

  it('reaches the last row', () => {
    expect(scrollTopToShow(g, 0, 999_999, 'nearest')).toBe(g.maxScroll);
    expect(scrollTopToShow(g, g.maxScroll, 999_999, 'nearest')).toBeNull();
  });
});

describe('an empty grid', () => {
  const g = gridGeometry(0, 300);
  it('has nothing to scroll and renders no row', () => {
    expect(g).toEqual({ entries: 0, viewH: 300, spacerH: 0, maxScroll: 0, contentMax: 0 });
    expect(rowWindow(g, 0)).toEqual({ start: 0, end: 0, shift: 0 });
    expect(scrollTopFor(g, 500)).toBe(0);
  });
});

describe('keys of the grid', () => {
  const range = { first: 100, count: 10 };
  it('move the selection within the entries', () => {
    expect(keyTarget('ArrowDown', -1, range, 1000)).toBe(100); // nothing selected: the first row on screen
    expect(keyTarget('ArrowDown', 5, range, 1000)).toBe(6);
    expect(keyTarget('ArrowUp', 0, range, 1000)).toBe(0);
    expect(keyTarget('ArrowDown', 999, range, 1000)).toBe(999);
    expect(keyTarget('PageDown', 5, range, 1000)).toBe(15);
    expect(keyTarget('PageDown', 995, range, 1000)).toBe(999);
    expect(keyTarget('PageUp', 5, range, 1000)).toBe(0);
    expect(keyTarget('Home', 500, range, 1000)).toBe(0);
    expect(keyTarget('End', 5, range, 1000)).toBe(999);
    expect(keyTarget('a', 5, range, 1000)).toBeNull();
  });

  it('step to the next or previous match from the selection, or from either end', () => {
    expect(stepTarget(-1, 1, 40)).toBe(0);
    expect(stepTarget(-1, -1, 40)).toBe(39);
    expect(stepTarget(7, 1, 40)).toBe(8);
    expect(stepTarget(39, 1, 40)).toBe(39);
    expect(stepTarget(0, -1, 40)).toBe(0);
  });
});

describe('pages of 128 rows', () => {
  it('cover a range of entries', () => {
    expect(pagesSpanning(0, 128)).toEqual([0]);
    expect(pagesSpanning(0, 129)).toEqual([0, 1]);
    expect(pagesSpanning(120, 140)).toEqual([0, 1]);
    expect(pagesSpanning(128, 256)).toEqual([1]);
    expect(pagesSpanning(1000, 1300)).toEqual([7, 8, 9, 10]);
    expect(pagesSpanning(5, 5)).toEqual([]);
  });

  it('ask for the rows that exist', () => {
    expect(pageSpan(0, 1000)).toEqual({ start: 0, count: 128 });
    expect(pageSpan(1, 200)).toEqual({ start: 128, count: 72 });
    expect(pageSpan(2, 200)).toEqual({ start: 256, count: 0 });
  });
});

describe('the detail pane and the columns', () => {
  it('keeps the pane at least 160 px and leaves the table 120 px', () => {
    expect(clampPaneSize(500, 800)).toBe(500);
    expect(clampPaneSize(700, 800)).toBe(680);
    expect(clampPaneSize(100, 800)).toBe(160);
    expect(clampPaneSize(200, 250)).toBe(160); // too small a view: the pane's minimum wins
  });

  it('grows the pane toward the table with the arrow keys', () => {
    // Side by side the pane is on the right: ArrowLeft widens it. One above the other: ArrowUp heightens it.
    expect(splitterKeyDirection('ArrowLeft', false)).toBe(1);
    expect(splitterKeyDirection('ArrowRight', false)).toBe(-1);
    expect(splitterKeyDirection('ArrowUp', false)).toBe(0);
    expect(splitterKeyDirection('ArrowUp', true)).toBe(1);
    expect(splitterKeyDirection('ArrowDown', true)).toBe(-1);
    expect(splitterKeyDirection('ArrowLeft', true)).toBe(0);
  });

  it('gives each field a column, or one filler column when there are none', () => {
    const columns = (template: string): number => {
      const repeated = /\srepeat\((\d+),.*\)$/.exec(template);
      const single = (repeated ? template.slice(0, repeated.index) : template).trim().split(/\s+/);
      return single.length + (repeated ? Number(repeated[1]) : 0);
    };
    expect(columns(gridTemplate(0))).toBe(5);
    expect(columns(gridTemplate(3))).toBe(7);
  });
});
