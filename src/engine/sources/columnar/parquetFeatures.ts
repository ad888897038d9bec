// What a Parquet footer asks of the decoder, read with our own Thrift reader before parquet-wasm
// sees a byte: each column chunk's codec and declared encodings, and whether the file or a chunk is
// encrypted. Checked here against what the decoder reads, so "this reader cannot read it" is decided
// by what the file declares (an UnsupportedFeature naming the column) and anything the decoder
// refuses after that is damage, never told apart by the decoder's wording.

import { UnsupportedFeature } from '../../errors.js';
import { decodeStruct, type ThriftStruct, type ThriftValue } from './thrift.js';

/** parquet-format CompressionCodec (parquet.thrift), by number. */
export const PARQUET_CODECS = ['uncompressed', 'snappy', 'gzip', 'LZO', 'brotli', 'LZ4 (Hadoop framing)', 'zstd', 'LZ4 raw'];

/**
 * The codecs parquet-wasm decompresses: all parquet-format defines but LZO (the Rust parquet crate
 * it is built on has no LZO codec, from memory; observed here: an LZO chunk makes the decoder trap).
 */
const DECOMPRESSED = new Set([0, 1, 2, 4, 5, 6, 7]);

/**
 * parquet-format Encoding (parquet.thrift), by number; 1 (GROUP_VAR_INT) was dropped from the
 * format. parquet-wasm accepts every one of these in a footer (it checks the page's own encoding
 * when it decodes) and refuses the whole footer for any other number (observed: "Unexpected
 * Encoding 10").
 */
export const PARQUET_ENCODINGS: Record<number, string> = {
  0: 'PLAIN',
  2: 'PLAIN_DICTIONARY',
  3: 'RLE',
  4: 'BIT_PACKED',
  5: 'DELTA_BINARY_PACKED',
  6: 'DELTA_LENGTH_BYTE_ARRAY',
  7: 'DELTA_BYTE_ARRAY',
  8: 'RLE_DICTIONARY',
  9: 'BYTE_STREAM_SPLIT',
};

/** One column chunk as its footer entry declares it. */
export interface ChunkFeatures {
  /** Top-level column name (the first element of path_in_schema); empty when the metadata is encrypted. */
  top: string;
  path: string;
  /** CompressionCodec number; -1 when the chunk's metadata is absent (encrypted). */
  codec: number;
  encodings: number[];
  /** The chunk carries crypto metadata or encrypted column metadata (Parquet modular encryption). */
  encrypted: boolean;
}

export interface FooterFeatures {
  /** FileMetaData.8 encryption_algorithm: a plaintext footer over encrypted columns. */
  encryptedColumns: boolean;
  /** Column chunks per row group. */
  groups: ChunkFeatures[][];
}

const num = (v: ThriftValue | undefined): number | undefined => (typeof v === 'number' ? v : undefined);
const struct = (v: ThriftValue | undefined): ThriftStruct | undefined =>
  v && typeof v === 'object' && !Array.isArray(v) && !(v instanceof Uint8Array) ? (v as ThriftStruct) : undefined;
const list = (v: ThriftValue | undefined): ThriftValue[] => (Array.isArray(v) ? v : []);
const text = new TextDecoder();

/**
 * What the FileMetaData in `footer` declares (parquet.thrift: FileMetaData.4 row_groups, .8
 * encryption_algorithm; RowGroup.1 columns; ColumnChunk.3 meta_data, .8 crypto_metadata, .9
 * encrypted_column_metadata; ColumnMetaData.2 encodings, .3 path_in_schema, .4 codec). Throws
 * RangeError when the footer does not decode.
 */
export function footerFeatures(footer: Uint8Array): FooterFeatures {
  const { value } = decodeStruct(footer);
  return {
    encryptedColumns: value[8] !== undefined,
    groups: list(value[4]).map((rg) =>
      list(struct(rg)?.[1]).map((cc) => {
        const chunk = struct(cc) ?? {};
        const md = struct(chunk[3]);
        const names = list(md?.[3]).map((b) => (b instanceof Uint8Array ? text.decode(b) : ''));
        return {
          top: names[0] ?? '',
          path: names.join('.'),
          codec: num(md?.[4]) ?? -1,
          encodings: list(md?.[2]).filter((e): e is number => typeof e === 'number'),
          encrypted: chunk[8] !== undefined || chunk[9] !== undefined,
        };
      }),
    ),
  };
}

/** True when anything in the file is encrypted: the columns under a plaintext footer, or one chunk. */
export function isEncrypted(f: FooterFeatures): boolean {
  return f.encryptedColumns || f.groups.some((g) => g.some((c) => c.encrypted));
}

function columnName(c: ChunkFeatures, k: number): string {
  return c.path ? `column "${c.path}"` : `column chunk ${k + 1}`;
}

/**
 * What the decoder would refuse while reading the footer itself, so none of the file can be read:
 * a codec or an encoding number parquet-format does not define (a newer format's, or none at all).
 * parquet-wasm refuses the whole footer for these (observed: "Unexpected CompressionCodec 8").
 */
export function footerRefusal(f: FooterFeatures): UnsupportedFeature | null {
  for (let g = 0; g < f.groups.length; g++) {
    const chunks = f.groups[g];
    for (let k = 0; k < chunks.length; k++) {
      const c = chunks[k];
      if (c.codec >= PARQUET_CODECS.length || c.codec < -1) {
        return new UnsupportedFeature(
          `${columnName(c, k)} (row group ${g}) is compressed with codec number ${c.codec}, which this reader does not know (parquet-format defines 0 to ${PARQUET_CODECS.length - 1}); no rows are read`,
          `codec ${c.codec}`,
          c.path,
        );
      }
      const odd = c.encodings.find((e) => PARQUET_ENCODINGS[e] === undefined);
      if (odd !== undefined) {
        return new UnsupportedFeature(
          `${columnName(c, k)} (row group ${g}) declares encoding number ${odd}, which this reader does not know; no rows are read`,
          `encoding ${odd}`,
          c.path,
        );
      }
    }
  }
  return null;
}

/**
 * Why the decoder cannot read row group `group` for these top-level columns (all when none are
 * named): a chunk compressed with a codec it lacks, or an encrypted chunk. Null when nothing stands
 * in the way; what the decoder refuses then is damage.
 */
export function chunkRefusal(f: FooterFeatures, group: number, columns?: string[]): UnsupportedFeature | null {
  const chunks = f.groups[group] ?? [];
  for (let k = 0; k < chunks.length; k++) {
    const c = chunks[k];
    if (columns && !columns.includes(c.top)) continue;
    if (c.encrypted) {
      return new UnsupportedFeature(
        `${columnName(c, k)} is encrypted (Parquet modular encryption); Shardwise does not decrypt files`,
        'encryption',
        c.path,
      );
    }
    if (c.codec >= 0 && !DECOMPRESSED.has(c.codec)) {
      return new UnsupportedFeature(
        `${columnName(c, k)} is compressed with ${PARQUET_CODECS[c.codec] ?? `codec number ${c.codec}`}, which this reader cannot decompress`,
        PARQUET_CODECS[c.codec] ?? `codec ${c.codec}`,
        c.path,
      );
    }
  }
  return null;
}
