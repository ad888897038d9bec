// One place model: what a person types (palette, the record view's box, the CLI) and what every
// presenter shows, all 1-based; the engine's indexes 0-based.
import { describe, expect, test } from 'vitest';
import { formatPlace, formatRecord, parsePlace, targetIndex } from '../../../src/engine/places';

describe('parsePlace', () => {
  test('reads records, lines and rows as they are shown, 1-based', () => {
    expect(parsePlace('12')).toEqual({ kind: 'record', value: 12 });
    expect(parsePlace(' #12 ')).toEqual({ kind: 'record', value: 12 });
    expect(parsePlace('record 12')).toEqual({ kind: 'record', value: 12 });
    expect(parsePlace('line 40')).toEqual({ kind: 'line', value: 40 });
    expect(parsePlace('L40')).toEqual({ kind: 'line', value: 40 });
    expect(parsePlace('l 40')).toEqual({ kind: 'line', value: 40 });
    expect(parsePlace(':40')).toEqual({ kind: 'line', value: 40 });
    expect(parsePlace('row 7')).toEqual({ kind: 'row', value: 7 });
    expect(parsePlace('ROW7')).toEqual({ kind: 'row', value: 7 });
    expect(parsePlace('r7')).toEqual({ kind: 'row', value: 7 });
  });
  test('refuses what is not a place', () => {
    for (const bad of ['', 'abc', '0', '#0', 'line 0', 'row 0', 'row -1', '1.5', '12 13', 'line', '9'.repeat(20), 'row 7 8']) {
      expect(parsePlace(bad), bad).toBeNull();
    }
  });
  test('names the 0-based index the engine uses', () => {
    expect(targetIndex({ kind: 'record', value: 12 })).toEqual({ record: 11 });
    expect(targetIndex({ kind: 'row', value: 7 })).toEqual({ entry: 6 });
    expect(targetIndex({ kind: 'line', value: 40 })).toEqual({ line: 40 });
  });
});

describe('formatPlace and formatRecord', () => {
  test('what is typed is what is shown: parsing a formatted place gives the same place back', () => {
    // The record at index 11 is shown as #12; typing 12 names index 11 again.
    expect(formatRecord(11)).toBe('#12');
    expect(targetIndex(parsePlace(formatRecord(11))!)).toEqual({ record: 11 });
    // The row at entry 6 is shown as row 7; typing "row 7" names entry 6 again.
    expect(formatPlace({ line: null, entry: 6 })).toBe('row 7');
    expect(targetIndex(parsePlace(formatPlace({ line: null, entry: 6 }))!)).toEqual({ entry: 6 });
    expect(formatPlace({ line: 40, column: 3, entry: 39 })).toBe('40:3');
    expect(formatPlace({ line: 40, entry: 39 })).toBe('40');
    expect(formatPlace({ line: null, entry: null, record: null })).toBe('file');
    expect(formatPlace({ line: null, entry: 12344 })).toBe('row 12345');
  });
});
