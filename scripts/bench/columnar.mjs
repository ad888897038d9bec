// Columnar inputs for the benchmark: a Parquet file (written by parquet-wasm, the Rust arrow-rs
// writer: snappy, row groups of ROW_GROUP_ROWS rows, page statistics and the page index as it
// writes them by default) and an Arrow IPC file (apache-arrow's writer), both holding the chat
// records of the co-op as `id: utf8` and `messages: list<struct<role: utf8, content: utf8>>`.
import { createWriteStream, statSync } from 'node:fs';
import { Writable } from 'node:stream';
import { Field, List, RecordBatchFileWriter, Struct, Table, Utf8, makeData, makeVector, tableToIPC } from 'apache-arrow';
import { SYSTEM_PROMPT, prng, textMaker } from './corpus.mjs';

const ROW_GROUP_ROWS = 32_768;
const BATCH_ROWS = 8_192;
const TURN = new Struct([new Field('role', new Utf8(), true), new Field('content', new Utf8(), true)]);
const MESSAGES = new List(new Field('item', TURN, true));

/** UTF-8 column data from pooled byte strings picked by index (built directly, no per-value conversion). */
function utf8Data(pool, picks) {
  const offsets = new Int32Array(picks.length + 1);
  let size = 0;
  for (let i = 0; i < picks.length; i++) offsets[i + 1] = size += pool[picks[i]].length;
  const values = new Uint8Array(size);
  for (let i = 0; i < picks.length; i++) values.set(pool[picks[i]], offsets[i]);
  return makeData({ type: new Utf8(), length: picks.length, nullCount: 0, valueOffsets: offsets, data: values });
}

/** A maker of batches of chat rows: each call gives an apache-arrow Table of `rows` rows and its text bytes. */
function batchMaker(seed) {
  const rand = prng(seed);
  const text = textMaker(seed + 1);
  const enc = new TextEncoder();
  // Pool 0 is the system prompt, then user turns, then assistant turns; roles likewise.
  const USERS = 4000;
  const contents = [enc.encode(SYSTEM_PROMPT)];
  for (let i = 0; i < USERS; i++) contents.push(enc.encode(text(260 * (0.4 + rand() * 1.2))));
  for (let i = 0; i < USERS; i++) contents.push(enc.encode(text(700 * (0.4 + rand() * 1.2))));
  const roles = ['system', 'user', 'assistant'].map((r) => enc.encode(r));
  let next = 1;
  return (rows) => {
    const ids = [];
    const rolePicks = [];
    const contentPicks = [];
    const listOffsets = new Int32Array(rows + 1);
    let bytes = 0;
    for (let r = 0; r < rows; r++) {
      rolePicks.push(0);
      contentPicks.push(0);
      const pairs = 1 + Math.floor(rand() * 3);
      for (let p = 0; p < pairs; p++) {
        rolePicks.push(1, 2);
        contentPicks.push(1 + Math.floor(rand() * USERS), 1 + USERS + Math.floor(rand() * USERS));
      }
      listOffsets[r + 1] = rolePicks.length;
      ids.push(enc.encode(`sw-${String(next++).padStart(10, '0')}`));
    }
    for (const c of contentPicks) bytes += contents[c].length + 12;
    const turns = makeData({ type: TURN, length: rolePicks.length, nullCount: 0, children: [utf8Data(roles, rolePicks), utf8Data(contents, contentPicks)] });
    const list = makeData({ type: MESSAGES, length: rows, nullCount: 0, valueOffsets: listOffsets, child: turns });
    const idData = utf8Data(ids, ids.map((_, i) => i));
    const table = new Table({ id: makeVector(idData), messages: makeVector(list) });
    return { table, bytes };
  };
}

/** Writes a Parquet file of about `bytes` bytes; returns its size, rows and row groups. */
export async function writeParquetFile(path, bytes, { seed = 21 } = {}) {
  const pw = await import('parquet-wasm');
  const make = batchMaker(seed);
  const props = () => new pw.WriterPropertiesBuilder().setCompression(pw.Compression.SNAPPY).setMaxRowGroupSize(ROW_GROUP_ROWS).build();
  // How much text one byte of file holds (snappy): measured on a sample, so the file comes out near `bytes`.
  const sample = make(BATCH_ROWS);
  const sampleFile = pw.writeParquet(pw.Table.fromIPCStream(tableToIPC(sample.table, 'stream')), props());
  const textPerByte = sample.bytes / sampleFile.length;
  const wantText = bytes * textPerByte;
  let made = 0;
  let rows = 0;
  const input = new ReadableStream({
    pull(controller) {
      if (made >= wantText) return controller.close();
      const { table, bytes: b } = make(BATCH_ROWS);
      made += b;
      rows += table.numRows;
      for (const batch of pw.Table.fromIPCStream(tableToIPC(table, 'stream')).recordBatches()) controller.enqueue(batch);
    },
  });
  const output = await pw.transformParquetStream(input, props());
  await output.pipeTo(Writable.toWeb(createWriteStream(path)));
  return { bytes: statSync(path).size, rows, rowGroups: Math.ceil(rows / ROW_GROUP_ROWS) };
}

/** Writes an Arrow IPC file of about `bytes` bytes in batches of BATCH_ROWS rows; returns its size, rows and batches. */
export async function writeArrowFile(path, bytes, { seed = 31 } = {}) {
  const make = batchMaker(seed);
  const writer = new RecordBatchFileWriter();
  const out = createWriteStream(path);
  const done = new Promise((resolve, reject) => {
    out.on('finish', resolve);
    out.on('error', reject);
  });
  writer.pipe(out);
  let made = 0;
  let rows = 0;
  let batches = 0;
  while (made < bytes) {
    const { table, bytes: b } = make(BATCH_ROWS);
    made += b + BATCH_ROWS * 40;
    rows += table.numRows;
    for (const batch of table.batches) {
      writer.write(batch);
      batches++;
    }
    // Let the file stream drain so memory stays bounded.
    await new Promise((r) => setImmediate(r));
  }
  writer.finish();
  await done;
  return { bytes: statSync(path).size, rows, batches };
}

