// Strict UTF-8 decoding of one line, with the place of the first bad byte sequence.

export interface DecodedLine {
  /** The decoded line without BOM and without a trailing `\r`; invalid sequences become U+FFFD. */
  text: string;
  /** True when the line began with a UTF-8 byte order mark (EF BB BF), which was removed. */
  bom: boolean;
  /** Where the first invalid sequence starts: byte offset in the given bytes, and 1-based UTF-16 column in `text`. */
  invalid: { byteOffset: number; column: number } | null;
}

const strict = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
const lenient = new TextDecoder('utf-8', { fatal: false, ignoreBOM: true });

export function hasBom(bytes: Uint8Array): boolean {
  return bytes.length >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf;
}

/**
 * Byte offset of the first ill-formed sequence (Unicode Table 3-7, well-formed UTF-8), or -1.
 * Rejects overlong forms, encoded surrogates and code points above U+10FFFF.
 */
export function firstInvalidUtf8(bytes: Uint8Array, from = 0, to = bytes.length): number {
  let i = from;
  while (i < to) {
    const b = bytes[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    let need: number;
    let lo = 0x80;
    let hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      if (b === 0xe0) lo = 0xa0;
      else if (b === 0xed) hi = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      if (b === 0xf0) lo = 0x90;
      else if (b === 0xf4) hi = 0x8f;
    } else return i;
    // A sequence cut short by the end of the line is ill-formed at its first byte.
    if (i + need >= to) return i;
    const b1 = bytes[i + 1];
    if (b1 < lo || b1 > hi) return i;
    for (let k = 2; k <= need; k++) {
      const c = bytes[i + k];
      if (c < 0x80 || c > 0xbf) return i;
    }
    i += need + 1;
  }
  return -1;
}

/** Decodes one line's bytes (without its `\n`): strips a leading BOM and a trailing `\r`. */
export function decodeLine(bytes: Uint8Array): DecodedLine {
  const bom = hasBom(bytes);
  const body = bom ? bytes.subarray(3) : bytes;
  let text: string;
  let invalid: DecodedLine['invalid'] = null;
  try {
    text = strict.decode(body);
  } catch {
    text = lenient.decode(body);
    const at = firstInvalidUtf8(body);
    // The prefix before `at` is valid, so its decoded length is exactly the column offset.
    const at2 = at < 0 ? 0 : at;
    invalid = { byteOffset: at2 + (bom ? 3 : 0), column: lenient.decode(body.subarray(0, at2)).length + 1 };
  }
  if (text.length > 0 && text.charCodeAt(text.length - 1) === 0x0d) text = text.slice(0, -1);
  return { text, bom, invalid };
}
