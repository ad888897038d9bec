import { describe, expect, it } from 'vitest';
import { LineSplitter } from '../../../../src/engine/text/lines.js';

interface Got {
  start: number;
  text: string | null;
  length: number;
  terminated: boolean;
}

function split(data: Uint8Array, cuts: number[], max: number): Got[] {
  const got: Got[] = [];
  const dec = new TextDecoder();
  const s = new LineSplitter(max, (start, b, length, terminated) =>
    got.push({ start, text: b ? dec.decode(b) : null, length, terminated }),
  );
  let prev = 0;
  for (const c of [...cuts, data.length]) {
    // A reused buffer, as the file reader does: the splitter must copy what it keeps.
    const chunk = new Uint8Array(data.subarray(prev, c));
    s.push(chunk);
    chunk.fill(0x21);
    prev = c;
  }
  s.end();
  return got;
}

// The naive reference: split on "\n" (JSON Lines: "\n" separates lines; the last may lack it).
function naive(text: string, max: number): Got[] {
  const out: Got[] = [];
  const parts = text.split('\n');
  const endsWithNl = text.endsWith('\n');
  if (endsWithNl || text === '') parts.pop();
  let pos = 0;
  parts.forEach((p, i) => {
    const len = Buffer.byteLength(p);
    const terminated = i < parts.length - 1 || endsWithNl;
    out.push({ start: pos, text: len > max ? null : p, length: len, terminated });
    pos += len + 1;
  });
  return out;
}

describe('LineSplitter', () => {
  it('matches a naive split for random text and random chunk boundaries', () => {
    let seed = 5;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
    const alphabet = ['a', 'b', '\n', '\n', '{}', 'é', '😀', '\r'];
    for (let n = 0; n < 500; n++) {
      const text = Array.from({ length: Math.floor(rnd() * 60) }, () => alphabet[Math.floor(rnd() * alphabet.length)]).join('');
      const data = new TextEncoder().encode(text);
      const cuts = Array.from({ length: Math.floor(rnd() * 6) }, () => Math.floor(rnd() * (data.length + 1))).sort((a, b) => a - b);
      const max = 1 + Math.floor(rnd() * 12);
      expect(split(data, cuts, max), JSON.stringify({ text, cuts, max })).toEqual(naive(text, max));
    }
  });

  it('has no extra entry after a final \\n and counts a final unterminated line', () => {
    const enc = new TextEncoder();
    expect(split(enc.encode('a\nb\n'), [], 100).map((g) => g.text)).toEqual(['a', 'b']);
    expect(split(enc.encode('a\nb'), [], 100).map((g) => [g.text, g.terminated])).toEqual([['a', true], ['b', false]]);
    expect(split(enc.encode(''), [], 100)).toEqual([]);
    expect(split(enc.encode('\n'), [], 100).map((g) => g.text)).toEqual(['']);
  });
});
