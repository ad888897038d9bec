// An Arrow IPC page reads only the byte ranges of its rows: values against apache-arrow's own
// reader (npm registry) on files its writer makes at test time, and against the whole-batch read
// of the same source on the arrow-testing integration gold files (../shared/testdata/arrow, read in
// place; arrow.integration.test.ts checks those whole reads against the gold JSON). Bytes and reads
// are counted with a counting ByteReader.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Binary, Bool, DateDay, Field, Float64, Int32, Int64, List, RecordBatchFileWriter, Struct, Table, Utf8, tableFromIPC, vectorFromArray } from 'apache-arrow';
import { ArrowFileSource } from '../../../../src/engine/sources/arrowFile.js';
import { ArrowStreamSource } from '../../../../src/engine/sources/arrowStream.js';
import { countingReader, openFileReader } from '../../../../src/engine/sources/columnar/byteReader.js';
import { requireTestdata } from './testdata.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shardwise-arrow-ranges-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Our own repair-desk rows: fixed width, bits, offsets + data, and turns as list<struct>, with nulls. */
function deskTable(rows: number, start: number): Table {
  const ids = Array.from({ length: rows }, (_, i) => start + i);
  return new Table({
    id: vectorFromArray(ids, new Int32()),
    big: vectorFromArray(ids.map((i) => (i % 9 === 0 ? 2n ** 60n + BigInt(i) : BigInt(i) * 7n)), new Int64()),
    score: vectorFromArray(ids.map((i) => i / 8), new Float64()),
    fixed: vectorFromArray(ids.map((i) => (i % 5 === 2 ? null : i % 3 === 0)), new Bool()),
    note: vectorFromArray(ids.map((i) => (i % 7 === 3 ? null : `spoke ${i}: ${'true the wheel '.repeat(i % 11)}`)), new Utf8()),
    raw: vectorFromArray(ids.map((i) => (i % 4 === 1 ? null : new Uint8Array([i & 255, (i >> 8) & 255, 7]))), new Binary()),
    day: vectorFromArray(ids.map((i) => new Date(Date.UTC(2024, 0, 1 + (i % 400)))), new DateDay()),
    turns: vectorFromArray(
      ids.map((i) => (i % 13 === 5 ? null : Array.from({ length: 1 + (i % 3) }, (_, t) => ({ role: t % 2 ? 'assistant' : 'user', content: t === 1 && i % 4 === 0 ? null : `gear ${i}.${t}` })))),
      new List(new Field('item', new Struct([new Field('role', new Utf8(), true), new Field('content', new Utf8(), true)]), true)),
    ),
  });
}

function writeArrow(name: string, batches: number, rows: number): string {
  const writer = new RecordBatchFileWriter();
  for (let b = 0; b < batches; b++) for (const batch of deskTable(rows, b * rows).batches) writer.write(batch);
  const p = join(dir, name);
  writeFileSync(p, writer.finish().toUint8Array(true));
  return p;
}

/** apache-arrow's rows in our JSON conventions, for the columns compared by value. */
function oracle(p: string, from: number, to: number): unknown[] {
  const table = tableFromIPC(readFileSync(p));
  const out: unknown[] = [];
  for (let i = from; i < to; i++) {
    const r = table.get(i)!;
    const big = r.big as bigint;
    const turns = r.turns ? [...r.turns].map((t) => ({ role: t!.role, content: t!.content })) : null;
    out.push({ id: r.id, big: big > 2n ** 53n - 1n ? big.toString() : Number(big), score: r.score, fixed: r.fixed, note: r.note, turns });
  }
  return out;
}

const pick = (v: unknown) => {
  const o = v as Record<string, unknown>;
  return { id: o.id, big: o.big, score: o.score, fixed: o.fixed, note: o.note, turns: o.turns };
};

describe('a page of an uncompressed Arrow file reads only its rows', () => {
  let p: string;
  beforeAll(() => {
    p = writeArrow('desk.arrow', 3, 40_000);
  });

  for (const [from, to] of [
    [0, 100],
    [12_345, 12_445],
    [39_950, 40_050],
    [119_990, 120_000],
  ]) {
    it(`rows ${from}–${to}: apache-arrow's values, whole-batch values, a small part of the batch read, cached`, async () => {
      let counter: ReturnType<typeof countingReader> | null = null;
      const src = new ArrowFileSource(p, { openReader: async (path) => (counter = countingReader(await openFileReader(path))) });
      const info = await src.open();
      expect(info.groups?.map((g) => g.rows)).toEqual([40_000, 40_000, 40_000]);
      const afterOpen = counter!.bytesRead;
      const page = await src.read(from, to);
      const pageBytes = counter!.bytesRead - afterOpen;
      expect(page.map((e) => e.entry)).toEqual(Array.from({ length: to - from }, (_, i) => from + i));
      expect(page.map((e) => [e.group, e.rowInGroup])).toEqual(Array.from({ length: to - from }, (_, i) => [Math.floor((from + i) / 40_000), (from + i) % 40_000]));
      expect(page.map((e) => pick(e.value))).toEqual(oracle(p, from, to));
      // A batch body is megabytes; 100 rows of these columns take a few kilobytes plus their headers.
      expect(pageBytes).toBeLessThan(info.groups![0].compressedBytes! / 50);
      const again = counter!.bytesRead;
      await src.read(from, to);
      expect(counter!.bytesRead).toBe(again);
      // Every column (binary and dates too) equals what the whole-batch path decodes.
      const whole = [];
      for await (const e of src.scan({ from, to })) whole.push(e);
      expect(page.map((e) => e.value)).toEqual(whole.map((e) => e.value));
      expect(page.map((e) => e.findings)).toEqual(whole.map((e) => e.findings));
      await src.close();
    });
  }

  it('opening reads the headers of 300 small batches in a few coalesced reads', async () => {
    const q = writeArrow('small-batches.arrow', 300, 50);
    let counter: ReturnType<typeof countingReader> | null = null;
    const src = new ArrowFileSource(q, { openReader: async (path) => (counter = countingReader(await openFileReader(path))) });
    const info = await src.open();
    expect(info.groups?.length).toBe(300);
    // Magic, tail, footer, schema and the coalesced header reads: far fewer than one read per batch.
    expect(counter!.reads).toBeLessThan(20);
    const page = await src.read(7_480, 7_520);
    expect(page.map((e) => pick(e.value))).toEqual(oracle(q, 7_480, 7_520));
    await src.close();
  });

  it('the memory cap: a batch body over it is a read-limit finding, not decoded', async () => {
    const src = new ArrowFileSource(p, { maxBatchBytes: 64 * 1024 });
    await src.open();
    const all = [];
    for await (const e of src.scan({ from: 0, to: 40_000 })) all.push(e);
    expect(all[0].findings.map((f) => f.rule)).toEqual(['read-limit']);
    expect(all[0].findings[0].message).toMatch(/^batch 0: its body is \d+ bytes, over the 65536-byte memory cap/);
    await src.close();
  });
});

describe('pages of the arrow-testing integration gold files equal their whole-batch reads', () => {
  const root = requireTestdata('arrow/ipc-stream/integration');
  const files: string[] = [];
  for (const v of readdirSync(root).filter((d) => statSync(join(root, d)).isDirectory() && !d.includes('bigendian'))) {
    for (const f of readdirSync(join(root, v))) if (f.endsWith('.arrow_file') || f.endsWith('.stream')) files.push(join(root, v, f));
  }
  it(`${files.length} files, pages of 3 rows from row 1, every batch`, async () => {
    expect(files.length).toBeGreaterThan(50);
    const differ: string[] = [];
    const refused: string[] = [];
    for (const f of files) {
      const make = () => (f.endsWith('.stream') ? new ArrowStreamSource(f) : new ArrowFileSource(f));
      const whole = make();
      const paged = make();
      const attempt = async <T,>(run: () => Promise<T>): Promise<{ value: T } | { error: string }> => {
        try {
          return { value: await run() };
        } catch (e) {
          return { error: (e as Error).message };
        }
      };
      try {
        const all = await attempt(async () => {
          const info = await whole.index();
          return (await whole.read(0, info.entries)).slice(1);
        });
        const pages = await attempt(async () => {
          const info = await paged.index();
          const got = [];
          for (let at = 1; at < info.entries; at += 3) got.push(...(await paged.read(at, at + 3)));
          return got;
        });
        const name = f.slice(root.length);
        if ('error' in all || 'error' in pages) {
          // Both reads must at least agree on refusing.
          if ('error' in all && 'error' in pages) refused.push(name);
          else differ.push(`${name}: ${'error' in all ? `the whole read refused (${all.error})` : `the paged read refused (${(pages as { error: string }).error})`}, the other read it`);
          continue;
        }
        const strip = (e: { entry: number; value?: unknown; findings: { rule: string }[] }) => JSON.stringify([e.entry, e.value ?? null, e.findings.map((x) => x.rule)], (_, v) => (typeof v === 'bigint' ? v.toString() : v));
        if (JSON.stringify(pages.value.map(strip)) !== JSON.stringify(all.value.map(strip))) differ.push(name);
      } finally {
        await whole.close();
        await paged.close();
      }
    }
    // Every gold file here reads (big-endian ones are left out above): a refusal would compare nothing.
    expect(refused, 'refused by both reads').toEqual([]);
    expect(differ).toEqual([]);
  });
});
