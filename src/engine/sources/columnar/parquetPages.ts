// Parquet's footer places and page headers read with our own Thrift reader (parquet-format's
// parquet.thrift field ids), so what a page declares is known before any byte reaches the decoder:
// where each column chunk lies, its offset index (the page index) when the writer wrote one, and
// each page header's declared sizes.

import type { ByteReader } from '../source.js';
import { decodeStruct, type ThriftStruct, type ThriftValue } from './thrift.js';

/** One column chunk of one row group, as the footer places it. */
export interface ChunkPlace {
  /** Top-level column name (the first element of path_in_schema). */
  top: string;
  path: string;
  /** First byte of the chunk: its dictionary page when there is one, else its first data page. */
  start: number;
  /** Bytes of the chunk (total_compressed_size). */
  length: number;
  /** Where the chunk's offset index lies, when the writer wrote one. */
  offsetIndex?: { offset: number; length: number };
}

/** A page of a column chunk, from the offset index: where it starts and the first row it holds. */
export interface PageLocation {
  offset: number;
  compressedSize: number;
  firstRow: number;
}

/** What one page header declares (PageHeader in parquet.thrift). */
export interface PageHeaderFacts {
  /** 0 data page, 1 index page, 2 dictionary page, 3 data page v2. */
  type: number;
  uncompressedSize: number;
  compressedSize: number;
  /** Values the page holds (num_values of its data, dictionary or v2 header). */
  values: number;
  /** Bytes of the header itself. */
  headerBytes: number;
}

export const PAGE_TYPE_NAMES = ['data page', 'index page', 'dictionary page', 'data page (v2)'];

const num = (v: ThriftValue | undefined): number | undefined => (typeof v === 'number' ? v : undefined);
const struct = (v: ThriftValue | undefined): ThriftStruct | undefined =>
  v && typeof v === 'object' && !Array.isArray(v) && !(v instanceof Uint8Array) ? (v as ThriftStruct) : undefined;
const list = (v: ThriftValue | undefined): ThriftValue[] => (Array.isArray(v) ? v : []);
const text = new TextDecoder();

/**
 * The column chunk places of every row group of a FileMetaData (parquet.thrift: FileMetaData.4
 * row_groups; RowGroup.1 columns; ColumnChunk.3 meta_data, .4/.5 offset index; ColumnMetaData.3
 * path_in_schema, .7 total_compressed_size, .9 data_page_offset, .11 dictionary_page_offset).
 * Throws RangeError when the footer does not decode.
 */
export function chunkPlaces(footer: Uint8Array): ChunkPlace[][] {
  const { value } = decodeStruct(footer);
  return list(value[4]).map((rg) =>
    list(struct(rg)?.[1]).map((cc) => {
      const chunk = struct(cc) ?? {};
      const md = struct(chunk[3]) ?? {};
      const names = list(md[3]).map((b) => (b instanceof Uint8Array ? text.decode(b) : ''));
      const data = num(md[9]) ?? 0;
      const dict = num(md[11]);
      // A dictionary offset of 0 (or past the data pages) is a known writer slip: the chunk starts at its data page.
      const start = dict !== undefined && dict > 0 && dict < data ? dict : data;
      const oiOffset = num(chunk[4]);
      const oiLength = num(chunk[5]);
      const place: ChunkPlace = { top: names[0] ?? '', path: names.join('.'), start, length: num(md[7]) ?? 0 };
      if (oiOffset !== undefined && oiLength !== undefined && oiOffset > 0 && oiLength > 0) place.offsetIndex = { offset: oiOffset, length: oiLength };
      return place;
    }),
  );
}

/** An OffsetIndex (parquet.thrift: .1 page_locations of PageLocation .1 offset, .2 compressed_page_size, .3 first_row_index). */
export function pageLocations(bytes: Uint8Array): PageLocation[] {
  const { value } = decodeStruct(bytes);
  return list(value[1]).map((pl) => {
    const s = struct(pl) ?? {};
    return { offset: num(s[1]) ?? 0, compressedSize: num(s[2]) ?? 0, firstRow: num(s[3]) ?? 0 };
  });
}

/** Decodes a PageHeader (.1 type, .2 uncompressed_page_size, .3 compressed_page_size, .5/.7/.8 the kind's header with num_values at .1). */
export function pageHeader(bytes: Uint8Array): PageHeaderFacts {
  const { value, length } = decodeStruct(bytes);
  const kind = struct(value[5]) ?? struct(value[7]) ?? struct(value[8]) ?? {};
  return {
    type: num(value[1]) ?? -1,
    uncompressedSize: num(value[2]) ?? 0,
    compressedSize: num(value[3]) ?? 0,
    values: num(kind[1]) ?? 0,
    headerBytes: length,
  };
}

/** The largest page header we read; statistics with long min/max values make headers grow. */
const MAX_HEADER_BYTES = 1024 * 1024;

/**
 * Reads the page header at `offset`, reading more when the first bytes cut it short. Returns null
 * when no header decodes within `limit` bytes (the decoder then reports the damage itself).
 */
export async function readPageHeader(reader: ByteReader, offset: number, limit: number): Promise<PageHeaderFacts | null> {
  let want = Math.min(256, limit);
  for (;;) {
    if (want <= 0) return null;
    const bytes = await reader.read(offset, want);
    try {
      return pageHeader(bytes);
    } catch {
      if (want >= limit || want >= MAX_HEADER_BYTES || bytes.length < want) return null;
      want = Math.min(limit, want * 8, MAX_HEADER_BYTES);
    }
  }
}
