// The sparse, lazy line index: it finds line ends and blank lines without parsing, keeps one
// offset per block of lines, and numbers records exactly once the lines before have been parsed
// (by the read itself, a scan, or the analysis). Every expectation comes from a naive reference in
// the test: split the bytes on 0x0A and JSON.parse each piece (ECMA-404 / RFC 8259 via V8).

import { afterAll, describe, expect, it } from 'vitest';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import { classifyLine } from '../../../../src/engine/sources/textEntry.js';
import { LineFinder, LineIndex, NumberList } from '../../../../src/engine/sources/lineIndex.js';
import { mulberry32, tempDir, writeShard } from './jsonl-helpers.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());

interface Naive {
  byteOffset: number;
  length: number;
  record: number | null;
  blank: boolean;
}

/** Naive reference: split on 0x0A, strip one BOM and CR/space/tab, JSON.parse what is left. */
function naive(data: Buffer, maxLineBytes = Infinity): Naive[] {
  const dec = new TextDecoder('utf-8', { ignoreBOM: true });
  const out: Naive[] = [];
  let start = 0;
  let records = 0;
  while (start < data.length) {
    let end = data.indexOf(0x0a, start);
    const next = end < 0 ? data.length : end + 1;
    if (end < 0) end = data.length;
    const length = end - start;
    let body = data.subarray(start, end);
    if (body[0] === 0xef && body[1] === 0xbb && body[2] === 0xbf) body = body.subarray(3);
    const text = dec.decode(body).replace(/^[ \t\r]+|[ \t\r]+$/g, '');
    const blank = length <= maxLineBytes && text === '';
    let ok = !blank && length <= maxLineBytes;
    try {
      if (ok) JSON.parse(text);
    } catch {
      ok = false;
    }
    out.push({ byteOffset: start, length, record: ok ? records++ : null, blank });
    start = next;
  }
  return out;
}

/** Mostly records, with blank lines, broken lines, byte order marks (whole and cut short) and CRLF. */
function generate(lines: number, seed: number, long = false): Buffer {
  const rnd = mulberry32(seed);
  const parts: Buffer[] = [];
  for (let i = 0; i < lines; i++) {
    const r = rnd();
    let line: Buffer;
    if (r < 0.04) line = Buffer.from(['', ' ', '\t \r', '\r'][Math.floor(rnd() * 4)]);
    else if (r < 0.06) line = Buffer.from([0xef, 0xbb, 0xbf, 0x20]);
    else if (r < 0.07) line = Buffer.from([0xef, 0xbb]);
    else if (r < 0.1) line = Buffer.from(`{"id":${i},"note":"brake pads worn`);
    else if (r < 0.11) line = Buffer.from(`  {"id":${i}} trailing`);
    else if (long && r < 0.115) line = Buffer.from(JSON.stringify({ id: i, log: 'derailleur '.repeat(150_000) }));
    else line = Buffer.from(JSON.stringify({ id: i, text: `chain wear ${'é'.repeat(Math.floor(rnd() * 30))}` }));
    parts.push(line, Buffer.from(rnd() < 0.1 ? '\r\n' : '\n'));
  }
  parts.push(Buffer.from('{"last":"no newline"}'));
  return Buffer.concat(parts);
}

describe('LineFinder (line ends and blank lines without parsing)', () => {
  it('agrees with the parsing classifier on every blank/non-blank edge, pushed in chunks of every size', () => {
    const cases: number[][] = [
      [], [0x20], [0x09, 0x0d], [0xef, 0xbb, 0xbf], [0xef, 0xbb, 0xbf, 0x20, 0x0d], [0xef, 0xbb], [0xef],
      [0xef, 0xbb, 0xbf, 0xef, 0xbb, 0xbf], [0x7b, 0x7d], [0x20, 0x7b, 0x7d], [0x0c], [0xc2, 0xa0],
    ];
    const data = Buffer.concat(cases.map((c) => Buffer.from([...c, 0x0a])));
    for (const step of [1, 2, 3, 5, data.length]) {
      const idx = new LineIndex(1 << 20, 1 << 20);
      const finder = new LineFinder(idx);
      for (let o = 0; o < data.length; o += step) finder.push(data.subarray(o, o + step));
      finder.end();
      expect(idx.lines).toBe(cases.length);
      cases.forEach((c, i) => {
        const kind = classifyLine(Uint8Array.from(c));
        expect(idx.kindOf(i) === 'blank', `case ${i} (${c.join(' ')}) in chunks of ${step}`).toBe(kind === 'blank');
      });
    }
  });

  it('a sorted number list counts, finds and inserts like a plain sorted array', () => {
    const rnd = mulberry32(4);
    const list = new NumberList();
    const plain: number[] = [];
    for (let i = 0; i < 3000; i++) {
      const x = Math.floor(rnd() * 5000);
      expect(list.insert(x)).toBe(!plain.includes(x));
      if (!plain.includes(x)) plain.push(x);
      plain.sort((a, b) => a - b);
    }
    expect(list.length).toBe(plain.length);
    for (let x = -1; x < 5002; x += 7) {
      expect(list.countBelow(x)).toBe(plain.filter((y) => y < x).length);
      expect(list.has(x)).toBe(plain.includes(x));
    }
  });
});

describe('JSONL source on the lazy index (compared with the naive split + JSON.parse)', () => {
  it('pages anywhere equal the reference, and record numbers are exact once the lines before are parsed', async () => {
    const data = generate(40_000, 11);
    const ref = naive(data);
    const p = writeShard(tmp.dir, 'lazy.jsonl', data);
    // No catch-up: a far page numbers its records as if every unparsed non-blank line held one.
    const src = new JsonlSource(p, { exactCatchUpBytes: 0 });
    try {
      await src.open();
      const info = await src.index();
      expect(info.entries).toBe(ref.length);
      expect(src.recordsExact).toBe(false);
      const far = await src.read(30_000, 30_050);
      far.forEach((e, k) => {
        expect(e.byteOffset).toBe(ref[30_000 + k].byteOffset);
        expect(e.record === null).toBe(ref[30_000 + k].record === null);
      });
      const provisional = far.find((e) => e.record !== null)!;
      const truth = ref[provisional.entry].record!;
      expect(provisional.record).toBeGreaterThan(truth);
      // The analysis tells which lines hold no record: from then on every number is exact.
      src.learnNonRecords(ref.flatMap((x, i) => (x.record === null ? [i] : [])), ref.length);
      expect(src.recordsExact).toBe(true);
      expect(src.recordCount).toBe(ref.filter((x) => x.record !== null).length);
      const rnd = mulberry32(5);
      for (let k = 0; k < 30; k++) {
        const a = Math.floor(rnd() * ref.length);
        const b = Math.min(ref.length, a + 1 + Math.floor(rnd() * 200));
        const got = await src.read(a, b);
        expect(got.map((e) => [e.byteOffset, e.record])).toEqual(ref.slice(a, b).map((x) => [x.byteOffset, x.record]));
      }
    } finally {
      await src.close();
    }
  });

  it('with the default catch-up, a read parses the lines before it and numbers exactly; a scan from the top teaches the index', async () => {
    const data = generate(20_000, 12);
    const ref = naive(data);
    const p = writeShard(tmp.dir, 'catchup.jsonl', data);
    const src = new JsonlSource(p);
    try {
      await src.open();
      await src.index();
      const got = await src.read(15_000, 15_100);
      expect(got.map((e) => e.record)).toEqual(ref.slice(15_000, 15_100).map((x) => x.record));
      const other = new JsonlSource(p, { exactCatchUpBytes: 0 });
      await other.open();
      await other.index();
      let n = 0;
      for await (const e of other.scan()) if (e.record !== null) n++;
      expect(other.recordsExact).toBe(true);
      expect(other.recordCount).toBe(n);
      expect((await other.read(19_000, 19_010)).map((e) => e.record)).toEqual(ref.slice(19_000, 19_010).map((x) => x.record));
      await other.close();
    } finally {
      await src.close();
    }
  });

  it('lines over the long-line size are read on their own, lines over the limit not at all; both sit right among short ones', async () => {
    const data = generate(3_000, 13, true);
    const limit = 1_200_000;
    const ref = naive(data, limit);
    expect(ref.some((x) => x.length > limit)).toBe(true);
    const p = writeShard(tmp.dir, 'long.jsonl', data);
    const src = new JsonlSource(p, { maxLineBytes: limit });
    try {
      await src.open();
      await src.index();
      const all = await src.read(0, ref.length);
      expect(all.map((e) => [e.byteOffset, e.record])).toEqual(ref.map((x) => [x.byteOffset, x.record]));
      for (const e of all) {
        if (ref[e.entry].length > limit) expect(e.findings.map((f) => f.rule)).toEqual(['line-too-long']);
      }
      const rnd = mulberry32(6);
      for (let k = 0; k < 20; k++) {
        const a = Math.floor(rnd() * ref.length);
        const got = await src.read(a, Math.min(ref.length, a + 40));
        expect(got.map((e) => e.byteOffset)).toEqual(ref.slice(a, a + 40).map((x) => x.byteOffset));
      }
    } finally {
      await src.close();
    }
  });

  it('the index keeps about one offset per block of lines, not one per line', async () => {
    const lines = 400_000;
    const data = Buffer.from(`${'{"id":1,"text":"spoke"}\n'.repeat(lines)}`);
    const p = writeShard(tmp.dir, 'short.jsonl', data);
    const src = new JsonlSource(p);
    try {
      await src.open();
      await src.index();
      // A dense index of 8-byte offsets alone would take 3.2 MB here.
      expect(src.indexBytes).toBeLessThan((lines * 8) / 8);
      expect((await src.read(lines - 2, lines)).map((e) => e.byteOffset)).toEqual([(lines - 2) * 24, (lines - 1) * 24]);
    } finally {
      await src.close();
    }
  });

  it('a finished index kept as JSON is taken by a new source of the same bytes (no reading to index), and refused for other bytes', async () => {
    const data = generate(10_000, 14, true);
    const ref = naive(data);
    const p = writeShard(tmp.dir, 'kept.jsonl', data);
    const first = new JsonlSource(p);
    await first.open();
    await first.index();
    await first.read(9_000, 9_010);
    const kept = JSON.parse(JSON.stringify(first.exportIndex()));
    await first.close();
    expect(kept).not.toBeNull();
    const second = new JsonlSource(p);
    try {
      await second.open();
      expect(second.importIndex(kept)).toBe(true);
      const info = second.info();
      expect(info.complete).toBe(true);
      expect(info.entries).toBe(ref.length);
      const rnd = mulberry32(8);
      for (let k = 0; k < 20; k++) {
        const a = Math.floor(rnd() * ref.length);
        const got = await second.read(a, Math.min(ref.length, a + 50));
        expect(got.map((e) => [e.byteOffset, e.record])).toEqual(ref.slice(a, a + 50).map((x) => [x.byteOffset, x.record]));
      }
    } finally {
      await second.close();
    }
    // Other bytes (one more line), another line limit, or a damaged snapshot: refused, indexed as usual.
    const grown = writeShard(tmp.dir, 'kept-grown.jsonl', Buffer.concat([data, Buffer.from('\n{"id":"new"}\n')]));
    const damaged = { ...kept, index: { ...kept.index, blockStarts: kept.index.blockStarts.slice(1) } };
    for (const [path, snapshot, opts] of [[grown, kept, {}], [p, kept, { maxLineBytes: 1000 }], [p, damaged, {}], [p, { kind: 'jsonl-lines' }, {}]] as const) {
      const s = new JsonlSource(path, opts);
      try {
        await s.open();
        expect(s.importIndex(snapshot)).toBe(false);
        expect(s.info().complete).toBe(false);
        await s.index();
        expect(s.info().entries).toBeGreaterThan(0);
      } finally {
        await s.close();
      }
    }
  });
});
