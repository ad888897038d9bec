// Token-counting speed of Shardwise's counter against the reference tokenizer (tiktoken, WASM) and
// plain js-tiktoken, measured in the same run, single-threaded. Prints MB/s and ratios.
//
// The corpus imitates chat records: prose drawn from a generated 60,000-word vocabulary with a
// Zipf-like rank distribution (word frequencies in natural text follow roughly 1/rank — common
// practice), capitalised sentence starts, punctuation, numbers, line breaks, and a share of code,
// JSON, CJK, Hangul, Arabic and emoji. A vocabulary of a few dozen words would make every piece
// repeat and flatter any per-piece cache; this one keeps producing new pieces.
//
// Usage: node scripts/bench-tokens.mjs [megabytes=30] [encoding=both|cl100k_base|o200k_base] [runs=3]
import { build } from 'esbuild';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { get_encoding } from 'tiktoken';
import { Tiktoken } from 'js-tiktoken/lite';
import { prng } from './bench/corpus.mjs';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const megabytes = Number(process.argv[2] ?? 30);
const which = process.argv[3] ?? 'both';
const runs = Math.max(1, Number(process.argv[4] ?? 3));
const encodings = which === 'both' ? ['o200k_base', 'cl100k_base'] : [which];

// Bundle the TypeScript counter into a temporary folder so plain node can load it.
const out = mkdtempSync(join(tmpdir(), 'shardwise-bench-'));
await build({
  entryPoints: [join(root, 'src/engine/tokens/counter.ts')],
  outfile: join(out, 'counter.mjs'),
  bundle: true,
  format: 'esm',
  platform: 'node',
  logLevel: 'warning',
});
const { createTokenCounter } = await import(pathToFileURL(join(out, 'counter.mjs')).href);
rmSync(out, { recursive: true, force: true });


const rand = prng(20240611);
const pick = (xs) => xs[Math.floor(rand() * xs.length)];

// 60,000 distinct pseudo-words built from syllables, ranked; rank r drawn with weight 1/(r + 2.7).
const VOCABULARY = 60_000;
const onsets = ['', 'b', 'c', 'd', 'f', 'g', 'h', 'j', 'k', 'l', 'm', 'n', 'p', 'r', 's', 't', 'v', 'w', 'z', 'br', 'ch', 'cl', 'dr', 'fl', 'gr', 'pl', 'pr', 'sh', 'sk', 'sp', 'st', 'str', 'th', 'tr'];
const nuclei = ['a', 'e', 'i', 'o', 'u', 'ai', 'ea', 'ee', 'oo', 'ou', 'y', 'ie'];
const codas = ['', '', '', 'n', 'r', 's', 't', 'l', 'ck', 'ng', 'nd', 'st', 'rt', 'm', 'x', 'sh'];
const vocabulary = [];
const seen = new Set();
while (vocabulary.length < VOCABULARY) {
  // Frequent words are short: the syllable count grows with the rank.
  const rank = vocabulary.length;
  const syllables = 1 + Math.floor(rand() * (rank < 200 ? 1.5 : rank < 5000 ? 3 : 4.5));
  let word = '';
  for (let k = 0; k < syllables; k++) word += pick(onsets) + pick(nuclei) + pick(codas);
  if (!seen.has(word)) {
    seen.add(word);
    vocabulary.push(word);
  }
}
const cumulative = new Float64Array(VOCABULARY);
let total = 0;
for (let r = 0; r < VOCABULARY; r++) cumulative[r] = total += 1 / (r + 2.7);
function zipfWord() {
  const x = rand() * total;
  let lo = 0;
  let hi = VOCABULARY - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (cumulative[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return vocabulary[lo];
}

function sentence() {
  const n = 4 + Math.floor(rand() * 22);
  const words = [];
  for (let i = 0; i < n; i++) {
    let w = zipfWord();
    const roll = rand();
    if (i === 0 || roll < 0.03) w = w[0].toUpperCase() + w.slice(1);
    else if (roll < 0.035) w = w.toUpperCase();
    else if (roll < 0.05) w += pick(["'s", "'t", "'re", "'ll", "'d"]);
    else if (roll < 0.09) w += ',';
    else if (roll < 0.11) w = String(Math.floor(rand() ** 3 * 100000));
    words.push(w);
  }
  return words.join(' ') + pick(['.', '.', '.', '?', '!', ':']);
}

const cjk = '自行车链条刹车轮胎修理变速器車輪のスポークを調整する后轮辐条需要重新校正';
const hangul = ['자전거', '체인', '브레이크', '수리', '바퀴', '정비'];
const arabic = ['الدراجة', 'سلسلة', 'الفرامل', 'إصلاح', 'العجلة'];
const emoji = ['🚲', '🔧', '👍🏽', '👩‍🔧', '🛠️', '✅', '😀', '🙏'];
function codeBlock() {
  const name = zipfWord();
  const other = zipfWord();
  return pick([
    `\`\`\`js\nfunction ${name}(${other}) {\n  return ${other}.pull * ${(rand() * 10).toFixed(2)};\n}\n\`\`\``,
    `\`\`\`python\ndef ${name}_${other}(x):\n    if x > ${Math.floor(rand() * 1000)}:\n        return None\n    return x * 2\n\`\`\``,
    `    const ${name} = [${Array.from({ length: 6 }, () => Math.floor(rand() * 40)).join(', ')}];`,
  ]);
}
function jsonSnippet() {
  return JSON.stringify({ [zipfWord()]: zipfWord(), id: Math.floor(rand() * 1e6), torque_nm: Math.round(rand() * 100) / 10, tags: [zipfWord(), zipfWord()] });
}
function otherScript() {
  const roll = rand();
  if (roll < 0.4) return Array.from({ length: 4 + Math.floor(rand() * 20) }, () => cjk[Math.floor(rand() * cjk.length)]).join('') + '。';
  if (roll < 0.6) return Array.from({ length: 3 + Math.floor(rand() * 6) }, () => pick(hangul)).join(' ') + '.';
  if (roll < 0.8) return Array.from({ length: 3 + Math.floor(rand() * 6) }, () => pick(arabic)).join(' ') + '؟';
  return pick(emoji) + ' ' + sentence();
}

/** One chat message: a few paragraphs of prose, now and then code, JSON or another script. */
function message() {
  const paragraphs = 1 + Math.floor(rand() * 4);
  const parts = [];
  for (let p = 0; p < paragraphs; p++) {
    const roll = rand();
    if (roll < 0.08) parts.push(codeBlock());
    else if (roll < 0.12) parts.push(jsonSnippet());
    else if (roll < 0.2) parts.push(otherScript());
    else parts.push(Array.from({ length: 1 + Math.floor(rand() * 5) }, sentence).join(' '));
  }
  return parts.join(rand() < 0.7 ? '\n\n' : '\n');
}

const records = [];
let bytes = 0;
let chars = 0;
while (bytes < megabytes * 1_000_000) {
  const text = message();
  records.push(text);
  chars += text.length;
  bytes += Buffer.byteLength(text, 'utf8');
}

// The first records, up to 3 MB, for the slow js-tiktoken row.
const sample = [];
let sampleBytes = 0;
for (const r of records) {
  if (sampleBytes >= 3_000_000) break;
  sample.push(r);
  sampleBytes += Buffer.byteLength(r, 'utf8');
}

function time(fn) {
  const t0 = process.hrtime.bigint();
  const tokens = fn();
  const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
  return { seconds, tokens };
}
const median = (xs) => [...xs].sort((a, b) => a - b)[xs.length >> 1];

console.log(`corpus: ${(bytes / 1e6).toFixed(1)} MB UTF-8 (${(chars / 1e6).toFixed(1)} M chars) in ${records.length} records, ${VOCABULARY} words; ${runs} runs, medians; one thread`);
let failed = false;
for (const encoding of encodings) {
  const table = (await import(`js-tiktoken/ranks/${encoding}`)).default;
  const reference = get_encoding(encoding);
  const plain = new Tiktoken(table);
  const tLoad0 = process.hrtime.bigint();
  // A fresh counter per encoding and run, so the first pass starts with an empty cache.
  const fresh = () => createTokenCounter(encoding, table);
  fresh();
  const loadSeconds = Number(process.hrtime.bigint() - tLoad0) / 1e9;

  const rows = {
    'reference (tiktoken WASM)': [],
    'js-tiktoken as shipped': [],
    'shardwise count, first pass': [],
    'shardwise count, second pass': [],
  };
  const totals = {};
  for (let run = 0; run < runs; run++) {
    const take = (label, fn) => {
      const r = time(fn);
      rows[label].push(r.seconds);
      totals[label] ??= r.tokens;
      if (totals[label] !== r.tokens) throw new Error(`${label}: total changed between runs`);
    };
    take('reference (tiktoken WASM)', () => records.reduce((n, r) => n + reference.encode_ordinary(r).length, 0));
    // js-tiktoken is slow: one run over the first few MB is enough to place it.
    if (run === 0) take('js-tiktoken as shipped', () => sample.reduce((n, r) => n + plain.encode(r, [], []).length, 0));
    const ours = fresh();
    take('shardwise count, first pass', () => records.reduce((n, r) => n + ours.count(r), 0));
    take('shardwise count, second pass', () => records.reduce((n, r) => n + ours.count(r), 0));
  }
  reference.free();

  const refSeconds = median(rows['reference (tiktoken WASM)']);
  console.log(`\n${encoding} (rank table load ${loadSeconds.toFixed(2)} s)`);
  for (const [label, seconds] of Object.entries(rows)) {
    const s = median(seconds);
    const sampled = label === 'js-tiktoken as shipped';
    const mbps = (sampled ? sampleBytes : bytes) / 1e6 / s;
    console.log(
      `  ${label.padEnd(30)} ${mbps.toFixed(2).padStart(7)} MB/s  ` +
        `ratio to reference ${(mbps / (bytes / 1e6 / refSeconds)).toFixed(2).padStart(5)}×  ` +
        (sampled ? `(first ${(sampleBytes / 1e6).toFixed(1)} MB)` : `tokens ${totals[label]}`),
    );
  }
  // js-tiktoken as shipped may differ on rare white space; our counter must agree with the reference.
  const refTokens = totals['reference (tiktoken WASM)'];
  if (totals['shardwise count, first pass'] !== refTokens || totals['shardwise count, second pass'] !== refTokens) {
    console.error(`  ${encoding}: token totals differ from the reference`);
    failed = true;
  }
  const target = 4;
  const ratio = refSeconds / median(rows['shardwise count, first pass']);
  console.log(`  target ≥ ${target}× the reference on the first pass: ${ratio >= target ? 'met' : 'missed'} (${ratio.toFixed(2)}×)`);
}
if (failed) process.exitCode = 1;
