// A JSONL shard that changes while it is open: appended bytes extend the index from where it ends
// (the unterminated final line is indexed again), a shorter or replaced file is told apart, and a
// half-written final line is incomplete while the file grows. Every expectation comes from a naive
// reference computed in the test over the file's final bytes: split on 0x0A and JSON.parse each
// piece (ECMA-404 / RFC 8259 via V8).

import { appendFileSync, renameSync, truncateSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { JsonlSource } from '../../../../src/engine/sources/jsonl.js';
import { LineFinder, LineIndex } from '../../../../src/engine/sources/lineIndex.js';
import type { Entry } from '../../../../src/engine/sources/source.js';
import { mulberry32, tempDir, writeShard } from './jsonl-helpers.js';

const tmp = tempDir();
afterAll(() => tmp.cleanup());

interface Naive {
  byteOffset: number;
  record: number | null;
  value?: unknown;
  tooLong: boolean;
  unterminated: boolean;
  blank: boolean;
}

/** Naive reference: split on 0x0A, strip CR/space/tab, JSON.parse what is left. */
function naive(data: Buffer, maxLineBytes = Infinity): Naive[] {
  const out: Naive[] = [];
  let start = 0;
  let records = 0;
  while (start < data.length) {
    let end = data.indexOf(0x0a, start);
    const unterminated = end < 0;
    if (end < 0) end = data.length;
    const tooLong = end - start > maxLineBytes;
    const text = data.subarray(start, end).toString('utf8').replace(/^[ \t\r]+|[ \t\r]+$/g, '');
    let value: unknown;
    let ok = false;
    if (!tooLong && text !== '') {
      try {
        value = JSON.parse(text);
        ok = true;
      } catch {
        ok = false;
      }
    }
    out.push({ byteOffset: start, record: ok ? records++ : null, value: ok ? value : undefined, tooLong, unterminated, blank: !tooLong && text === '' });
    start = end + 1;
  }
  return out;
}

function compare(entries: Entry[], want: Naive[], growing: boolean): void {
  expect(entries.length).toBe(want.length);
  for (let i = 0; i < want.length; i++) {
    const e = entries[i];
    const w = want[i];
    expect({ entry: e.entry, byteOffset: e.byteOffset, record: e.record }).toEqual({ entry: i, byteOffset: w.byteOffset, record: w.record });
    if (w.record !== null) expect(e.value).toEqual(w.value);
    const half = growing && i === want.length - 1 && w.unterminated && w.record === null && !w.tooLong && !w.blank;
    expect(e.incomplete === true).toBe(half);
    expect(e.findings.some((f) => f.rule === 'json-syntax')).toBe(w.record === null && !w.tooLong && !w.blank && !half);
  }
}

/** Chat-like records of the repair co-op, with blank lines, CRLF ends, multi-byte text and some long lines. */
function makeShard(lines: number, seed: number): Buffer {
  const rand = mulberry32(seed);
  const parts: string[] = [];
  for (let i = 0; i < lines; i++) {
    const r = rand();
    if (r < 0.05) parts.push(' \t');
    else if (r < 0.08) parts.push('{"broken": ');
    else {
      const pad = r > 0.9 ? 'spoke '.repeat(60) : '';
      parts.push(JSON.stringify({ id: i, messages: [{ role: 'user', content: `my hub clicks — ${pad}ünd ${i}` }, { role: 'assistant', content: 'true the wheel 🚲' }] }));
    }
    parts.push(rand() < 0.3 ? '\r\n' : '\n');
  }
  return Buffer.from(parts.join(''));
}

describe('extend: a plain file that grows', () => {
  it('indexes appended bytes in steps cut mid-line, mid-CRLF and mid-character, as a naive split of the final bytes does', async () => {
    for (const seed of [1, 2, 3]) {
      const data = makeShard(400, seed);
      const rand = mulberry32(seed * 97);
      // Cuts anywhere: inside lines, between \r and \n, inside a multi-byte character.
      const cuts = [0, ...Array.from({ length: 24 }, () => Math.floor(rand() * data.length)), data.length].sort((a, b) => a - b);
      const crlf = data.indexOf('\r\n');
      if (crlf > 0) cuts.splice(1, 0, crlf + 1);
      const emoji = data.indexOf('🚲');
      cuts.splice(1, 0, emoji + 2);
      cuts.sort((a, b) => a - b);
      // maxLineBytes 300: the long lines are over the limit (and kept as long lines by the index).
      const path = writeShard(tmp.dir, `grow-${seed}.jsonl`, data.subarray(0, cuts[0]));
      const src = new JsonlSource(path, { maxLineBytes: 300 });
      await src.index();
      let grew = false;
      for (let k = 1; k < cuts.length; k++) {
        if (cuts[k] > cuts[k - 1]) appendFileSync(path, data.subarray(cuts[k - 1], cuts[k]));
        const r = await src.extend();
        expect(r.change).toBe(cuts[k] > cuts[k - 1] ? 'grew' : 'none');
        grew ||= r.change === 'grew';
        const want = naive(data.subarray(0, cuts[k]), 300);
        expect(r.info.entries).toBe(want.length);
        expect(r.info.sizeBytes).toBe(cuts[k]);
        compare(await src.read(0, r.info.entries), want, grew);
        // The same as a fresh source over the same bytes.
        const fresh = new JsonlSource(path, { maxLineBytes: 300 });
        const fi = await fresh.index();
        expect(fi.entries).toBe(want.length);
        expect((await fresh.read(0, fi.entries)).map((e) => [e.byteOffset, e.record])).toEqual((await src.read(0, r.info.entries)).map((e) => [e.byteOffset, e.record]));
        await fresh.close();
      }
      await src.close();
    }
  });

  it('never reads the indexed start again', async () => {
    // More than the kept tail after the first line, so the change is not in the bytes compared.
    const first = '{"a":1}\n' + `{"a":"${'w'.repeat(5000)}"}\n`;
    const path = writeShard(tmp.dir, 'start.jsonl', first);
    const src = new JsonlSource(path);
    await src.index();
    // The first line's bytes now hold a line end: an index that read the start again would count it.
    const fd = await import('node:fs').then((fs) => fs.openSync(path, 'r+'));
    const fs = await import('node:fs');
    fs.writeSync(fd, Buffer.from('{"a"\n1}'), 0, 7, 0);
    fs.closeSync(fd);
    appendFileSync(path, '{"a":3}\n');
    const r = await src.extend();
    expect(r.change).toBe('grew');
    expect(r.info.entries).toBe(3);
    await src.close();
  });

  it('marks a half-written final line incomplete while the file grows, and a finding once it settles', async () => {
    const path = writeShard(tmp.dir, 'half.jsonl', '{"id":1}\n{"id":');
    const src = new JsonlSource(path);
    let info = await src.index();
    // Never seen growing (the CLI's case): the usual syntax finding.
    let last = (await src.read(0, info.entries))[1];
    expect(last.incomplete).toBeUndefined();
    expect(last.findings.map((f) => f.rule)).toContain('json-syntax');
    appendFileSync(path, '2, "text": "the chain sk');
    info = (await src.extend()).info;
    expect(info.entries).toBe(2);
    last = (await src.read(1, 2))[0];
    expect(last.incomplete).toBe(true);
    expect(last.record).toBeNull();
    expect(last.findings.some((f) => f.rule === 'json-syntax')).toBe(false);
    // Still growing: nothing new, not settled.
    expect((await src.extend()).change).toBe('none');
    expect((await src.read(1, 2))[0].incomplete).toBe(true);
    // Settled with the line still half-written: an ordinary finding again.
    expect((await src.extend({ settled: true })).change).toBe('none');
    last = (await src.read(1, 2))[0];
    expect(last.incomplete).toBeUndefined();
    expect(last.findings.map((f) => f.rule)).toContain('json-syntax');
    // Completed later: the line is a record, and the line end starts no new entry.
    appendFileSync(path, 'ips"}');
    info = (await src.extend()).info;
    last = (await src.read(1, 2))[0];
    expect(last.value).toEqual(JSON.parse('{"id":2, "text": "the chain skips"}'));
    expect(last.incomplete).toBeUndefined();
    appendFileSync(path, '\r\n{"id":3}');
    info = (await src.extend()).info;
    expect(info.entries).toBe(3);
    compare(await src.read(0, 3), naive(Buffer.from('{"id":1}\n{"id":2, "text": "the chain skips"}\r\n{"id":3}')), true);
    expect(src.recordCount).toBe(3);
    await src.close();
  });

  it('an empty file that grows loses its empty-file finding', async () => {
    const path = writeShard(tmp.dir, 'empty.jsonl', '');
    const src = new JsonlSource(path);
    expect((await src.index()).findings.map((f) => f.rule)).toEqual(['read-empty']);
    appendFileSync(path, '{"id":1}\n');
    const r = await src.extend();
    expect(r.change).toBe('grew');
    expect(r.info.entries).toBe(1);
    expect(r.info.findings).toEqual([]);
    await src.close();
  });
});

describe('extend: a file that is not the one indexed', () => {
  it('a truncated file is shorter', async () => {
    const path = writeShard(tmp.dir, 'trunc.jsonl', '{"id":1}\n{"id":2}\n');
    const src = new JsonlSource(path);
    await src.index();
    truncateSync(path, 9);
    expect((await src.extend()).change).toBe('shorter');
    await src.close();
  });

  it('a file renamed over the open one is replaced, even when it is longer and starts the same', async () => {
    const path = writeShard(tmp.dir, 'swap.jsonl', '{"id":1}\n');
    const src = new JsonlSource(path);
    await src.index();
    const other = join(tmp.dir, 'swap.next');
    writeFileSync(other, '{"id":1}\n{"id":2}\n');
    renameSync(other, path);
    expect((await src.extend()).change).toBe('replaced');
    await src.close();
  });

  it('other bytes where the indexed ones were (rewritten in place, longer) is replaced', async () => {
    const path = writeShard(tmp.dir, 'rewrite.jsonl', '{"id":1}\n{"id":2}\n');
    const src = new JsonlSource(path);
    await src.index();
    writeFileSync(path, '{"id":7}\n{"id":8}\n{"id":9}\n');
    expect((await src.extend()).change).toBe('replaced');
    await src.close();
  });

  it('an untouched file is unchanged; a removed one is replaced', async () => {
    const path = writeShard(tmp.dir, 'same.jsonl', '{"id":1}\n');
    const src = new JsonlSource(path);
    await src.index();
    expect((await src.extend()).change).toBe('none');
    const { rmSync } = await import('node:fs');
    rmSync(path);
    expect((await src.extend()).change).toBe('replaced');
    await src.close();
  });

  it('a compressed file that changes is opened again; an unchanged one is not', async () => {
    const path = writeShard(tmp.dir, 'grow.jsonl.gz', gzipSync('{"id":1}\n'));
    const src = new JsonlSource(path);
    await src.index();
    expect((await src.extend()).change).toBe('none');
    appendFileSync(path, gzipSync('{"id":2}\n'));
    expect((await src.extend()).change).toBe('replaced');
    await src.close();
  });
});

/** What an index says: its size, every block's start, every line's kind, the long lines' places. */
function shape(idx: LineIndex) {
  const blocks: number[] = [];
  for (let l = 0; l < idx.lines; l += 32) blocks.push(idx.blockOf(l).offset);
  const kinds = Array.from({ length: idx.lines }, (_, l) => idx.kindOf(l));
  const long = Array.from({ length: idx.longEntries.length }, (_, k) => [idx.longEntries.get(k), idx.longStarts.get(k), idx.longLengths.get(k)]);
  return { lines: idx.lines, end: idx.end, lastUnterminated: idx.lastUnterminated, blocks, kinds, long };
}

describe('LineIndex.dropLast', () => {
  it('forgets an unterminated final line so indexing can go on from its start, as one pass would', () => {
    const rand = mulberry32(7);
    for (let t = 0; t < 200; t++) {
      const n = 1 + Math.floor(rand() * 100);
      const parts: string[] = [];
      for (let i = 0; i < n; i++) parts.push(rand() < 0.2 ? ' ' : 'x'.repeat(Math.floor(rand() * 40)), '\n');
      const data = Buffer.from(parts.join('') + 'tail'.repeat(Math.floor(rand() * 3)));
      const cut = Math.floor(rand() * data.length);
      const whole = new LineIndex(30, 20);
      const w = new LineFinder(whole);
      w.push(data);
      w.end();
      const grown = new LineIndex(30, 20);
      const g = new LineFinder(grown);
      g.push(data.subarray(0, cut));
      g.end();
      let from = grown.end;
      if (grown.lastUnterminated) {
        from = data.lastIndexOf(0x0a, cut - 1) + 1;
        grown.dropLast(from);
      }
      const g2 = new LineFinder(grown, from);
      g2.push(data.subarray(from));
      g2.end();
      expect(shape(grown)).toEqual(shape(whole));
    }
  });
});
