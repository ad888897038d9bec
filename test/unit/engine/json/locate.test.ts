// Pointer location in a record's text (RFC 6901 pointers, UTF-16 columns), checked against
// positions recorded by a serializer of the test's own, independent of the scanner; and the
// locator made once per record: it answers many pointers and places with one reading of the text.
import { describe, expect, it, vi } from 'vitest';
import { TextLocator, locatePointer } from '../../../../src/engine/json/locate.js';
import { mulberry32 } from '../../helpers/random';

// Counts the validating scans the locator runs (the real scanner answers every call).
const scans = vi.hoisted(() => ({ n: 0 }));
vi.mock('../../../../src/engine/json/scan.js', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../../../src/engine/json/scan.js')>();
  return {
    ...real,
    scanJson: (text: string) => {
      scans.n++;
      return real.scanJson(text);
    },
  };
});

// A serializer of our own that records where each value starts, so locatePointer can be checked
// against positions computed independently of the scanner.
function serialize(value: unknown, rnd: () => number, at: Map<string, number>, pointer = '', out: string[] = [], pos = { n: 0 }): string[] {
  const ws = () => {
    const w = [' ', '\t', '\n', '\r', ''][Math.floor(rnd() * 5)];
    out.push(w);
    pos.n += w.length;
  };
  const emit = (s: string) => {
    out.push(s);
    pos.n += s.length;
  };
  at.set(pointer, pos.n + 1);
  if (Array.isArray(value)) {
    emit('[');
    value.forEach((v, i) => {
      if (i) emit(',');
      ws();
      serialize(v, rnd, at, `${pointer}/${i}`, out, pos);
      ws();
    });
    emit(']');
  } else if (value !== null && typeof value === 'object') {
    emit('{');
    Object.entries(value).forEach(([k, v], i) => {
      if (i) emit(',');
      ws();
      emit(JSON.stringify(k));
      ws();
      emit(':');
      ws();
      serialize(v, rnd, at, `${pointer}/${k.replace(/~/g, '~0').replace(/\//g, '~1')}`, out, pos);
      ws();
    });
    emit('}');
  } else emit(JSON.stringify(value));
  return out;
}


function randomValue(rnd: () => number, depth: number): unknown {
  const keys = ['a', 'b/c', 'd~e', '名前', '😀', 'tool "x"', 'e\\f', ''];
  const r = rnd();
  if (depth > 4 || r < 0.3) {
    const leaves = [1, -2.5e3, 'text 😀 with "quotes"', 'ça', true, false, null, '', 'back\\slash'];
    return leaves[Math.floor(rnd() * leaves.length)];
  }
  if (r < 0.65) return Array.from({ length: Math.floor(rnd() * 4) }, () => randomValue(rnd, depth + 1));
  const o: Record<string, unknown> = {};
  for (let i = Math.floor(rnd() * 4); i > 0; i--) o[keys[Math.floor(rnd() * keys.length)]] = randomValue(rnd, depth + 1);
  return o;
}

describe('locatePointer (RFC 6901 pointers, UTF-16 columns)', () => {
  const doc = '{"a": {"b": [10, 20, {"c~d": "v", "e/f": null}]}, "x": 1}';

  it('finds values, not keys, in nested objects and arrays', () => {
    expect(locatePointer(doc, '')).toEqual({ column: 1, found: true });
    expect(locatePointer(doc, '/a')).toEqual({ column: doc.indexOf('{"b"') + 1, found: true });
    expect(locatePointer(doc, '/a/b/1')).toEqual({ column: doc.indexOf('20') + 1, found: true });
    expect(locatePointer(doc, '/a/b/2/c~0d')).toEqual({ column: doc.indexOf('"v"') + 1, found: true });
    expect(locatePointer(doc, '/a/b/2/e~1f')).toEqual({ column: doc.indexOf('null') + 1, found: true });
    expect(locatePointer(doc, '/x')).toEqual({ column: doc.lastIndexOf('1') + 1, found: true });
  });

  it('falls back to the deepest existing ancestor', () => {
    expect(locatePointer(doc, '/a/zz/q')).toEqual({ column: doc.indexOf('{"b"') + 1, found: false });
    expect(locatePointer(doc, '/a/b/7')).toEqual({ column: doc.indexOf('[10') + 1, found: false });
    expect(locatePointer(doc, '/a/b/01')).toEqual({ column: doc.indexOf('[10') + 1, found: false });
    expect(locatePointer(doc, '/x/y')).toEqual({ column: doc.lastIndexOf('1') + 1, found: false });
  });

  it('counts UTF-16 code units through CJK and emoji', () => {
    // { " 名 前 " : " 😀(2 units) 😀(2 units) " , " k " : 1  → the 1 is the 18th code unit
    expect(locatePointer('{"名前":"😀😀","k":1}', '/k')).toEqual({ column: 18, found: true });
    // { " 😀(2) " : [ 0 , " 😀(2) " , 2  → the 2 is the 15th code unit
    expect(locatePointer('{"😀":[0,"😀",2]}', '/😀/2')).toEqual({ column: 15, found: true });
  });

  it('resolves a duplicated name to the last member, as JSON.parse does', () => {
    const t = '{"a":1,"a":22}';
    expect(locatePointer(t, '/a')).toEqual({ column: t.indexOf('22') + 1, found: true });
  });

  it('returns null for text that does not parse', () => {
    expect(locatePointer('{"a":', '/a')).toBeNull();
  });

  it('matches independently recorded positions for random documents', () => {
    const rnd = mulberry32(7);
    let checked = 0;
    for (let n = 0; n < 300; n++) {
      const value = randomValue(rnd, 0);
      const at = new Map<string, number>();
      const text = serialize(value, rnd, at).join('');
      // Duplicate keys cannot occur: serialize walks a JS object.
      for (const [p, col] of at) {
        expect(locatePointer(text, p), `${text} ${p}`).toEqual({ column: col, found: true });
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(1000);
  });

  it('works on a 1 MB line', () => {
    const parts: string[] = ['['];
    let len = 1;
    let expected = 0;
    for (let i = 0; i < 20000; i++) {
      const piece = `${i ? ',' : ''}{"id":${i},"text":"spoke tension check ${'x'.repeat(20)}"}`;
      if (i === 19999) expected = len + piece.indexOf('"spoke') + 1;
      parts.push(piece);
      len += piece.length;
    }
    parts.push(']');
    const text = parts.join('');
    expect(text.length).toBeGreaterThan(1_000_000);
    expect(locatePointer(text, '/19999/text')).toEqual({ column: expected, found: true });
  });
});

describe('TextLocator (one per record, many findings)', () => {
  it('answers every pointer of a document as locatePointer does, scanning the text once', () => {
    const rnd = mulberry32(11);
    let checked = 0;
    for (let n = 0; n < 200; n++) {
      const value = randomValue(rnd, 0);
      const at = new Map<string, number>();
      const text = serialize(value, rnd, at).join('');
      const locator = new TextLocator(text);
      const before = scans.n;
      const pointers = [...at.keys()];
      // Asked twice and out of order: members read for one pointer serve the others.
      for (const p of [...pointers].reverse().concat(pointers)) {
        expect(locator.locate(p), `${text} ${p}`).toEqual({ column: at.get(p), found: true });
        checked++;
      }
      expect(scans.n - before).toBe(1);
      // Paths that do not exist fall back as for a single pointer.
      for (const p of pointers.slice(0, 5)) {
        for (const tail of ['/zz', '/7', '/01']) expect(locator.locate(p + tail)).toEqual(locatePointer(text, p + tail));
      }
    }
    expect(checked).toBeGreaterThan(1000);
  });

  it('text that is not one JSON value gives null for every pointer, after one scan', () => {
    const locator = new TextLocator('{"a": [1, 2}');
    const before = scans.n;
    for (const p of ['', '/a', '/a/0', '/b']) expect(locator.locate(p)).toBeNull();
    expect(scans.n - before).toBe(1);
  });

  it('a 1 MB line with a finding in each of 2,000 records is scanned once', () => {
    const parts: string[] = [];
    const expected: number[] = [];
    let len = 1;
    for (let i = 0; i < 20000; i++) {
      const piece = `${i ? ',' : ''}{"id":${i},"text":"spoke tension check ${'x'.repeat(20)}"}`;
      expected.push(len + piece.indexOf('"spoke') + 1);
      parts.push(piece);
      len += piece.length;
    }
    const text = `[${parts.join('')}]`;
    const locator = new TextLocator(text);
    const before = scans.n;
    for (let i = 0; i < 20000; i += 10) expect(locator.locate(`/${i}/text`)).toEqual({ column: expected[i], found: true });
    expect(scans.n - before).toBe(1);
  });

  it('places offsets at the line and column a split of the text on \\n gives', () => {
    const rnd = mulberry32(5);
    for (let n = 0; n < 50; n++) {
      const value = randomValue(rnd, 0);
      const text = serialize(value, rnd, new Map()).join('');
      const locator = new TextLocator(text);
      const startLine = 1 + Math.floor(rnd() * 100);
      const startColumn = 1 + Math.floor(rnd() * 10);
      for (let offset = 1; offset <= text.length; offset++) {
        // The naive reference: the lines of the text before the offset.
        const lines = text.slice(0, offset - 1).split('\n');
        const last = lines[lines.length - 1].length + 1;
        expect(locator.position(offset)).toEqual({ line: lines.length - 1, column: last });
        expect(locator.placeAt(offset, startLine, startColumn)).toEqual(
          lines.length === 1 ? { line: startLine, column: startColumn + offset - 1 } : { line: startLine + lines.length - 1, column: last },
        );
      }
    }
  });
});
