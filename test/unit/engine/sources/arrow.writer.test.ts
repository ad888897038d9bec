// Arrow IPC files as apache-arrow itself writes them (the reference implementation, used as an
// independent writer): its file writer keeps the schema in the footer only, with no schema message
// after the magic. Our reader must read them the same as the library does.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Field, Int32, List, Struct, Table, Utf8, tableToIPC, vectorFromArray, makeTable, tableFromIPC } from 'apache-arrow';
import { afterAll, describe, expect, it } from 'vitest';
import { ArrowFileSource } from '../../../../src/engine/sources/arrowFile';
import { ArrowStreamSource } from '../../../../src/engine/sources/arrowStream';

function sampleTable(): Table {
  const turn = new Struct([new Field('role', new Utf8(), true), new Field('content', new Utf8(), true)]);
  const rows = Array.from({ length: 1200 }, (_, i) => ({
    id: `r-${i}`,
    n: i * 3,
    messages: [
      { role: 'user', content: `question ${i}` },
      { role: 'assistant', content: i % 7 ? `answer ${i}` : null },
    ],
  }));
  const id = vectorFromArray(rows.map((r) => r.id), new Utf8());
  const n = vectorFromArray(rows.map((r) => r.n), new Int32());
  const messages = vectorFromArray(rows.map((r) => r.messages), new List(new Field('item', turn, true)));
  // Several batches: slices concatenated.
  const t = makeTable({ id: id.data[0] as never, n: n.data[0] as never, messages: messages.data[0] as never } as never) as unknown as Table;
  return new Table([...t.slice(0, 400).batches, ...t.slice(400, 900).batches, ...t.slice(900).batches]);
}

describe('files written by apache-arrow', () => {
  const dir = mkdtempSync(join(tmpdir(), 'shardwise-arrow-writer-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const table = sampleTable();
  const expected = table.toArray().map((r) => JSON.parse(JSON.stringify(r.toJSON())));

  for (const [kind, Source, name] of [
    ['file', ArrowFileSource, 'w.arrow'],
    ['stream', ArrowStreamSource, 'w.arrows'],
  ] as const) {
    it(`reads every row of an IPC ${kind} the way the library does`, async () => {
      const bytes = tableToIPC(table, kind);
      const path = join(dir, name);
      writeFileSync(path, bytes);
      expect(tableFromIPC(bytes).numRows).toBe(1200);
      const src = new Source(path);
      const info = await src.open();
      await src.index();
      expect(info.findings.filter((f) => f.severity === 'error')).toEqual([]);
      expect(src.info().entries).toBe(1200);
      const got = await src.read(0, 1200);
      expect(got.map((e) => e.value)).toEqual(expected);
      await src.close();
    });
  }

  // Arrow IPC format (arrow.apache.org, "IPC Streaming Format" / "IPC File Format"): a stream ends
  // with an end-of-stream marker (0xFFFFFFFF 0x00000000); a file ends with a footer and the magic.
  const stream = tableToIPC(table, 'stream');
  const EOS = 8;

  async function openAll(Source: typeof ArrowFileSource | typeof ArrowStreamSource, name: string, bytes: Uint8Array) {
    const path = join(dir, name);
    writeFileSync(path, bytes);
    const src = new Source(path);
    await src.open();
    const info = await src.index();
    const rows = info.entries > 0 ? await src.read(0, info.entries) : [];
    await src.close();
    return { info, rows };
  }

  it('a stream that stops cleanly between messages without its end marker is a warning, every row kept', async () => {
    const { info, rows } = await openAll(ArrowStreamSource, 'no-eos.arrows', stream.subarray(0, stream.length - EOS));
    expect(info.findings.map((f) => [f.rule, f.severity])).toEqual([['read-stream-unterminated', 'warning']]);
    expect(rows.map((e) => e.value)).toEqual(expected);
  });

  it('a stream cut inside a message is a read error; the batches before it stay readable', async () => {
    const { info, rows } = await openAll(ArrowStreamSource, 'cut.arrows', stream.subarray(0, Math.floor(stream.length * 0.8)));
    expect(info.findings.some((f) => f.rule === 'read-truncated' && f.severity === 'error')).toBe(true);
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.length).toBeLessThan(1200);
    expect(rows.map((e) => e.value)).toEqual(expected.slice(0, rows.length));
  });

  it('a stream without a schema message is a read error, not a crash', async () => {
    const { info, rows } = await openAll(ArrowStreamSource, 'empty.arrows', new Uint8Array(0));
    expect(info.findings.some((f) => f.family === 'read' && f.severity === 'error')).toBe(true);
    expect(rows).toEqual([]);
  });

  it('a file without its footer is a read error; the complete batches are still read', async () => {
    // A file as writers that repeat the schema up front lay it out (magic, padding, the stream's
    // messages), cut before its footer: apache-arrow's own writer keeps the schema in the footer
    // only, so its files cut this way hold nothing readable.
    const magic = new Uint8Array([0x41, 0x52, 0x52, 0x4f, 0x57, 0x31, 0, 0]);
    const body = stream.subarray(0, stream.length - EOS);
    const cut = new Uint8Array(magic.length + body.length);
    cut.set(magic, 0);
    cut.set(body, magic.length);
    const { info, rows } = await openAll(ArrowFileSource, 'no-footer.arrow', cut);
    expect(info.findings.some((f) => f.family === 'read' && f.severity === 'error')).toBe(true);
    expect(rows.length).toBe(1200);
    expect(rows.map((e) => e.value)).toEqual(expected);
  });
});

