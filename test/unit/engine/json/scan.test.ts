import { readdirSync, readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MAX_DEPTH, parseLine, scanJson } from '../../../../src/engine/json/scan.js';
import { firstInvalidUtf8 } from '../../../../src/engine/text/utf8.js';

const projectRoot = resolve(__dirname, '../../../..');
// Golden files: nst/JSONTestSuite test_parsing/ (MIT), see ../shared/testdata/SOURCES.md.
const suiteDir = resolve(projectRoot, '../shared/testdata/json-parsing');

function suiteFiles(): string[] {
  // readdirSync throws when the folder is missing: the test fails rather than skips.
  return readdirSync(suiteDir).filter((f) => f.endsWith('.json')).sort();
}

const lenient = new TextDecoder('utf-8', { fatal: false, ignoreBOM: true });

function nativeParses(text: string): boolean {
  try {
    JSON.parse(text);
    return true;
  } catch {
    return false;
  }
}

describe('scanJson against JSONTestSuite (nst/JSONTestSuite, RFC 8259)', () => {
  const files = suiteFiles();

  it('finds the suite', () => {
    expect(files.filter((f) => f.startsWith('y_')).length).toBeGreaterThan(90);
    expect(files.filter((f) => f.startsWith('n_')).length).toBeGreaterThan(180);
  });

  it('accepts every y_ file and rejects every n_ file (invalid UTF-8 aside)', () => {
    let yOk = 0;
    let nRejected = 0;
    const onlyEncoding: string[] = [];
    const wrong: string[] = [];
    for (const f of files) {
      const bytes = readFileSync(resolve(suiteDir, f));
      const text = lenient.decode(bytes);
      const badUtf8 = firstInvalidUtf8(bytes) >= 0;
      const r = scanJson(text);
      if (f.startsWith('y_')) {
        // JSONTestSuite: y_ files must be accepted.
        if (r.ok) yOk++;
        else wrong.push(`${f}: ${r.message} at ${r.column}`);
      } else if (f.startsWith('n_')) {
        // JSONTestSuite: n_ files must be rejected; some are only invalid UTF-8, which the
        // decoder turns into U+FFFD and the source reports as an encoding finding instead. Such a
        // file must then be sound JSON once decoded (ECMA-262 JSON.parse as the oracle): its only
        // fault is the encoding.
        if (!r.ok) nRejected++;
        else if (badUtf8 && nativeParses(text)) onlyEncoding.push(f);
        else wrong.push(`${f}: accepted${badUtf8 ? ', and not sound JSON once decoded' : ''}`);
      }
    }
    console.log(`scanJson: y_ accepted ${yOk}, n_ rejected ${nRejected}, n_ with only invalid UTF-8: ${onlyEncoding.join(', ') || 'none'}`);
    expect(wrong).toEqual([]);
  });

  it('agrees with the native JSON.parse (ECMA-262 JSON.parse as oracle) on every suite file that is valid UTF-8', () => {
    const disagree: string[] = [];
    let compared = 0;
    for (const f of files) {
      const bytes = readFileSync(resolve(suiteDir, f));
      if (firstInvalidUtf8(bytes) >= 0) continue;
      const text = lenient.decode(bytes);
      compared++;
      if (scanJson(text).ok !== nativeParses(text)) disagree.push(f);
    }
    console.log(`scanJson vs JSON.parse: ${compared} files compared, ${disagree.length} disagree`);
    expect(disagree).toEqual([]);
  });

  it('survives every i_ file and prints what it decides', () => {
    const decided: string[] = [];
    for (const f of files.filter((x) => x.startsWith('i_'))) {
      const r = scanJson(lenient.decode(readFileSync(resolve(suiteDir, f))));
      decided.push(`${f}: ${r.ok ? `accepted${r.notes.length ? ` (${r.notes.map((n) => n.kind).join(', ')})` : ''}` : `rejected (${r.message})`}`);
    }
    console.log(decided.join('\n'));
    expect(decided.length).toBeGreaterThan(20);
  });
});

describe('scanJson errors and columns (RFC 8259 grammar)', () => {
  const cases: Array<[string, number, RegExp]> = [
    ['{"a":1,}', 8, /property name/],
    ['[1 2]', 4, /',' or '\]'/],
    ['[1,]', 4, /value after ','/],
    ['{"a" 1}', 6, /':'/],
    ['{"a":1 "b":2}', 8, /',' or '}'/],
    ['  "abc', 3, /unterminated string/],
    ['"a\nb"', 3, /control character U\+000A/],
    ['"\\x"', 2, /invalid escape/],
    ['"\\u12G4"', 2, /four hex digits/],
    ['01', 1, /leading zero/],
    ['-', 2, /digit after '-'/],
    ['1.', 3, /digit after '.'/],
    ['1e+', 4, /exponent/],
    ['tru', 1, /true, false or null/],
    ['{} {}', 4, /after the value/],
    ['', 1, /empty/],
    ['{"😀":x}', 7, /expected a value/], // the emoji is two UTF-16 code units
    ["{'a':1}", 2, /double quotes/],
  ];
  for (const [text, column, message] of cases) {
    it(`rejects ${JSON.stringify(text)} at column ${column}`, () => {
      const r = scanJson(text);
      expect(r.ok).toBe(false);
      if (!r.ok) {
        expect(r.column).toBe(column);
        expect(r.message).toMatch(message);
      }
    });
  }

  it('allows only JSON white space around the value (RFC 8259 §2)', () => {
    expect(scanJson(' \t\r\n{"a":[1, 2]} \r\n').ok).toBe(true);
    expect(scanJson('\u00a0{}').ok).toBe(false);
    expect(scanJson('\ufeff{}').ok).toBe(false); // the caller strips a BOM first
    expect(scanJson('{}\u000c').ok).toBe(false);
  });

  it('handles 100000 nested arrays without overflowing and caps depth with a clear message', () => {
    const r = scanJson('['.repeat(100000));
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.message).toMatch(/nesting deeper than/);
      expect(r.column).toBe(MAX_DEPTH + 1);
    }
    expect(scanJson('['.repeat(MAX_DEPTH) + ']'.repeat(MAX_DEPTH)).ok).toBe(true);
    expect(scanJson('{"a":'.repeat(MAX_DEPTH + 1) + '1' + '}'.repeat(MAX_DEPTH + 1)).ok).toBe(false);
  });
});

describe('scanJson notes (RFC 8259 §4, §6, §8.2)', () => {
  it('notes a duplicate name after unescaping, with the later member pointer and column (RFC 8259 §4)', () => {
    const text = '{"a":[1,{"b":1,"\\u0062":2}],"c":0}';
    const r = scanJson(text);
    expect(r.ok).toBe(true);
    expect(r.notes).toEqual([
      expect.objectContaining({ kind: 'duplicate-key', pointer: '/a/1/b', column: text.indexOf('"\\u0062"') + 1 }),
    ]);
    expect(scanJson('{"a":1,"A":2}').notes).toEqual([]);
    expect(scanJson('[{"a":1},{"a":2}]').notes).toEqual([]);
  });

  it('escapes pointer tokens per RFC 6901', () => {
    const r = scanJson('{"x/y":{"m~n":1,"m~n":2}}');
    expect(r.notes[0].pointer).toBe('/x~1y/m~0n');
  });

  it('notes integers beyond ±(2^53−1) only (RFC 8259 §6)', () => {
    const safe = ['9007199254740991', '-9007199254740991', '0', '1e400', '9007199254740993.0', '1E20', '123456789012345'];
    for (const s of safe) expect(scanJson(s).notes, s).toEqual([]);
    const unsafe = ['9007199254740992', '-9007199254740992', '123456789012345678901234567890'];
    for (const s of unsafe) {
      const r = scanJson(`{"n":[0,${s}]}`);
      expect(r.notes, s).toEqual([expect.objectContaining({ kind: 'unsafe-number', pointer: '/n/1', column: 9 })]);
    }
  });

  it('notes lone surrogate escapes but not pairs (RFC 8259 §8.2)', () => {
    expect(scanJson('"\\uD834\\uDD1E"').notes).toEqual([]);
    const r = scanJson('{"k":["ok","x\\uD800","\\uDD1E","\\uDBFF\\u0041"]}');
    expect(r.ok).toBe(true);
    expect(r.notes.map((n) => [n.pointer, n.kind])).toEqual([
      ['/k/1', 'lone-surrogate'],
      ['/k/2', 'lone-surrogate'],
      ['/k/3', 'lone-surrogate'],
    ]);
    expect(r.notes[0].column).toBe('{"k":["ok","x'.length + 1);
    // In a name: the pointer names the member.
    const k = scanJson('{"\\uD800":1}');
    expect(k.notes).toEqual([expect.objectContaining({ kind: 'lone-surrogate', pointer: '/\ud800', column: 3 })]);
  });

  it('parseLine returns the native value with notes, or the error', () => {
    const ok = parseLine('{"a":1,"a":2}');
    expect('value' in ok && ok.value).toEqual({ a: 2 });
    expect(ok.notes).toHaveLength(1);
    const bad = parseLine('{"a":}');
    expect('error' in bad && bad.error.column).toBe(6);
  });
});
