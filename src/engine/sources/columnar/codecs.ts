// Registers the Arrow IPC body codecs (LZ4 frame, Zstandard) with apache-arrow's codec registry, once.

import { compressionRegistry, CompressionType } from 'apache-arrow';
import { decompress as zstdDecompress } from 'fzstd';
import * as lz4 from 'lz4js';

let done = false;

export function registerIpcCodecs(): void {
  if (done) return;
  done = true;
  compressionRegistry.set(CompressionType.LZ4_FRAME, {
    decode: (data: Uint8Array) => aligned(lz4.decompress(data)),
  });
  compressionRegistry.set(CompressionType.ZSTD, {
    decode: (data: Uint8Array) => aligned(zstdDecompress(data)),
  });
}

/** The library views buffers as 64-bit arrays, which need 8-byte aligned starts. */
function aligned(bytes: Uint8Array): Uint8Array {
  return bytes.byteOffset % 8 === 0 ? bytes : bytes.slice();
}
