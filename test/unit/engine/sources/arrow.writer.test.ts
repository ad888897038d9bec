// Arrow IPC files as apache-arrow itself writes them (the reference implementation, used as an
// independent writer): its file writer keeps the schema in the footer only, with no schema message
// after the magic. Our reader must read them the same as the library does.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Field, Int32, List, Struct, Table, Utf8, tableToIPC, vectorFromArray, makeTable, tableFromIPC } from 'apache-arrow';
import { describe, expect, it } from 'vitest';
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
});
