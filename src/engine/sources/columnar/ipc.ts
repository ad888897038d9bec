// Arrow IPC framing read by hand (arrow.apache.org/docs/format/Columnar.html, "Serialization and
// Interprocess Communication"): message prefixes, the footer's blocks, the schema's endianness and
// the metadata version, none of which the library exposes or checks.

import { FbTable, FlatbufError } from './flatbuf.js';
import type { ByteReader } from '../source.js';

export const MESSAGE_SCHEMA = 1;
export const MESSAGE_DICTIONARY = 2;
export const MESSAGE_RECORD_BATCH = 3;
export const MESSAGE_NAMES = ['none', 'schema', 'dictionary batch', 'record batch', 'tensor', 'sparse tensor'];

/** MetadataVersion V5 = 4 is the newest this reader knows (Schema.fbs). */
export const NEWEST_METADATA_VERSION = 4;
export const FILE_MAGIC = new Uint8Array([0x41, 0x52, 0x52, 0x4f, 0x57, 0x31]); // "ARROW1"

export interface MessageHeader {
  /** Offset of the message's prefix in the file. */
  offset: number;
  /** Bytes of prefix + metadata (+ padding): the body starts at offset + metaLength. */
  metaLength: number;
  bodyLength: number;
  type: number;
  version: number;
  /** Rows of a record batch (or of a dictionary batch's values). */
  rows: number;
  /** Schema only: true when the data is big-endian. */
  bigEndian?: boolean;
  /** Dictionary batches: which dictionary, and whether it adds to the previous one. */
  dictionaryId?: bigint;
  isDelta?: boolean;
  /** Body compression codec name, if any. */
  codec?: string;
}

export class IpcFormatError extends Error {
  constructor(
    message: string,
    readonly kind: 'truncated' | 'corrupt' | 'unsupported' | 'limit',
  ) {
    super(message);
  }
}

/** Arrow `CompressionType` (Message.fbs), by number. */
export const CODECS = ['lz4 frame', 'zstd'];

/**
 * The body codec number of a record batch or dictionary batch message (with its prefix, as a
 * file's block or a stream places it); null when the body is not compressed, or when the metadata
 * does not decode (the library then names the damage).
 */
export function bodyCodec(message: Uint8Array): number | null {
  try {
    const dv = new DataView(message.buffer, message.byteOffset, message.byteLength);
    const pre = message.length >= 8 && dv.getInt32(0, true) === -1 ? 8 : 4;
    const msg = FbTable.root(message.subarray(pre));
    const type = msg.uint8(1);
    const header = msg.table(2);
    const batch = type === MESSAGE_RECORD_BATCH ? header : type === MESSAGE_DICTIONARY ? (header?.table(1) ?? null) : null;
    const comp = batch?.table(3);
    return comp ? comp.uint8(0) : null;
  } catch (e) {
    if (e instanceof FlatbufError || e instanceof RangeError) return null;
    throw e;
  }
}

/** Parses a message's flatbuffer (without its prefix). */
export function parseMessage(meta: Uint8Array, offset: number, metaLength: number): MessageHeader {
  try {
    const msg = FbTable.root(meta);
    const version = msg.int16(0);
    const type = msg.uint8(1);
    const body = msg.int64(3);
    if (body < 0n || body > BigInt(Number.MAX_SAFE_INTEGER)) throw new IpcFormatError(`message at byte ${offset} declares a body of ${body} bytes`, 'corrupt');
    const h: MessageHeader = { offset, metaLength, bodyLength: Number(body), type, version, rows: 0 };
    const header = msg.table(2);
    if (type === MESSAGE_SCHEMA && header) h.bigEndian = header.int16(0) === 1;
    let batch: FbTable | null = null;
    if (type === MESSAGE_RECORD_BATCH) batch = header;
    if (type === MESSAGE_DICTIONARY && header) {
      h.dictionaryId = header.int64(0);
      h.isDelta = header.bool(2);
      batch = header.table(1);
    }
    if (batch) {
      const rows = batch.int64(0);
      if (rows < 0n || rows > 2n ** 31n) throw new IpcFormatError(`batch at byte ${offset} declares ${rows} rows`, 'corrupt');
      h.rows = Number(rows);
      const comp = batch.table(3);
      if (comp) h.codec = CODECS[comp.uint8(0)] ?? `codec ${comp.uint8(0)}`;
      checkBatchLayout(batch, h, offset);
    }
    return h;
  } catch (e) {
    if (e instanceof FlatbufError) throw new IpcFormatError(`message at byte ${offset} has corrupt metadata (${e.message})`, 'corrupt');
    throw e;
  }
}

/**
 * Rejects batch headers the library would trust into huge loops or allocations: buffers outside the
 * body, and value counts no body of this size can hold.
 */
function checkBatchLayout(batch: FbTable, h: MessageHeader, offset: number): void {
  const buffers = batch.structVector(2, 16);
  const body = BigInt(h.bodyLength);
  if (buffers) {
    for (let k = 0; k < buffers.length; k++) {
      const p = buffers.start + 16 * k;
      const off = batch.view.getBigInt64(p, true);
      const len = batch.view.getBigInt64(p + 8, true);
      if (off < 0n || len < 0n || off + len > body) throw new IpcFormatError(`batch at byte ${offset}: buffer ${k} lies outside the message body`, 'corrupt');
    }
  }
  const nodes = batch.structVector(1, 16);
  if (nodes) {
    // Compressed bodies may expand; 2^31 values per column is the ceiling either way.
    const cap = h.codec ? 2n ** 31n : body * 8n + BigInt(h.rows) + 64n;
    for (let k = 0; k < nodes.length; k++) {
      const p = nodes.start + 16 * k;
      const len = batch.view.getBigInt64(p, true);
      const nulls = batch.view.getBigInt64(p + 8, true);
      if (len < 0n || nulls < 0n || nulls > len || len > cap) throw new IpcFormatError(`batch at byte ${offset}: column node ${k} declares ${len} values`, 'corrupt');
    }
  }
}

/** Reads the message starting at `offset`; null at a clean end (end-of-stream marker or end of file). */
export async function readMessageAt(
  reader: ByteReader,
  offset: number,
): Promise<{ header: MessageHeader | null; end: 'marker' | 'eof' | null }> {
  const size = reader.size;
  if (offset >= size) return { header: null, end: 'eof' };
  const pre = await reader.read(offset, 8);
  if (pre.length < 4) throw new IpcFormatError(`message prefix at byte ${offset} is cut short`, 'truncated');
  const dv = new DataView(pre.buffer, pre.byteOffset, pre.byteLength);
  let first = dv.getInt32(0, true);
  let prefix = 4;
  if (first === -1) {
    // Continuation marker (format 0.15+); the length follows.
    if (pre.length < 8) throw new IpcFormatError(`message prefix at byte ${offset} is cut short`, 'truncated');
    first = dv.getInt32(4, true);
    prefix = 8;
  }
  if (first === 0) return { header: null, end: 'marker' };
  if (first < 0) throw new IpcFormatError(`message at byte ${offset} declares a negative length`, 'corrupt');
  if (offset + prefix + first > size) {
    throw new IpcFormatError(`message at byte ${offset} declares ${first} bytes of metadata but the file ends ${size - offset - prefix} bytes later`, 'truncated');
  }
  const meta = await reader.read(offset + prefix, first);
  const header = parseMessage(meta, offset, prefix + first);
  if (header.version > NEWEST_METADATA_VERSION) {
    throw new IpcFormatError(`message at byte ${offset} uses Arrow metadata version V${header.version + 1}; this reader knows up to V5`, 'unsupported');
  }
  if (offset + header.metaLength + header.bodyLength > size) {
    throw new IpcFormatError(
      `${MESSAGE_NAMES[header.type] ?? 'message'} at byte ${offset} is cut short: its body needs ${header.bodyLength} bytes, the file holds ${size - offset - header.metaLength}`,
      'truncated',
    );
  }
  return { header, end: null };
}

export interface FooterInfo {
  version: number;
  bigEndian: boolean;
  dictionaries: { offset: number; metaLength: number; bodyLength: number }[];
  batches: { offset: number; metaLength: number; bodyLength: number }[];
}

/** Reads an Arrow file's footer: magic, footer length, the blocks. */
/** Reads and checks the footer; one declaring more than `maxBytes` is refused before it is read. */
export async function readFooter(reader: ByteReader, maxBytes = Number.MAX_SAFE_INTEGER): Promise<FooterInfo> {
  const size = reader.size;
  if (size < 8 + 10) throw new IpcFormatError(`the file is ${size} bytes: too short for an Arrow file`, 'truncated');
  const head = await reader.read(0, 6);
  if (!sameBytes(head, FILE_MAGIC)) throw new IpcFormatError('the file does not start with the Arrow file magic', 'corrupt');
  const tail = await reader.read(size - 10, 10);
  if (!sameBytes(tail.subarray(4), FILE_MAGIC)) throw new IpcFormatError('the file does not end with the Arrow file magic: its footer is missing or cut short', 'truncated');
  const footerLen = new DataView(tail.buffer, tail.byteOffset, 4).getInt32(0, true);
  if (footerLen <= 0 || footerLen > size - 18) throw new IpcFormatError(`the footer declares ${footerLen} bytes in a ${size}-byte file`, 'corrupt');
  // A forged length in a large file must not bring gigabytes into memory.
  if (footerLen > maxBytes) throw new IpcFormatError(`the footer declares ${footerLen} bytes, over the ${maxBytes}-byte memory cap of one reader; it is not read`, 'limit');
  const fb = await reader.read(size - 10 - footerLen, footerLen);
  try {
    const footer = FbTable.root(fb);
    const version = footer.int16(0);
    const schema = footer.table(1);
    const blocks = (i: number) => {
      const v = footer.structVector(i, 24);
      const out: FooterInfo['batches'] = [];
      if (!v) return out;
      const dv = footer.view;
      for (let k = 0; k < v.length; k++) {
        const p = v.start + 24 * k;
        const offset = dv.getBigInt64(p, true);
        const metaLength = dv.getInt32(p + 8, true);
        const bodyLength = dv.getBigInt64(p + 16, true);
        if (offset < 0n || bodyLength < 0n || metaLength <= 0 || offset + BigInt(metaLength) + bodyLength > BigInt(size)) {
          throw new IpcFormatError(`footer block ${k} points outside the file`, 'corrupt');
        }
        out.push({ offset: Number(offset), metaLength, bodyLength: Number(bodyLength) });
      }
      return out;
    };
    return { version, bigEndian: schema ? schema.int16(0) === 1 : false, dictionaries: blocks(2), batches: blocks(3) };
  } catch (e) {
    if (e instanceof FlatbufError) throw new IpcFormatError(`the footer is corrupt (${e.message})`, 'corrupt');
    throw e;
  }
}

function sameBytes(a: Uint8Array, b: Uint8Array): boolean {
  if (a.length < b.length) return false;
  for (let k = 0; k < b.length; k++) if (a[k] !== b[k]) return false;
  return true;
}

/** The end-of-stream marker (continuation + zero length). */
export const END_OF_STREAM = new Uint8Array([0xff, 0xff, 0xff, 0xff, 0, 0, 0, 0]);

/** Arrow `Type` union members (Schema.fbs) this reader's library cannot decode. */
const UNREADABLE_TYPES: Record<number, string> = { 22: 'run-end encoded', 25: 'list-view', 26: 'large list-view' };

/**
 * Top-level columns of a schema message whose type (or a nested child's) the library cannot read,
 * so the message can name them.
 */
export function unreadableColumns(schemaMessage: Uint8Array): { name: string; type: string }[] {
  try {
    const dv = new DataView(schemaMessage.buffer, schemaMessage.byteOffset, schemaMessage.byteLength);
    let pre = 4;
    if (dv.getInt32(0, true) === -1) pre = 8;
    const msg = FbTable.root(schemaMessage.subarray(pre));
    const schema = msg.table(2);
    if (!schema) return [];
    const out: { name: string; type: string }[] = [];
    // A hostile flatbuffer can point many children at one table, so a walk could double per level:
    // it stops after as many field visits as a schema may hold fields.
    let budget = MAX_SCHEMA_FIELDS;
    const walk = (field: FbTable): string | null => {
      if (--budget < 0) return null;
      const t = UNREADABLE_TYPES[field.uint8(2)];
      if (t) return t;
      for (const c of field.tables(5)) {
        const inner = walk(c);
        if (inner) return inner;
      }
      return null;
    };
    for (const f of schema.tables(1)) {
      const t = walk(f);
      if (t) out.push({ name: f.string(0) ?? '(unnamed)', type: t });
    }
    return out;
  } catch {
    return [];
  }
}

export interface WalkResult {
  schema: MessageHeader | null;
  dictionaries: MessageHeader[];
  batches: MessageHeader[];
  /** How the walk ended: the end-of-stream marker, the end of the file, or an error. */
  end: 'marker' | 'eof' | 'error';
  error?: IpcFormatError;
  /** Where the walk stopped. */
  stopAt: number;
}

/** Walks messages from `start`, reading headers only and skipping bodies. */
export async function walkMessages(reader: ByteReader, start: number, signal?: AbortSignal, onStep?: (at: number) => void): Promise<WalkResult> {
  const r: WalkResult = { schema: null, dictionaries: [], batches: [], end: 'eof', stopAt: start };
  let at = start;
  for (;;) {
    signal?.throwIfAborted();
    let step;
    try {
      step = await readMessageAt(reader, at);
    } catch (e) {
      if (e instanceof IpcFormatError) {
        r.end = 'error';
        r.error = e;
        r.stopAt = at;
        return r;
      }
      throw e;
    }
    if (!step.header) {
      r.end = step.end ?? 'eof';
      r.stopAt = at;
      return r;
    }
    const h = step.header;
    if (h.type === MESSAGE_SCHEMA) {
      if (r.schema) {
        r.end = 'error';
        r.error = new IpcFormatError(`a second schema message at byte ${at}`, 'corrupt');
        r.stopAt = at;
        return r;
      }
      r.schema = h;
    } else if (!r.schema) {
      r.end = 'error';
      r.error = new IpcFormatError(`the first message (at byte ${at}) is a ${MESSAGE_NAMES[h.type] ?? 'message of unknown kind'}, not a schema`, 'corrupt');
      r.stopAt = at;
      return r;
    } else if (h.type === MESSAGE_DICTIONARY) r.dictionaries.push(h);
    else if (h.type === MESSAGE_RECORD_BATCH) r.batches.push(h);
    else {
      r.end = 'error';
      r.error = new IpcFormatError(`a ${MESSAGE_NAMES[h.type] ?? `message of kind ${h.type}`} at byte ${at}: not a record batch`, 'unsupported');
      r.stopAt = at;
      return r;
    }
    at = h.offset + h.metaLength + h.bodyLength;
    onStep?.(at);
  }
}

/** Arrow `Type` union members (Schema.fbs), by number. */
const TYPE_NAMES = [
  'none', 'null', 'int', 'floating point', 'binary', 'utf8', 'bool', 'decimal', 'date', 'time', 'timestamp', 'interval', 'list', 'struct', 'union',
  'fixed-size binary', 'fixed-size list', 'map', 'duration', 'large binary', 'large utf8', 'large list', 'run-end encoded', 'binary view', 'utf8 view',
  'list-view', 'large list-view',
];
const MAX_SCHEMA_DEPTH = 64;
const MAX_SCHEMA_FIELDS = 100_000;

/**
 * Checks a schema message (with its prefix) the way the library will read it, before the library
 * sees it: every table, string and vector inside the buffer, known type numbers with sane
 * parameters, children where a type needs them, nesting and field counts bounded. A fuzzed schema
 * becomes an IpcFormatError naming the column, instead of a loop or a crash inside the library.
 */
export function validateSchemaMessage(message: Uint8Array): void {
  const dv = new DataView(message.buffer, message.byteOffset, message.byteLength);
  let pre = 4;
  if (message.length >= 8 && dv.getInt32(0, true) === -1) pre = 8;
  try {
    const msg = FbTable.root(message.subarray(pre));
    if (msg.uint8(1) !== MESSAGE_SCHEMA) throw new IpcFormatError('the first message is not a schema', 'corrupt');
    const schema = msg.table(2);
    if (!schema) throw new IpcFormatError('the schema message holds no schema', 'corrupt');
    validateSchemaTable(schema);
    keyValues(msg, 4, 'the message');
  } catch (e) {
    if (e instanceof FlatbufError) throw new IpcFormatError(`the schema message is corrupt (${e.message})`, 'corrupt');
    throw e;
  }
}

/** The Schema table itself (also what an Arrow file's footer carries). */
export function validateSchemaTable(schema: FbTable): void {
  try {
    const endianness = schema.int16(0);
    if (endianness !== 0 && endianness !== 1) throw new IpcFormatError(`the schema declares endianness ${endianness}`, 'corrupt');
    const count = { fields: 0 };
    schema.tables(1).forEach((f, k) => validateField(f, `column ${k + 1}`, 1, count));
    keyValues(schema, 2, 'the schema');
    schema.structVector(3, 8);
  } catch (e) {
    if (e instanceof FlatbufError) throw new IpcFormatError(`the schema is corrupt (${e.message})`, 'corrupt');
    throw e;
  }
}

function keyValues(t: FbTable, i: number, where: string): void {
  for (const kv of t.tables(i)) {
    kv.string(0);
    kv.string(1);
    void where;
  }
}

function validateField(f: FbTable, where: string, depth: number, count: { fields: number }): void {
  if (depth > MAX_SCHEMA_DEPTH) throw new IpcFormatError(`${where}: types nest deeper than ${MAX_SCHEMA_DEPTH} levels`, 'corrupt');
  if (++count.fields > MAX_SCHEMA_FIELDS) throw new IpcFormatError(`the schema declares more than ${MAX_SCHEMA_FIELDS} fields`, 'corrupt');
  const name = f.string(0);
  const label = name !== null ? `${where} ("${name.length > 40 ? `${name.slice(0, 40)}…` : name}")` : where;
  const typeId = f.uint8(2);
  const typeName = TYPE_NAMES[typeId];
  if (typeName === undefined || typeId === 0) throw new IpcFormatError(`${label} declares type number ${typeId}, which Arrow does not define`, 'corrupt');
  const type = f.table(3);
  const bad = (what: string) => new IpcFormatError(`${label}: its ${typeName} type ${what}`, 'corrupt');
  const children = f.tables(5);
  const param = (i: number, kind: 'int16' | 'int32' | 'uint8' = 'int16') => (type ? (kind === 'uint8' ? type.uint8(i) : kind === 'int32' ? type.int32(i) : type.int16(i)) : 0);
  switch (typeId) {
    case 2: // Int
      if (![8, 16, 32, 64].includes(param(0, 'int32'))) throw bad(`has bit width ${param(0, 'int32')}`);
      break;
    case 3: // FloatingPoint
      if (param(0) < 0 || param(0) > 2) throw bad(`has precision ${param(0)}`);
      break;
    case 7: // Decimal
      if (type && ![32, 64, 128, 256].includes(type.int32(2, 128))) throw bad(`has bit width ${type.int32(2, 128)}`);
      break;
    case 8: // Date
    case 11: // Interval
      if (param(0) < 0 || param(0) > 2) throw bad(`has unit ${param(0)}`);
      break;
    case 9: // Time
      if (param(0) < 0 || param(0) > 3 || (type && ![32, 64].includes(type.int32(1, 32)))) throw bad('has an unknown unit or bit width');
      break;
    case 10: // Timestamp
    case 18: // Duration
      if (param(0) < 0 || param(0) > 3) throw bad(`has unit ${param(0)}`);
      if (typeId === 10) type?.string(1);
      break;
    case 15: // FixedSizeBinary
      if (param(0, 'int32') <= 0) throw bad(`has byte width ${param(0, 'int32')}`);
      break;
    case 16: // FixedSizeList
      if (param(0, 'int32') < 0) throw bad(`has list size ${param(0, 'int32')}`);
      break;
    case 14: {
      // Union
      const mode = param(0);
      if (mode !== 0 && mode !== 1) throw bad(`has mode ${mode}`);
      const ids = type?.structVector(1, 4);
      if (ids && ids.length !== children.length) throw bad(`names ${ids.length} type ids for ${children.length} children`);
      break;
    }
    default:
      break;
  }
  // List-like types carry exactly one child; a map's is a struct of key and value.
  if ([12, 16, 21, 25, 26].includes(typeId) && children.length !== 1) throw bad(`has ${children.length} children, not 1`);
  if (typeId === 17 && (children.length !== 1 || children[0].uint8(2) !== 13 || children[0].tables(5).length !== 2)) throw bad('does not hold one struct child of key and value');
  if (typeId === 22 && children.length !== 2) throw bad(`has ${children.length} children, not 2`);
  const dict = f.table(4);
  if (dict) {
    const index = dict.table(1);
    const width = index ? index.int32(0) : 32;
    if (![8, 16, 32, 64].includes(width)) throw new IpcFormatError(`${label}: its dictionary's index type has bit width ${width}`, 'corrupt');
  }
  keyValues(f, 6, label);
  children.forEach((c, k) => validateField(c, `${label}, child ${k + 1}`, depth + 1, count));
}

/** A record batch's field nodes and body buffers (Message.fbs: RecordBatch.nodes, .buffers). */
export interface BatchBuffers {
  nodes: { length: number; nulls: number }[];
  buffers: { offset: number; length: number }[];
}

/**
 * The field nodes and buffers of the record batch message whose prefix + metadata are `meta`
 * (as the file's block places them); buffer offsets are inside the body. Throws IpcFormatError.
 */
export function batchBuffers(meta: Uint8Array, offset: number): BatchBuffers {
  const dv = new DataView(meta.buffer, meta.byteOffset, meta.byteLength);
  if (meta.length < 8) throw new IpcFormatError(`message prefix at byte ${offset} is cut short`, 'truncated');
  const prefix = dv.getInt32(0, true) === -1 ? 8 : 4;
  const len = dv.getInt32(prefix - 4, true);
  if (len <= 0 || prefix + len > meta.length) throw new IpcFormatError(`message at byte ${offset} declares ${len} bytes of metadata`, 'corrupt');
  try {
    const msg = FbTable.root(meta.subarray(prefix, prefix + len));
    const batch = msg.uint8(1) === MESSAGE_RECORD_BATCH ? msg.table(2) : null;
    if (!batch) throw new IpcFormatError(`message at byte ${offset} is not a record batch`, 'corrupt');
    const out: BatchBuffers = { nodes: [], buffers: [] };
    const nodes = batch.structVector(1, 16);
    for (let k = 0; nodes && k < nodes.length; k++) {
      const p = nodes.start + 16 * k;
      out.nodes.push({ length: Number(batch.view.getBigInt64(p, true)), nulls: Number(batch.view.getBigInt64(p + 8, true)) });
    }
    const buffers = batch.structVector(2, 16);
    for (let k = 0; buffers && k < buffers.length; k++) {
      const p = buffers.start + 16 * k;
      out.buffers.push({ offset: Number(batch.view.getBigInt64(p, true)), length: Number(batch.view.getBigInt64(p + 8, true)) });
    }
    return out;
  } catch (e) {
    if (e instanceof FlatbufError) throw new IpcFormatError(`message at byte ${offset} has corrupt metadata (${e.message})`, 'corrupt');
    throw e;
  }
}
