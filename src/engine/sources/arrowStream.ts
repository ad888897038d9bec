// Arrow IPC stream shards (.arrows, .stream): `index` walks the message headers once, recording
// each batch's and dictionary's offset, so any page is then a direct read.

import type { ByteReader } from './source.js';
import { readFinding } from './columnarRules.js';
import { ArrowSourceBase, headerBlock, ipcFinding, type ArrowSourceOptions, type Layout } from './columnar/arrowBase.js';
import { MESSAGE_SCHEMA, readMessageAt, walkMessages, IpcFormatError } from './columnar/ipc.js';

export class ArrowStreamSource extends ArrowSourceBase {
  readonly format = 'arrow-stream' as const;
  protected layoutAtOpen = false;

  constructor(path: string, opts: ArrowSourceOptions = {}) {
    super(path, opts);
  }

  protected override async readSchemaLayout(reader: ByteReader): Promise<Layout> {
    const layout: Layout = { schema: null, dictionaries: [], batches: [], facts: { format: 'Arrow IPC stream' }, findings: [] };
    try {
      const { header } = await readMessageAt(reader, 0);
      if (!header || header.type !== MESSAGE_SCHEMA) throw new IpcFormatError('the stream does not start with a schema message', 'corrupt');
      describeSchema(layout, header);
    } catch (e) {
      layout.findings.push(ipcFinding(e, 'stream start'));
      layout.refused = 'no schema';
    }
    return layout;
  }

  protected async readLayout(reader: ByteReader, signal?: AbortSignal): Promise<Layout> {
    const layout: Layout = { schema: null, dictionaries: [], batches: [], facts: { format: 'Arrow IPC stream' }, findings: [] };
    const walk = await walkMessages(reader, 0, signal);
    if (walk.schema) describeSchema(layout, walk.schema);
    layout.dictionaries = walk.dictionaries.map(headerBlock);
    layout.batches = walk.batches.map((h) => ({ ...headerBlock(h), rows: h.rows, codec: h.codec }));
    if (walk.end === 'error') {
      const where = walk.schema ? `after ${walk.batches.length} batches` : 'stream start';
      layout.findings.push(ipcFinding(walk.error, where));
      if (!walk.schema) layout.refused = 'no schema';
    } else if (!walk.schema) {
      layout.findings.push(readFinding('read-footer-invalid', reader.size === 0 ? 'the stream is empty: no schema message' : 'the stream ends before its schema message'));
      layout.refused = 'no schema';
    } else if (walk.end === 'eof') {
      layout.findings.push(
        readFinding('read-stream-unterminated', `the stream ends after ${walk.batches.length} batches without its end-of-stream marker (a writer may still be running)`),
      );
    }
    return layout;
  }
}

function describeSchema(layout: Layout, h: { offset: number; metaLength: number; bodyLength: number; version: number; bigEndian?: boolean }): void {
  layout.schema = headerBlock(h as never);
  layout.facts['metadata version'] = `V${h.version + 1}`;
  layout.facts.endianness = h.bigEndian ? 'big' : 'little';
  if (h.bigEndian) {
    layout.findings.push(readFinding('read-unsupported', 'the stream is big-endian; this reader reads little-endian Arrow data only, so it shows no values rather than wrong ones'));
    layout.refused = 'big-endian';
  }
}
