// The Arrow IPC stream format (Arrow columnar format specification, "IPC Streaming Format"): each
// message starts with the continuation marker 0xFFFFFFFF and a metadata length; before Arrow 0.15 a
// bare little-endian length, then the flatbuffer message.

import { ArrowStreamSource } from '../arrowStream.js';
import { MESSAGE_SCHEMA, NEWEST_METADATA_VERSION, parseMessage } from '../columnar/ipc.js';
import { FbTable } from '../columnar/flatbuf.js';
import { bytesAt, type FormatEntry } from '../format.js';

/** The metadata length a stream written before Arrow 0.15 starts with, when it fits the file's head. */
function bareLength(head: Uint8Array, size: number): number | null {
  if (head.length < 8) return null;
  const len = new DataView(head.buffer, head.byteOffset, head.byteLength).getInt32(0, true);
  return len >= 8 && 4 + len <= Math.min(size, head.length) ? len : null;
}

/** A stream written before Arrow 0.15: a bare metadata length, then a Schema message. */
function isLegacyStream(head: Uint8Array, size: number): boolean {
  const len = bareLength(head, size);
  if (len === null) return false;
  try {
    const h = parseMessage(head.subarray(4, 4 + len), 0, 4 + len);
    return h.type === MESSAGE_SCHEMA && h.version >= 0 && h.version <= NEWEST_METADATA_VERSION;
  } catch {
    return false;
  }
}

/**
 * A damaged stream with the same framing: a length that fits the file, then a flatbuffer whose root
 * table and vtable lie inside it. Text never starts so (it holds no NUL bytes); the stream reader
 * then names what is wrong with the message, instead of a refusal of unknown bytes.
 */
function isDamagedStream(head: Uint8Array, size: number): boolean {
  const len = bareLength(head, size);
  if (len === null) return false;
  try {
    FbTable.root(head.subarray(4, 4 + len));
    return true;
  } catch {
    return false;
  }
}

export const arrowStreamFormat: FormatEntry = {
  format: 'arrow-stream',
  title: 'an Arrow IPC stream',
  endings: ['.arrows', '.stream'],
  traits: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
  signs: {
    start: (p) => bytesAt(p.head, [0xff, 0xff, 0xff, 0xff]) || isLegacyStream(p.head, p.size),
    damagedStart: (p) => !p.knownOther && !p.looksText && isDamagedStream(p.head, p.size),
  },
  create: (p, o) => new ArrowStreamSource(p, { maxBatchBytes: o.maxReaderBytes }),
};
