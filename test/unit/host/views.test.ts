// Table cells are previews: short, whitespace-folded, and never built by stringifying a huge record.
import { describe, expect, it } from 'vitest';
import { boundedJson, cellText, CELL_CHARS } from '../../../src/host/views';

describe('cell previews', () => {
  it('agree with JSON.stringify up to the bound (JSON.stringify as the reference)', () => {
    const values = [{ a: 1, b: [true, null, 'x"y'], c: { d: 'é🚲' } }, [1, 2, [3, [4]]], 'plain', 42, null, { 'k\n': '\u2028' }];
    for (const v of values) {
      const full = JSON.stringify(v);
      for (const max of [1, 5, 17, 1000]) {
        const b = boundedJson(v, max);
        expect(full.startsWith(b.slice(0, Math.min(b.length, max)))).toBe(true);
        expect(b.length).toBeLessThanOrEqual(max + 1);
        if (full.length <= max) expect(b).toBe(full);
      }
    }
  });

  it('stay short for a record holding megabytes', () => {
    const big = { messages: [{ role: 'user', content: 'x'.repeat(5_000_000) }], blob: Array.from({ length: 100_000 }, (_, i) => i) };
    expect(cellText(big).length).toBeLessThanOrEqual(CELL_CHARS + 1);
    expect(cellText(big.blob).length).toBeLessThanOrEqual(CELL_CHARS + 1);
    expect(cellText('a\n\n  b'.repeat(1_000_000)).length).toBeLessThanOrEqual(CELL_CHARS + 1);
    expect(cellText(big.messages)).toBe('1 turn: user');
  });
});
