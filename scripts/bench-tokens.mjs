// Token-counting speed of Shardwise's counter against the reference tokenizer (tiktoken, WASM) and
// plain js-tiktoken, on one generated ~10 MB mixed corpus, measured in the same run. Prints ratios.
// Usage: node scripts/bench-tokens.mjs [megabytes=10] [encoding=cl100k_base]
import { build } from 'esbuild';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { get_encoding } from 'tiktoken';
import { Tiktoken } from 'js-tiktoken/lite';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const megabytes = Number(process.argv[2] ?? 10);
const encoding = process.argv[3] ?? 'cl100k_base';

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
const { loadTokenCounter } = await import(pathToFileURL(join(out, 'counter.mjs')).href);

function prng(seed) {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const rand = prng(20240611);
const pick = (xs) => xs[Math.floor(rand() * xs.length)];
const words = 'the chain skipped when I shifted to the smallest cog so we checked the derailleur hanger alignment and the cable tension before truing the rear wheel spoke brake pad rotor tubeless sealant'.split(' ');
const cjk = '自行车链条刹车轮胎修理变速器車輪のスポークを調整する';
const emoji = ['🚲', '🔧', '👍🏽', '👩‍🔧', '🛠️', '✅'];
const code = ['function tension(cable) {\n  return cable.pull * 0.5;\n}\n', 'const gears = [11, 13, 15, 17, 19, 21, 24, 28];\n', '    if (spoke.load > limit) { retrue(wheel); }\n'];
const json = ['{"role": "assistant", "content": "Check the hanger."}', '{"torque_nm": 5.5, "bolts": [1, 2, 3]}'];
const chunks = [];
let size = 0;
while (size < megabytes * 1_000_000) {
  const kind = rand();
  let piece;
  if (kind < 0.6) piece = Array.from({ length: 8 + Math.floor(rand() * 30) }, () => pick(words)).join(' ') + '. ';
  else if (kind < 0.7) piece = pick(code);
  else if (kind < 0.8) piece = pick(json) + '\n';
  else if (kind < 0.88) piece = Array.from({ length: 10 }, () => cjk[Math.floor(rand() * cjk.length)]).join('');
  else if (kind < 0.93) piece = pick(emoji) + ' ';
  else piece = String(Math.floor(rand() * 1e9)) + ' ';
  chunks.push(piece);
  size += piece.length;
}
const corpus = chunks.join('');
// Records are counted one at a time, so split the corpus into record-sized texts.
const records = [];
for (let i = 0; i < corpus.length; i += 2000) records.push(corpus.slice(i, i + 2000));

function time(label, fn) {
  const t0 = process.hrtime.bigint();
  const tokens = fn();
  const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
  return { label, seconds, tokens, charsPerSecond: corpus.length / seconds };
}

const reference = get_encoding(encoding);
const table = (await import(`js-tiktoken/ranks/${encoding}`)).default;
const plain = new Tiktoken(table);

const tLoad0 = process.hrtime.bigint();
const ours = await loadTokenCounter(encoding);
const loadSeconds = Number(process.hrtime.bigint() - tLoad0) / 1e9;

const results = [
  time('reference (tiktoken WASM)', () => records.reduce((n, r) => n + reference.encode_ordinary(r).length, 0)),
  time('js-tiktoken as shipped', () => records.reduce((n, r) => n + plain.encode(r, [], []).length, 0)),
  time('shardwise count, first pass', () => records.reduce((n, r) => n + ours.count(r), 0)),
  time('shardwise count, second pass', () => records.reduce((n, r) => n + ours.count(r), 0)),
];
reference.free();
rmSync(out, { recursive: true, force: true });

const ref = results[0];
console.log(`corpus: ${(corpus.length / 1e6).toFixed(1)} M chars in ${records.length} records, encoding ${encoding}`);
console.log(`shardwise rank table load: ${loadSeconds.toFixed(2)} s`);
for (const r of results) {
  console.log(
    `${r.label.padEnd(30)} ${(r.charsPerSecond / 1e6).toFixed(2).padStart(7)} M chars/s  ` +
      `ratio to reference ${(r.charsPerSecond / ref.charsPerSecond).toFixed(2)}  tokens ${r.tokens}`,
  );
}
// js-tiktoken as shipped may differ on rare white space; our counter must agree with the reference.
if (results[2].tokens !== ref.tokens || results[3].tokens !== ref.tokens) {
  console.error('token totals differ from the reference');
  process.exitCode = 1;
}
