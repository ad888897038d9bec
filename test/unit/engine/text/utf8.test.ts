import { describe, expect, it } from 'vitest';
import { decodeLine, firstInvalidUtf8 } from '../../../../src/engine/text/utf8.js';
import { mulberry32 } from '../../helpers/random';

const enc = new TextEncoder();
const bytes = (...parts: Array<string | number[]>) =>
  Uint8Array.from(parts.flatMap((p) => (typeof p === 'string' ? [...enc.encode(p)] : p)));


describe('decodeLine', () => {
  it('strips a leading UTF-8 BOM and reports it (RFC 8259 §8.1; JSON Lines: UTF-8 without BOM)', () => {
    expect(decodeLine(bytes([0xef, 0xbb, 0xbf], '{"a":1}'))).toEqual({ text: '{"a":1}', bom: true, invalid: null });
    expect(decodeLine(bytes('{"a":1}'))).toEqual({ text: '{"a":1}', bom: false, invalid: null });
    // A BOM later in the line is content, not a mark.
    expect(decodeLine(bytes(' ', [0xef, 0xbb, 0xbf])).text).toBe(' \ufeff');
  });

  it('strips one trailing \\r (JSON Lines tolerates \\r\\n)', () => {
    expect(decodeLine(bytes('{}\r')).text).toBe('{}');
    expect(decodeLine(bytes('{}\r\r')).text).toBe('{}\r');
  });

  it('places the first invalid sequence in bytes and in UTF-16 columns after the BOM', () => {
    expect(decodeLine(bytes('ab', [0xff], 'c'))).toEqual({ text: 'ab\ufffdc', bom: false, invalid: { byteOffset: 2, column: 3 } });
    const withBom = decodeLine(bytes([0xef, 0xbb, 0xbf], 'ab', [0xff], 'c'));
    expect(withBom.invalid).toEqual({ byteOffset: 5, column: 3 });
    // 😀 is 4 bytes and 2 UTF-16 code units; C0 80 is an overlong form.
    expect(decodeLine(bytes('😀', [0xc0, 0x80])).invalid).toEqual({ byteOffset: 4, column: 3 });
  });

  it('follows Unicode Table 3-7 on well-formed sequences (Unicode Standard ch. 3, from memory)', () => {
    const invalid: number[][] = [
      [0xed, 0xa0, 0x80], // encoded surrogate U+D800
      [0xf4, 0x90, 0x80, 0x80], // above U+10FFFF
      [0xc0, 0xaf], // overlong '/'
      [0xe0, 0x80, 0xaf], // overlong
      [0xf0, 0x80, 0x80, 0xaf], // overlong
      [0x80], // lone continuation byte
      [0xe2, 0x82], // truncated
      [0xf8, 0x88, 0x80, 0x80, 0x80], // five-byte form
    ];
    for (const b of invalid) expect(firstInvalidUtf8(Uint8Array.from(b)), b.join(' ')).toBe(0);
    const valid: number[][] = [
      [0xef, 0xbf, 0xbf], // U+FFFF, a noncharacter but well-formed
      [0xf4, 0x8f, 0xbf, 0xbf], // U+10FFFF
      [0xed, 0x9f, 0xbf], // U+D7FF
      [0xee, 0x80, 0x80], // U+E000
    ];
    for (const b of valid) expect(firstInvalidUtf8(Uint8Array.from(b)), b.join(' ')).toBe(-1);
  });

  it('agrees with the WHATWG Encoding Standard decoder (TextDecoder as oracle) on random bytes', () => {
    const rnd = mulberry32(11);
    const fatal = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
    const lenient = new TextDecoder('utf-8', { ignoreBOM: true });
    const pool = [0x41, 0x22, 0x7b, 0x80, 0xbf, 0xc0, 0xc2, 0xdf, 0xe0, 0xe2, 0xed, 0xef, 0xf0, 0xf4, 0xf5, 0xff, 0x9f, 0xa0, 0x8f, 0x90];
    let invalidSeen = 0;
    const mismatches: string[] = [];
    for (let n = 0; n < 20000; n++) {
      const b = Uint8Array.from({ length: 1 + Math.floor(rnd() * 8) }, () => pool[Math.floor(rnd() * pool.length)]);
      let ok = true;
      try {
        fatal.decode(b);
      } catch {
        ok = false;
      }
      const at = firstInvalidUtf8(b);
      if ((at === -1) !== ok) mismatches.push(`validity ${Array.from(b).join(' ')}`);
      if (!ok) {
        invalidSeen++;
        // The replacement decoder puts its first U+FFFD exactly where the first bad sequence is
        // (the pool cannot form EF BF BD, so no U+FFFD comes from the input itself).
        const expected = lenient.decode(b).indexOf('\ufffd') + 1;
        if (decodeLine(b).invalid?.column !== expected) mismatches.push(`column ${Array.from(b).join(' ')}`);
      }
    }
    expect(mismatches).toEqual([]);
    expect(invalidSeen).toBeGreaterThan(1000);
  });
});
