// Arrow IPC file shards (.arrow, .feather v2): the footer places every record batch, so opening
// reads the footer and batch headers only and any page is a direct read.

import { RecordBatchReader, Table, tableToIPC } from 'apache-arrow';
import type { ByteReader } from './source.js';
import { readFinding } from './columnarRules.js';
import { ArrowSourceBase, DEFAULT_MAX_BATCH_BYTES, headerBlock, ipcFinding, type ArrowSourceOptions, type Layout } from './columnar/arrowBase.js';
import { FILE_MAGIC, MESSAGE_DICTIONARY, MESSAGE_RECORD_BATCH, MESSAGE_SCHEMA, NEWEST_METADATA_VERSION, readFooter, readMessageAt, walkMessages, IpcFormatError, validateSchemaTable } from './columnar/ipc.js';
import { FbTable } from './columnar/flatbuf.js';
import { prefetchRanges } from './columnar/byteReader.js';

/** The stream inside an Arrow file starts after the 6-byte magic and 2 bytes of padding. */
const STREAM_START = 8;

/** Builds a stream schema message from the footer's schema: apache-arrow reads the footer alone. */
async function schemaMessageFromFooter(reader: ByteReader): Promise<Uint8Array> {
  const size = reader.size;
  const tail = await reader.read(size - 10, 10);
  const footerLen = new DataView(tail.buffer, tail.byteOffset, 4).getInt32(0, true);
  const footer = await reader.read(size - 10 - footerLen, footerLen);
  // The footer's schema is checked by hand before the library decodes it.
  const schemaTable = FbTable.root(footer).table(1);
  if (!schemaTable) throw new IpcFormatError('neither a schema message nor a schema in the footer', 'corrupt');
  validateSchemaTable(schemaTable);
  const shell = new Uint8Array(8 + footerLen + 10);
  shell.set(FILE_MAGIC, 0);
  shell.set(footer, 8);
  shell.set(tail, 8 + footerLen);
  const r = RecordBatchReader.from(shell);
  r.open();
  if (!r.schema) throw new IpcFormatError('neither a schema message nor a schema in the footer', 'corrupt');
  const stream = tableToIPC(new Table(r.schema), 'stream');
  // Drop the end-of-stream marker: batches follow this schema message when decoding.
  return stream.subarray(0, stream.length - 8);
}

export class ArrowFileSource extends ArrowSourceBase {
  readonly format = 'arrow-file' as const;
  protected layoutAtOpen = true;

  constructor(path: string, opts: ArrowSourceOptions = {}) {
    super(path, opts);
  }

  protected async readLayout(reader: ByteReader, signal?: AbortSignal): Promise<Layout> {
    const layout: Layout = { schema: null, dictionaries: [], batches: [], facts: { format: 'Arrow IPC file' }, findings: [] };
    let footer;
    try {
      footer = await readFooter(reader, this.opts.maxBatchBytes ?? DEFAULT_MAX_BATCH_BYTES);
    } catch (e) {
      // No usable footer: read what the messages after the magic still hold.
      const f = ipcFinding(e, 'footer');
      f.rule = f.rule === 'read-unsupported' || f.rule === 'read-limit' ? f.rule : 'read-footer-invalid';
      layout.findings.push(f);
      return this.fallbackWalk(reader, layout, signal);
    }
    layout.facts['metadata version'] = `V${footer.version + 1}`;
    layout.facts.endianness = footer.bigEndian ? 'big' : 'little';
    if (footer.version > NEWEST_METADATA_VERSION) {
      layout.findings.push(readFinding('read-unsupported', `the file uses Arrow metadata version V${footer.version + 1}; this reader knows up to V5`));
      layout.refused = 'future version';
      return layout;
    }
    try {
      const { header } = await readMessageAt(reader, STREAM_START);
      if (header && header.type === MESSAGE_SCHEMA) layout.schema = headerBlock(header);
      else {
        // Some writers (apache-arrow's own file writer among them) keep the schema in the footer only.
        layout.schemaMessage = await schemaMessageFromFooter(reader);
        layout.facts.layout = 'schema in the footer only';
      }
    } catch (e) {
      layout.findings.push(ipcFinding(e, 'schema message'));
      layout.refused = 'no schema';
      return layout;
    }
    if (footer.bigEndian) {
      layout.findings.push(readFinding('read-unsupported', 'the file is big-endian; this reader reads little-endian Arrow data only, so it shows no values rather than wrong ones'));
      layout.refused = 'big-endian';
      return layout;
    }
    // Every dictionary and batch header at once: the footer says where each lies and how long it is.
    // A read that fails here leaves each header to its own read, whose failure is that block's finding.
    const headers = await prefetchRanges(reader, [...footer.dictionaries, ...footer.batches].map((b) => ({ offset: b.offset, length: b.metaLength }))).catch(() => reader);
    // Each dictionary message is checked as a batch is, before the library reads it.
    for (let k = 0; k < footer.dictionaries.length; k++) {
      const block = footer.dictionaries[k];
      try {
        const { header } = await readMessageAt(headers, block.offset);
        if (!header || header.type !== MESSAGE_DICTIONARY) throw new IpcFormatError(`footer dictionary block ${k} does not point at a dictionary batch`, 'corrupt');
        layout.dictionaries.push({ ...block, bodyLength: header.bodyLength });
      } catch (e) {
        layout.findings.push(ipcFinding(e, `dictionary ${k}`));
      }
    }
    for (let k = 0; k < footer.batches.length; k++) {
      signal?.throwIfAborted();
      const block = footer.batches[k];
      try {
        const { header } = await readMessageAt(headers, block.offset);
        if (!header || header.type !== MESSAGE_RECORD_BATCH) throw new IpcFormatError(`footer block ${k} does not point at a record batch`, 'corrupt');
        layout.batches.push({ ...block, bodyLength: header.bodyLength, rows: header.rows, codec: header.codec });
      } catch (e) {
        // Later batches stay readable; this one is left out and reported.
        layout.findings.push(ipcFinding(e, `batch ${k}`));
      }
    }
    return layout;
  }

  private async fallbackWalk(reader: ByteReader, layout: Layout, signal?: AbortSignal): Promise<Layout> {
    const head = await reader.read(0, 6);
    const hasMagic = head.length === 6 && head.every((b, k) => b === FILE_MAGIC[k]);
    // Without the magic the bytes may still be a stream saved under a file name.
    const walk = await walkMessages(reader, hasMagic ? STREAM_START : 0, signal);
    if (!hasMagic && walk.schema) layout.facts.layout = 'an Arrow IPC stream under a file name';
    if (walk.schema) {
      layout.schema = headerBlock(walk.schema);
      layout.facts['metadata version'] = `V${walk.schema.version + 1}`;
      layout.facts.endianness = walk.schema.bigEndian ? 'big' : 'little';
      if (walk.schema.bigEndian) {
        layout.findings.push(readFinding('read-unsupported', 'the file is big-endian; this reader reads little-endian Arrow data only'));
        layout.refused = 'big-endian';
        return layout;
      }
    } else {
      layout.refused = 'no schema';
    }
    layout.dictionaries = walk.dictionaries.map(headerBlock);
    layout.batches = walk.batches.map((h) => ({ ...headerBlock(h), rows: h.rows, codec: h.codec }));
    // A walk that stops at the footer's bytes is expected; an error before any batch is worth naming.
    if (walk.end === 'error' && walk.error && walk.batches.length === 0 && walk.schema) layout.findings.push(ipcFinding(walk.error, 'after the schema'));
    if (walk.end === 'error' && walk.error?.kind === 'unsupported') layout.findings.push(ipcFinding(walk.error, 'message'));
    return layout;
  }
}
