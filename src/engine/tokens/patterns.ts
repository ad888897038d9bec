// Pre-tokenizer patterns rewritten for JavaScript so that they cut text exactly where the reference
// tokenizer's Rust regex does. The published patterns, run as JavaScript regexes unchanged, differ:
//  - `\s` in JavaScript (ECMA-262 WhiteSpace + LineTerminator) includes U+FEFF and lacks U+0085;
//    Rust's `\s` is Unicode White_Space (UCD PropList.txt), which is the other way round.
//  - `(?i:'s|…)` in Rust folds case by Unicode simple case folding, so `'ſ` (U+017F) is a contraction
//    (from memory; no input tried changes ids either way, as no rank joins `'ſ` to its neighbours).
// The white-space difference shows against the reference in test/unit/engine/tokens/reference.test.ts.
// Character classes are spelled out here instead of patching the published strings at run time.

/** Unicode White_Space (UCD PropList.txt), the set Rust's `\s` matches. */
export const WHITE_SPACE =
  '\\t\\n\\v\\f\\r \\u0085\\u00A0\\u1680\\u2000-\\u200A\\u2028\\u2029\\u202F\\u205F\\u3000';

const S = `[${WHITE_SPACE}]`;
const NOT_S = `[^${WHITE_SPACE}]`;

/** `(?i:'s|'t|'re|'ve|'m|'ll|'d)` with its case-folding orbit written out (s ~ S ~ ſ). */
const CONTRACTION = "'(?:[sS\\u017F]|[tT]|[rR][eE]|[vV][eE]|[mM]|[lL][lL]|[dD])";

export type PatternName = 'gpt2' | 'cl100k_base' | 'o200k_base';

const UPPER = '[\\p{Lu}\\p{Lt}\\p{Lm}\\p{Lo}\\p{M}]';
const LOWER = '[\\p{Ll}\\p{Lm}\\p{Lo}\\p{M}]';

export const PATTERNS: Readonly<Record<PatternName, string>> = {
  // gpt2, r50k_base, p50k_base: case-sensitive contractions.
  gpt2: [
    "'s|'t|'re|'ve|'m|'ll|'d",
    ' ?\\p{L}+',
    ' ?\\p{N}+',
    ` ?[^${WHITE_SPACE}\\p{L}\\p{N}]+`,
    `${S}+(?!${NOT_S})`,
    `${S}+`,
  ].join('|'),
  cl100k_base: [
    CONTRACTION,
    `[^\\r\\n\\p{L}\\p{N}]?\\p{L}+`,
    '\\p{N}{1,3}',
    ` ?[^${WHITE_SPACE}\\p{L}\\p{N}]+[\\r\\n]*`,
    `${S}*[\\r\\n]+`,
    `${S}+(?!${NOT_S})`,
    `${S}+`,
  ].join('|'),
  o200k_base: [
    `[^\\r\\n\\p{L}\\p{N}]?${UPPER}*${LOWER}+(?:${CONTRACTION})?`,
    `[^\\r\\n\\p{L}\\p{N}]?${UPPER}+${LOWER}*(?:${CONTRACTION})?`,
    '\\p{N}{1,3}',
    ` ?[^${WHITE_SPACE}\\p{L}\\p{N}]+[\\r\\n/]*`,
    `${S}*[\\r\\n]+`,
    `${S}+(?!${NOT_S})`,
    `${S}+`,
  ].join('|'),
};
