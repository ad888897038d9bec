// Workbench tests: the packaged extension in the real VS Code workbench (code-server), driven by
// Chromium. Each step takes a screenshot into test-output/workbench/. Last line: "N passed, M failed".
import { createHash } from 'node:crypto';
import { cpSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { vsixForRun } from '../../scripts/package.mjs';
import { chromiumPath } from '../../scripts/workbench/ensure.mjs';
import { root } from '../../scripts/workbench/paths.mjs';
import { startCodeServer } from '../../scripts/workbench/server.mjs';
import { arrowFacts, jsonlFacts, parquetFacts, referenceTokenCount, shardBytes } from './oracle.mjs';
import { Workbench, countOf, launchBrowser, waitFor } from './workbench.mjs';
import { startUntrustedCodeServer } from './untrusted.mjs';

const outDir = join(root, 'test-output', 'workbench');
const demoDir = join(root, 'demo-data');
// The manifest as the workbench shows it: %key% strings resolved through package.nls.json.
const nls = JSON.parse(readFileSync(join(root, 'package.nls.json'), 'utf8'));
const manifest = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'), (_k, v) =>
  typeof v === 'string' && /^%[^%]+%$/.test(v) && nls[v.slice(1, -1)] !== undefined ? nls[v.slice(1, -1)] : v,
);

const results = [];
const cleanups = [];
let shotNo = 0;
let wb;

async function cleanup() {
  while (cleanups.length) await cleanups.pop()().catch((e) => console.error(`cleanup: ${e.message}`));
}
for (const sig of ['SIGINT', 'SIGTERM']) {
  process.on(sig, async () => {
    console.error(`\n${sig}: stopping the workbench`);
    await cleanup();
    process.exit(130);
  });
}

function assert(cond, message) {
  if (!cond) throw new Error(message);
}

/** Runs one check; a throw is a failure. Always leaves a screenshot of what the page showed. */
async function step(name, fn) {
  const t0 = Date.now();
  const shot = join(outDir, `${String(++shotNo).padStart(2, '0')}-${name.replace(/[^a-z0-9]+/gi, '-').toLowerCase()}.png`);
  try {
    await fn();
    const dialog = wb ? await wb.dismissDialog() : null;
    if (dialog) throw new Error(`the workbench showed a dialog: ${dialog}`);
    results.push({ name, ok: true });
    console.log(`  ✓ ${name} (${((Date.now() - t0) / 1000).toFixed(1)} s)`);
  } catch (e) {
    if (wb) await wb.screenshot(shot).catch(() => {});
    const dialog = wb ? await wb.dismissDialog().catch(() => null) : null;
    if (dialog && !e.message.includes(dialog)) e.message += `\n(the workbench showed a dialog: ${dialog})`;
    results.push({ name, ok: false, error: e.message });
    console.log(`  ✗ ${name} (${((Date.now() - t0) / 1000).toFixed(1)} s)\n      ${e.message.split('\n').join('\n      ')}`);
  }
  if (results[results.length - 1].ok && wb) await wb.screenshot(shot).catch(() => {});
}

/** Shards of the demo folder that the record view claims, by the custom editor's own selectors. */
function demoShards() {
  const editor = manifest.contributes?.customEditors?.find((e) => e.viewType === 'shardwise.recordView');
  assert(editor, 'package.json contributes no custom editor "shardwise.recordView"');
  const patterns = editor.selector.map((s) => new RegExp(`^${s.filenamePattern.replace(/[.+^${}()|[\]\\]/g, '\\$&').replace(/\*/g, '.*')}$`));
  return readdirSync(demoDir).filter((f) => patterns.some((re) => re.test(f))).sort();
}

async function expectedFacts(path) {
  const name = basename(path);
  if (/\.(jsonl|ndjson)(\.gz)?$/.test(name)) {
    const f = jsonlFacts(shardBytes(path));
    return { kind: 'jsonl', entries: f.entries, ...f };
  }
  if (name.endsWith('.parquet')) {
    const f = await parquetFacts(path);
    return { kind: 'parquet', entries: f.rows, firstRecord: f.firstRow };
  }
  if (/\.(arrow|feather|arrows)$/.test(name)) {
    const f = await arrowFacts(path);
    return { kind: 'arrow', entries: f.rows, firstRecord: f.firstRow };
  }
  return null;
}

/** Reads the record view's header and first rows. */
function readRecordView(frame) {
  return frame.evaluate(() => {
    const rows = [...document.querySelectorAll('.sw-rows .sw-row[data-entry]')].map((r) => ({
      entry: Number(r.dataset.entry),
      loading: r.classList.contains('sw-row-loading'),
      selected: r.classList.contains('sw-selected'),
      place: r.querySelector('[data-col="place"]')?.textContent ?? '',
      record: r.querySelector('[data-col="record"]')?.textContent ?? '',
      tokens: r.querySelector('[data-col="tokens"]')?.textContent ?? '',
      fields: Object.fromEntries([...r.querySelectorAll('[data-col="field"]')].map((c) => [c.dataset.field, c.textContent])),
      raw: r.querySelector('[data-col="raw"]')?.textContent ?? null,
    }));
    const indexing = document.querySelector('.sw-indexing');
    return {
      entriesText: document.querySelector('.sw-entries')?.textContent ?? '',
      complete: indexing ? indexing.hidden : false,
      banner: document.querySelector('.sw-banner')?.hidden === false ? document.querySelector('.sw-banner').textContent : null,
      detailTitle: document.querySelector('.sw-detail')?.hidden === false ? document.querySelector('.sw-detail-title')?.textContent ?? '' : null,
      rows,
    };
  });
}

function readPanel(frame) {
  return frame.evaluate(() => {
    const stat = (k) => document.querySelector(`[data-stat="${k}"] .sw-stat-value`)?.textContent ?? null;
    const sev = Object.fromEntries([...document.querySelectorAll('.sw-sev-toggle[data-severity]')].map((b) => [b.dataset.severity, b.querySelector('.sw-count')?.textContent ?? '']));
    return {
      fileName: document.querySelector('.sw-summary .sw-file-name')?.textContent ?? null,
      phase: [...(document.querySelector('.sw-phase')?.classList ?? [])].find((c) => c.startsWith('sw-phase-'))?.slice(9) ?? null,
      records: stat('records'), blankLines: stat('blankLines'), invalidLines: stat('invalidLines'),
      total: stat('total'), encoding: document.querySelector('.sw-encoding')?.textContent ?? null,
      severities: sev,
      findings: [...document.querySelectorAll('.sw-finding')].map((f) => ({
        id: f.dataset.id, rule: f.dataset.rule, severity: f.dataset.severity, place: f.querySelector('.sw-place')?.textContent ?? '',
        message: f.querySelector('.sw-message')?.textContent ?? '',
      })),
      empty: document.querySelector('.sw-empty')?.hidden === false ? document.querySelector('.sw-empty-text')?.textContent : null,
    };
  });
}

/** The Problems panel's group of a data file (its entries are filed under "<name> (Shardwise)") and its count. */
async function problemsGroup(name, timeoutMs = 20000) {
  await wb.runCommand('View: Focus Problems');
  const row = wb.page.locator('.markers-panel .monaco-list-row').filter({ hasText: `${name} (Shardwise)` }).first();
  await row.waitFor({ timeout: timeoutMs });
  return { row, count: countOf(await row.locator('.monaco-count-badge').first().innerText()) };
}

/** Sets the Problems panel's filter text (what its messages must hold; '' shows all). */
async function filterProblems(text) {
  await wb.runCommand('View: Focus Problems');
  const box = wb.page.locator('.part.panel input[placeholder^="Filter (e.g. text"]').first();
  await box.waitFor({ timeout: 10000 });
  await box.fill(text);
}

/** Activates (double-clicks) the first Problems entry whose text matches `re` (among those the filter text shows); returns its message and [Ln, Col]. */
async function activateProblem(re, filterText) {
  await filterProblems(filterText);
  const entry = wb.page.locator('.markers-panel .monaco-list-row').filter({ hasText: re }).first();
  await entry.waitFor({ timeout: 20000 });
  const text = (await entry.innerText()).replace(/\s+/g, ' ');
  const m = /\[Ln (\d+), Col (\d+)\]/.exec(text);
  assert(m, `the Problems entry "${text}" names no place`);
  await entry.dblclick();
  return { text, line: Number(m[1]), column: Number(m[2]), pointer: /\(at (\/[^)]*)\)/.exec(text)?.[1] ?? null };
}

/** Folds white space the way the record view's cells do, for comparing a value with its cell. */
const fold = (s) => String(s).replace(/\s+/g, ' ');

function expectFirstRecordShown(view, facts, name) {
  const firstEntry = facts.kind === 'jsonl' ? facts.firstRecordLine - 1 : 0;
  const record = facts.kind === 'jsonl' ? JSON.parse(facts.lines[firstEntry].replace(/^\uFEFF/, '')) : facts.firstRecord;
  const row = view.rows.find((r) => r.entry === firstEntry && !r.loading);
  assert(row, `${name}: the row of the first record (entry ${firstEntry}) is not shown`);
  const scalars = Object.entries(record ?? {}).filter(([, v]) => ['string', 'number', 'boolean'].includes(typeof v));
  assert(scalars.length > 0, `${name}: the first record has no scalar field to compare`);
  for (const [k, v] of scalars) {
    const cell = row.fields[k];
    assert(cell !== undefined, `${name}: no "${k}" column in the first row (columns: ${Object.keys(row.fields).join(', ')})`);
    const want = fold(v).slice(0, 120);
    assert(fold(cell).startsWith(want), `${name}: first record "${k}" shows ${JSON.stringify(cell.slice(0, 80))}, expected it to start with ${JSON.stringify(want.slice(0, 80))}`);
  }
  if (facts.kind === 'jsonl') assert(row.place.trim() === String(facts.firstRecordLine), `${name}: first record's place is "${row.place}", expected line ${facts.firstRecordLine}`);
}

async function panelFor(name, { done = true } = {}) {
  // The extension's own command shows its side panel (a webview view renders only once shown).
  const show = manifest.contributes.commands.find((c) => c.command === 'shardwise.showReport');
  assert(show, 'package.json contributes no shardwise.showReport command');
  await wb.runCommand(`${show.category}: ${show.title}`);
  const frame = await wb.panel(30000);
  return waitFor(`the side panel to show ${name}${done ? ' when done' : ''}`, async () => {
    const p = await readPanel(frame);
    return p.fileName === name && (!done || p.phase === 'done') ? { frame, p } : null;
  }, 120000);
}

/** Compares the Tokens column of the shown rows of a plain-text shard with the reference tokenizer. */
async function expectRowTokens(name, f, encoding) {
  await wb.openFromExplorer(name);
  const rv = await wb.recordView(name);
  const { p } = await panelFor(name);
  assert(p.encoding === encoding, `the panel counts with ${p.encoding}, expected ${encoding}`);
  await wb.page.keyboard.press('Escape');
  const view = await waitFor(`token counts in the rows of ${name}`, async () => {
    const v = await readRecordView(rv);
    const done = v.rows.filter((r) => !r.loading);
    // An uncounted row shows a placeholder (…) until its count arrives.
    return done.length >= 10 && done.every((r) => r.raw !== null || (r.tokens !== '' && r.tokens !== '…')) ? v : null;
  }, 30000);
  let compared = 0;
  for (const row of view.rows) {
    if (row.loading || row.raw !== null) continue;
    const line = Number(row.place);
    const value = JSON.parse(f.lines[line - 1]);
    // Only records whose text is plainly the "text" field: the first of the default text fields.
    if (!value || typeof value.text !== 'string' || 'messages' in value || 'conversations' in value || 'chosen' in value) continue;
    // Reference: the tiktoken npm package (OpenAI's tokenizer in WebAssembly).
    const want = await referenceTokenCount(value.text, encoding);
    assert(countOf(row.tokens) === want, `${name} line ${line}: ${row.tokens} tokens shown, ${encoding} reference gives ${want}`);
    compared++;
  }
  assert(compared >= 10, `only ${compared} rows of ${name} could be compared`);
}

async function main() {
  const t0 = Date.now();
  mkdirSync(outDir, { recursive: true });
  for (const f of readdirSync(outDir)) if (f.endsWith('.png')) rmSync(join(outDir, f));
  assert(existsSync(demoDir), `demo-data/ is missing: run \`node demo-data/generate.mjs\` (or the demo script) first`);
  const shards = demoShards();
  assert(shards.length > 0, 'demo-data/ holds no shard the record view opens');

  console.log('[workbench] packaging the extension …');
  const vsix = await vsixForRun();

  // A copy of the demo folder: settings changes made by the tests must not touch the committed files.
  const work = join(tmpdir(), `shardwise-demo-${process.pid}`);
  rmSync(work, { recursive: true, force: true });
  cpSync(demoDir, work, { recursive: true });
  cleanups.push(async () => rmSync(work, { recursive: true, force: true }));

  console.log('[workbench] starting code-server …');
  const server = await startCodeServer({ vsix, folder: work, log: (s) => console.log(`[workbench] ${s}`) });
  cleanups.push(server.stop);
  cleanups.push(async () => {
    const logs = join(outDir, 'logs');
    rmSync(logs, { recursive: true, force: true });
    mkdirSync(logs, { recursive: true });
    server.collectLogs(logs);
  });
  const { context, close } = await launchBrowser(chromiumPath());
  cleanups.push(close);
  const page = context.pages()[0] ?? (await context.newPage());
  wb = new Workbench(page);
  const tSetup = Date.now();
  console.log(`[workbench] ready in ${((tSetup - t0) / 1000).toFixed(1)} s at ${server.url}`);

  const facts = new Map();
  for (const s of shards) facts.set(s, await expectedFacts(join(work, s)));
  // Every data file's bytes and modification time before any view or command touches them.
  const fingerprint = (f) => `${createHash('sha256').update(readFileSync(join(work, f))).digest('hex')} ${statSync(join(work, f)).mtimeMs}`;
  const before = new Map(readdirSync(work).filter((f) => statSync(join(work, f)).isFile()).map((f) => [f, fingerprint(f)]));
  const containerTitle = manifest.contributes?.viewsContainers?.activitybar?.[0]?.title ?? 'Shardwise';

  await step('workbench loads with the Shardwise activity bar entry', async () => {
    await wb.open(server.url, work);
    await wb.activityItem(containerTitle).waitFor({ timeout: 60000 });
  });

  for (const name of shards) {
    await step(`record view shows the records of ${name}`, async () => {
      const f = facts.get(name);
      await wb.openFromExplorer(name);
      const frame = await wb.recordView(name, 60000);
      const view = await waitFor(`${name} to finish indexing with its first rows`, async () => {
        const v = await readRecordView(frame);
        return v.complete && v.rows.some((r) => !r.loading) ? v : null;
      }, 120000);
      assert(view.banner === null, `${name}: the record view shows an error: ${view.banner}`);
      // JSON Lines (jsonlines.org) for JSONL; hyparquet (Parquet) and apache-arrow (Arrow) as independent readers.
      assert(countOf(view.entriesText) === f.entries, `${name}: header says "${view.entriesText}", expected ${f.entries}`);
      expectFirstRecordShown(view, f, name);
    });
  }

  // Bad input: a Parquet shard cut in half loses its footer (Apache Parquet format: a file ends with
  // the footer length and the magic "PAR1"); the record view must say so clearly, not crash or hang.
  const parquetShard = shards.find((s) => s.endsWith('.parquet'));
  if (parquetShard) {
    const cut = `truncated-${parquetShard}`;
    const whole = readFileSync(join(work, parquetShard));
    writeFileSync(join(work, cut), whole.subarray(0, Math.floor(whole.length / 2)));
    await step(`a truncated Parquet shard shows a clear error (${cut})`, async () => {
      await waitFor(`${cut} in the explorer`, async () => (await wb.page.locator('.explorer-folders-view .label-name', { hasText: cut }).count()) > 0, 20000);
      await wb.openFromExplorer(cut);
      const frame = await wb.recordView(cut, 60000);
      // A clear message anywhere the user looks: the record view's error banner, or the side panel's
      // failed phase with its message, or an error finding there.
      const { frame: panel } = await panelFor(cut, { done: false });
      let seen = '';
      const banner = await waitFor(`an error message for ${cut}`, async () => {
        const v = await readRecordView(frame);
        if (v.banner && v.banner.trim().length > 10) return v.banner.trim();
        const p = await readPanel(panel);
        const failed = await panel.evaluate(() => document.querySelector('.sw-summary .sw-banner-text')?.textContent ?? null);
        seen = `record view: ${v.entriesText}, no banner; panel phase ${p.phase}, errors ${p.severities.error ?? '?'}`;
        if (failed && failed.trim().length > 10) return failed.trim();
        const err = p.findings.find((f) => f.severity === 'error' && /^read-/.test(f.rule ?? '') && f.message.trim().length > 10);
        return err ? `${err.rule}: ${err.message}` : null;
      }, 60000).catch((e) => { throw new Error(`${e.message}; last seen: ${seen}`); });
      assert(!/undefined|\[object Object\]/.test(banner), `the error message reads poorly: ${banner}`);
      console.log(`      message: ${banner.slice(0, 160)}`);
    });
  }

  // The chat shard with a JSON Schema mapped to it, and the JSONL shard with the most broken lines.
  const jsonl = shards.filter((s) => facts.get(s)?.kind === 'jsonl');
  // The JSONL shard with the most lines among those demo-data/.vscode/settings.json maps a JSON Schema to.
  const settingsFile = join(demoDir, '.vscode', 'settings.json');
  const schemaGlobs = existsSync(settingsFile) ? Object.keys(JSON.parse(readFileSync(settingsFile, 'utf8'))['shardwise.schemas'] ?? {}) : [];
  const globRe = (g) => new RegExp(`^${g.replace(/[.+^${}()|[\]\\]/g, '\\$&').replace(/\*\*\/?/g, '.*').replace(/(?<!\.)\*/g, '[^/]*')}$`);
  const mapped = jsonl.filter((s) => schemaGlobs.some((g) => globRe(g).test(s)));
  const chat = [...mapped].sort((a, b) => facts.get(b).entries - facts.get(a).entries)[0];
  const broken = [...jsonl].sort((a, b) => (facts.get(b).invalid + facts.get(b).blank) - (facts.get(a).invalid + facts.get(a).blank))[0];

  // A JSONL shard whose records carry their text in a "text" field.
  const textShard = jsonl.find((s) => {
    const f = facts.get(s);
    const sample = f.lines.slice(0, 50).map((l) => { try { return JSON.parse(l); } catch { return null; } });
    return sample.filter((v) => v && typeof v.text === 'string').length >= 40;
  });

  const encodingSetting = manifest.contributes?.configuration?.properties?.['shardwise.tokens.encoding'];
  const defaultEncoding = encodingSetting?.default;
  const otherEncoding = encodingSetting?.enum?.find((e) => e !== defaultEncoding);

  let schemaFinding = null;
  await step(`side panel summarises ${chat}`, async () => {
    assert(chat, 'no JSONL demo shard has a JSON Schema mapped in demo-data/.vscode/settings.json ("shardwise.schemas")');
    await wb.openFromExplorer(chat);
    await wb.recordView(chat);
    const { p } = await panelFor(chat);
    const f = facts.get(chat);
    // Records, blank and invalid lines by the JSON Lines rules with JSON.parse as the RFC 8259 parser.
    assert(countOf(p.records) === f.records, `records: panel ${p.records}, expected ${f.records}`);
    assert(countOf(p.blankLines) === f.blank, `blank lines: panel ${p.blankLines}, expected ${f.blank}`);
    assert(countOf(p.invalidLines) === f.invalid, `invalid lines: panel ${p.invalidLines}, expected ${f.invalid}`);
    assert(countOf(p.total) > 0, `token total is "${p.total}"`);
  });

  await step(`clicking a schema finding selects its record in ${chat}`, async () => {
    const { frame } = await panelFor(chat);
    await frame.locator('.sw-filter-text').fill('schema-violation');
    const item = frame.locator('.sw-finding[data-rule="schema-violation"]').first();
    await item.waitFor({ timeout: 15000 }).catch(() => { throw new Error('the panel lists no schema-violation finding (is a JSON Schema mapped in demo-data/.vscode/settings.json?)'); });
    const place = (await item.locator('.sw-place').innerText()).trim();
    const m = /^(\d+):(\d+)$/.exec(place);
    assert(m, `schema finding place "${place}" is not line:column`);
    schemaFinding = { line: Number(m[1]), column: Number(m[2]), message: await item.locator('.sw-message').innerText() };
    const lineText = facts.get(chat).lines[schemaFinding.line - 1];
    assert(lineText !== undefined, `the finding names line ${schemaFinding.line}, beyond the file`);
    // RFC 8259: the reported line must hold a JSON value for a schema to apply to it.
    JSON.parse(lineText.replace(/^\uFEFF/, ''));
    await item.click();
    const rv = await wb.recordView(chat);
    const view = await waitFor(`record view to select line ${schemaFinding.line}`, async () => {
      const v = await readRecordView(rv);
      const sel = v.rows.find((r) => r.selected);
      return sel && sel.place.trim() === String(schemaFinding.line) && v.detailTitle !== null ? v : null;
    }, 20000);
    assert(view.detailTitle.includes(String(schemaFinding.line)), `detail title "${view.detailTitle}" does not name line ${schemaFinding.line}`);
  });

  await step(`"open at line" puts the cursor at the finding's line:column`, async () => {
    assert(schemaFinding, 'no schema finding from the previous step');
    const { frame } = await panelFor(chat);
    await frame.locator('.sw-filter-text').fill('schema-violation');
    // The shard's entries in Problems before the text opens (they must stay: the record view stays open).
    const before = await waitFor(`${chat}'s entries in Problems`, async () => {
      const g = await problemsGroup(chat);
      return g.count > 0 ? g.count : null;
    }, 20000);
    const { frame: panelAgain } = await panelFor(chat);
    await panelAgain.locator('.sw-filter-text').fill('schema-violation');
    await panelAgain.locator('.sw-finding[data-rule="schema-violation"] .sw-open-text').first().click();
    let seen = '';
    const at = await waitFor('the text editor with its cursor placed', async () => {
      const tab = await wb.activeTab().catch((e) => `(no tab: ${e.message.split('\n')[0]})`);
      const kind = await wb.activeEditorKind();
      const c = await wb.cursor().catch(() => null);
      seen = `tab ${JSON.stringify(tab)}, ${kind} editor, cursor ${c ? c.text : 'not shown'}`;
      return tab.replace(/\s+/g, "").includes(chat) && kind === 'text' && c && c.line === schemaFinding.line ? c : null;
    }, 20000).catch((e) => { throw new Error(`${e.message}; last seen: ${seen}`); });
    assert(at.column === schemaFinding.column, `cursor at ${at.line}:${at.column}, finding says ${schemaFinding.line}:${schemaFinding.column}`);
    // RFC 8259 §2–§7: a value or member name starts with one of these characters.
    const ch = facts.get(chat).lines[at.line - 1][at.column - 1];
    assert(ch !== undefined && /["{[\-0-9tfn]/.test(ch), `the cursor is not at the start of a JSON value or name (found ${JSON.stringify(ch)})`);
    // The record view is still open beside the text (its tab is not replaced), and its findings still count.
    await wb.recordView(chat, 10000);
    const after = (await problemsGroup(chat)).count;
    assert(after === before, `Problems counted ${before} entries for ${chat} before the text opened, ${after} after`);
    await wb.recordView(chat, 10000);
    // Leave the panel unfiltered for the next shards' screenshots.
    await (await panelFor(chat)).frame.locator('.sw-filter-text').fill('');
  });

  /**
   * Closes every editor and waits until Problems lists no other shard's entries (but those of
   * the chat shard, whose text document the workbench may keep open a while after "open at line").
   */
  const onlyShard = async (name) => {
    await wb.runCommand('View: Close All Editors');
    await waitFor('Problems to list no other shard', async () => {
      await wb.runCommand('View: Focus Problems');
      const groups = await wb.page.locator('.markers-panel .monaco-list-row').filter({ hasText: '(Shardwise)' }).allInnerTexts();
      return groups.every((g) => g.startsWith(`${name} (Shardwise)`) || g.startsWith(`${chat} (Shardwise)`));
    }, 30000);
    await wb.openFromExplorer(name);
    const frame = await wb.recordView(name, 60000);
    await panelFor(name);
    return frame;
  };

  /** Waits for the record view of `name` (found afresh each time: a hidden view reloads) to select the row shown as `place`. */
  const selectedIn = (name, place) =>
    waitFor(`the record view of ${name} to select ${place}`, async () => {
      const frame = await wb.recordView(name, 5000);
      const v = await readRecordView(frame);
      const s = v.rows.find((r) => r.selected && !r.loading);
      return s && s.place.trim() === place && v.detailTitle !== null ? { v, frame } : null;
    }, 20000).catch(async (e) => {
      const v = await readRecordView(await wb.recordView(name, 5000)).catch(() => null);
      throw new Error(`${e.message}; selected: ${v?.rows.find((r) => r.selected)?.place ?? 'none'}`);
    });

  await step(`a Problems entry of ${chat} selects its record in the record view and reveals the field`, async () => {
    await onlyShard(chat);
    try {
      const hit = await activateProblem(/\(at \/[^)]+\)/, '(at ');
      const { v, frame } = await selectedIn(chat, String(hit.line));
      assert(v.detailTitle.includes(String(hit.line)), `detail title "${v.detailTitle}" does not name line ${hit.line}`);
      // RFC 6901: the revealed node's pointer is the finding's pointer or its nearest shown parent.
      const revealed = await waitFor('the revealed field', () => frame.evaluate(() => document.querySelector('.sw-node-revealed')?.dataset.pointer ?? null), 10000);
      assert(hit.pointer.startsWith(revealed), `the detail reveals ${revealed}, the entry names ${hit.pointer}`);
      // Still the record view: no text editor took its place.
      const tab = (await wb.activeTab()).replace(/\s+/g, '');
      assert(tab.includes(chat) && (await wb.activeEditorKind()) === 'other', `the active editor is ${tab} (${await wb.activeEditorKind()})`);
    } finally {
      await filterProblems('');
    }
  });

  const columnar = shards.find((s) => s.endsWith('.parquet'));
  if (columnar) {
    await step(`a Problems entry of a row of ${columnar} selects that row in the record view`, async () => {
      await onlyShard(columnar);
      try {
        const hit = await activateProblem(/row \d+: /, 'row ');
        const row = /row (\d+):/.exec(hit.text)[1];
        assert(Number(row) === hit.line, `the entry names row ${row} at Ln ${hit.line}`);
        await selectedIn(columnar, `row ${row}`);
      } finally {
        await filterProblems('');
      }
    });
  }

  await step(`Problems panel counts the findings of ${broken}`, async () => {
    assert(broken && facts.get(broken).invalid + facts.get(broken).blank > 0, 'no JSONL demo shard has a broken line');
    await wb.openFromExplorer(broken);
    await wb.recordView(broken);
    const { p } = await panelFor(broken);
    const panelTotal = Object.values(p.severities).reduce((a, b) => a + (countOf(b) || 0), 0);
    const max = manifest.contributes?.configuration?.properties?.['shardwise.problems.max']?.default ?? Infinity;
    const shown = (await problemsGroup(broken)).count;
    assert(shown === Math.min(panelTotal, max), `Problems shows ${shown} for ${broken}, the side panel ${panelTotal}`);
    const f = facts.get(broken);
    // JSON Lines: every blank line and every line JSON.parse rejects is at least one finding.
    assert(shown >= Math.min(f.invalid + f.blank, max), `Problems shows ${shown}, fewer than the ${f.invalid} invalid and ${f.blank} blank lines`);
  });

  // One place model (engine/places.ts): what a person types names what the view shows, 1-based.
  const selectedRow = (frame, want, what) =>
    waitFor(what, async () => {
      const v = await readRecordView(frame);
      const sel = v.rows.find((r) => r.selected && !r.loading);
      return sel && want(sel) ? sel : null;
    }, 20000);

  await step(`typing 12 in the record view's box selects the record shown as #12 in ${chat}`, async () => {
    await wb.openFromExplorer(chat);
    const frame = await wb.recordView(chat);
    await frame.locator('.sw-goto-input').fill('12');
    await frame.locator('.sw-goto-input').press('Enter');
    const sel = await selectedRow(frame, (r) => r.record.trim() === '12', 'the row of record #12 to be selected');
    // RFC 8259 / JSON Lines as the oracle: the 12th line that JSON.parse accepts is record #12.
    let seen = 0;
    const line = facts.get(chat).lines.findIndex((l) => {
      try {
        JSON.parse(l.replace(/^\uFEFF/, ''));
        return ++seen === 12;
      } catch {
        return false;
      }
    }) + 1;
    assert(sel.place.trim() === String(line), `record #12 is shown on line ${sel.place}, expected line ${line}`);
  });

  await step(`typing 12 in the palette's Go to selects the record shown as #12 in ${chat}`, async () => {
    const frame = await wb.recordView(chat);
    await frame.locator('.sw-goto-input').fill('1');
    await frame.locator('.sw-goto-input').press('Enter');
    await selectedRow(frame, (r) => r.record.trim() === '1', 'record #1 to be selected first');
    await wb.runCommand('Shardwise: Go to Record, Line or Row…');
    const input = wb.page.locator('.quick-input-widget input.input');
    await input.waitFor({ timeout: 10000 });
    await input.fill('12');
    await input.press('Enter');
    await selectedRow(frame, (r) => r.record.trim() === '12', 'the palette to select record #12');
  });

  const rowShard = shards.find((s) => s.endsWith('.parquet')) ?? shards.find((s) => s.endsWith('.arrow'));
  if (rowShard) {
    await step(`"row 7" in the box and in the palette selects the row shown as row 7 in ${rowShard}`, async () => {
      await wb.openFromExplorer(rowShard);
      const frame = await wb.recordView(rowShard, 60000);
      await frame.locator('.sw-goto-input').fill('row 7');
      await frame.locator('.sw-goto-input').press('Enter');
      await selectedRow(frame, (r) => r.place.trim() === 'row 7' && r.record.trim() === '7', 'the row shown as row 7 to be selected');
      await frame.locator('.sw-goto-input').fill('row 1');
      await frame.locator('.sw-goto-input').press('Enter');
      await selectedRow(frame, (r) => r.place.trim() === 'row 1', 'row 1 to be selected');
      await wb.runCommand('Shardwise: Go to Record, Line or Row…');
      const input = wb.page.locator('.quick-input-widget input.input');
      await input.waitFor({ timeout: 10000 });
      await input.fill('row 7');
      await input.press('Enter');
      await selectedRow(frame, (r) => r.place.trim() === 'row 7', 'the palette to select row 7');
    });
  }

  // Search, sort and filter over the whole shard (in the reading worker), through the view's controls.
  await step('search finds a string planted in three records, and the count says 3', async () => {
    const planted = 'planted-search.jsonl';
    const lines = [];
    for (let i = 0; i < 60; i++) {
      const hit = i === 4 || i === 31 || i === 58;
      lines.push(JSON.stringify({ id: `ps-${i}`, messages: [{ role: 'user', content: hit ? `Is a bent hanger-XQ7 fixable? (${i})` : `How do I index gears? (${i})` }, { role: 'assistant', content: 'Yes, with an alignment gauge.' }] }));
    }
    writeFileSync(join(work, planted), lines.join('\n') + '\n');
    await wb.openFromExplorer(planted);
    const frame = await wb.recordView(planted, 60000);
    await waitFor(`${planted} to be indexed`, async () => ((await readRecordView(frame)).complete ? true : null), 60000);
    await frame.locator('.sw-search-input').fill('hanger-xq7');
    await frame.locator('.sw-search-input').press('Enter');
    const v = await waitFor('the view to show the matching records', async () => {
      const r = await readRecordView(frame);
      const chip = await frame.locator('.sw-view-chip').innerText().catch(() => '');
      return /^3 records/.test(chip) && r.rows.filter((x) => !x.loading).length === 3 ? r : null;
    }, 30000);
    // Independent count: the lines of the file holding the text, case-insensitively.
    const want = lines.map((l, i) => (l.toLowerCase().includes('hanger-xq7') ? String(i + 1) : null)).filter(Boolean);
    assert(JSON.stringify(v.rows.map((r) => r.place.trim())) === JSON.stringify(want), `matching rows are on lines ${v.rows.map((r) => r.place).join(', ')}, expected ${want.join(', ')}`);
    assert(/3 of 60 lines/.test(v.entriesText), `the header says "${v.entriesText}"`);
  });

  await step(`sort by tokens puts the longest record of ${chat} first, with the panel's maximum`, async () => {
    await wb.openFromExplorer(chat);
    const frame = await wb.recordView(chat);
    const { frame: panelFrame } = await panelFor(chat);
    const panelMax = countOf(await panelFrame.locator('[data-stat="max"] .sw-stat-value').innerText());
    assert(panelMax > 0, 'the panel shows no maximum');
    await frame.locator('.sw-row-head [data-col="tokens"]').click();
    const first = await waitFor('the longest record on top', async () => {
      const r = await readRecordView(frame);
      const top = r.rows.find((x) => x.entry === 0 && !x.loading);
      return top && countOf(top.tokens) === panelMax ? top : null;
    }, 30000);
    assert(countOf(first.tokens) === panelMax, `the first row has ${first.tokens} tokens, the panel's maximum is ${panelMax}`);
    await frame.locator('.sw-view-clear').click();
  });

  await step(`a rule filter shows exactly the records of that rule in ${chat}`, async () => {
    const frame = await wb.recordView(chat);
    const { frame: panel } = await panelFor(chat);
    const places = await panel.locator('.sw-finding[data-rule="schema-violation"] .sw-place').allInnerTexts();
    assert(places.length > 0, 'the panel lists no schema-violation finding');
    const want = [...new Set(places.map((x) => x.trim().split(':')[0]))].sort((a, b) => a - b);
    await frame.locator('.sw-filter').selectOption('rule');
    const item = wb.page.locator('.quick-input-widget .monaco-list-row').filter({ hasText: 'schema-violation' }).first();
    await item.waitFor({ timeout: 15000 });
    await item.click();
    const got = await waitFor('the rule filter', async () => {
      const r = await readRecordView(frame);
      const rows = r.rows.filter((x) => !x.loading);
      return rows.length === want.length ? rows.map((x) => x.place.trim()) : null;
    }, 30000).catch(async () => (await readRecordView(frame)).rows.map((x) => x.place.trim()));
    assert(JSON.stringify(got) === JSON.stringify(want), `the filter shows lines ${got.join(', ')}, the panel's schema-violation findings are on lines ${want.join(', ')}`);
    await frame.locator('.sw-view-clear').click();
  });

  await step(`reopening a checked shard (${chat}) shows its report at once, without a new check`, async () => {
    await wb.runCommand('View: Close All Editors');
    // A shard stays ready for 5 s after its last record view closes (a view replaced by a moment's
    // preview comes back as it was, src/host/shardDocument.ts): past that, reopening reads the store.
    await new Promise((r) => setTimeout(r, 6000));
    await wb.openFromExplorer(chat);
    await wb.recordView(chat);
    const { frame } = await panelFor(chat, { done: false });
    // The report kept from the earlier check: final at once, and it says where it came from.
    const text = await waitFor('the kept report', async () => {
      const t = await frame.locator('.sw-progress-text').innerText().catch(() => '');
      return /kept from an earlier check/.test(t) ? t : null;
    }, 15000);
    assert(/checked: [\d,]+ records/.test(text), `the panel says "${text}"`);
    const p = await readPanel(frame);
    assert(p.phase === 'done', `the panel's phase is ${p.phase}`);
  });

  await step(`token counts of ${textShard} rows match the ${defaultEncoding} reference`, async () => {
    assert(textShard, 'no JSONL demo shard keeps its text in a "text" field');
    await expectRowTokens(textShard, facts.get(textShard), defaultEncoding);
  });

  await step('changing the token encoding from the command palette changes the token totals', async () => {
    await wb.openFromExplorer(chat);
    await wb.recordView(chat);
    const before = (await panelFor(chat)).p;
    const next = otherEncoding;
    assert(before.encoding === defaultEncoding && next, `the panel counts with ${before.encoding}; expected ${defaultEncoding} and another encoding to switch to`);
    const cmd = manifest.contributes.commands.find((c) => c.command === 'shardwise.chooseEncoding');
    assert(cmd, 'package.json contributes no shardwise.chooseEncoding command');
    await wb.runCommand(`${cmd.category}: ${cmd.title}`, { pick: next });
    const after = await waitFor(`the panel to count tokens with ${next}`, async () => {
      const { frame } = await panelFor(chat, { done: false });
      const p = await readPanel(frame);
      return p.encoding === next && p.phase === 'done' ? p : null;
    }, 120000);
    assert(countOf(after.total) > 0 && countOf(after.total) !== countOf(before.total),
      `token total ${before.total} (${before.encoding}) → ${after.total} (${next}): expected a different positive total`);
  });

  await step(`token counts of ${textShard} rows match the ${otherEncoding} reference after the change`, async () => {
    assert(textShard, 'no JSONL demo shard keeps its text in a "text" field');
    await expectRowTokens(textShard, facts.get(textShard), otherEncoding);
  });

  await step('nothing written: every data file has the bytes and modification time it had before the run', async () => {
    await wb.runCommand('View: Close All Editors');
    const changed = [...before].filter(([f, fp]) => !existsSync(join(work, f)) || fingerprint(f) !== fp).map(([f]) => f);
    assert(changed.length === 0, `changed by the views and commands: ${changed.join(', ')}`);
    assert(before.size >= shards.length, `only ${before.size} files were fingerprinted`);
  });

  await step(`a new context length for ${chat} is answered from the kept token counts, as a new check answers it`, async () => {
    await wb.openFromExplorer(chat);
    await wb.recordView(chat);
    const { frame } = await panelFor(chat);
    const p50 = countOf(await frame.locator('[data-stat="p50"] .sw-stat-value').innerText());
    assert(p50 > 0, 'the panel shows no p50');
    const overOf = async () => {
      const m = /Over ([\d.,\s\u202f]+) tokens: ([\d.,\s\u202f]+) record/.exec(await frame.locator('[data-stat="overContext"]').innerText());
      return m ? { length: countOf(m[1]), records: countOf(m[2]) } : null;
    };
    const title = (id) => { const c = manifest.contributes.commands.find((x) => x.command === id); assert(c, `package.json contributes no ${id}`); return `${c.category}: ${c.title}`; };
    // The demo's project file (shardwise.json) sets the context length, and wins over VS Code's
    // settings: the new length goes there, as a person edits it (after the step proving no data file was written).
    const project = join(work, 'shardwise.json');
    writeFileSync(project, JSON.stringify({ ...JSON.parse(readFileSync(project, 'utf8')), tokens: { contextLength: p50 } }, null, 2));
    const fromKept = await waitFor(`the over-context count at ${p50} tokens from the kept counts`, async () => {
      const t = await frame.locator('.sw-progress-text').innerText().catch(() => '');
      const o = await overOf();
      return /kept token counts were used/.test(t) && o && o.length === p50 ? o : null;
    }, 30000);
    // Nearest-rank p50: at most half the records are longer than it, and some are (the demo's lengths vary).
    assert(fromKept.records > 0, `no record is over the shard's p50 (${p50})`);
    // The reference: the whole shard checked again at that length, every record tokenised anew.
    await wb.runCommand(title('shardwise.checkAgain'));
    const fresh = await waitFor('the new check at the same length', async () => {
      const t = await frame.locator('.sw-progress-text').innerText().catch(() => '');
      const p = await readPanel(frame);
      const o = await overOf();
      return p.phase === 'done' && !/kept token counts/.test(t) && o ? o : null;
    }, 120000);
    assert(fresh.records === fromKept.records && fresh.length === p50, `from the kept counts ${fromKept.records} records over ${p50}, a new check says ${fresh.records} over ${fresh.length}`);
  });

  // Restricted Mode (VS Code's workspace trust): a second workbench on a fresh copy of the demo
  // folder, trust on and the folder not trusted. The manifest declares the extension as working in
  // limited form there, with the settings that point at files as restricted configurations.
  await step(`in Restricted Mode ${chat} opens and reads, its workspace schema waits for trust, and the view says so with a Manage link`, async () => {
    const restricted = manifest.capabilities?.untrustedWorkspaces?.restrictedConfigurations ?? [];
    assert(manifest.capabilities?.untrustedWorkspaces?.supported === 'limited' && restricted.includes('shardwise.schemas'), 'the manifest does not declare limited support with shardwise.schemas restricted');
    assert(schemaFinding, 'the trusted run found no schema finding to compare with');
    const copy = join(tmpdir(), `shardwise-untrusted-demo-${process.pid}`);
    rmSync(copy, { recursive: true, force: true });
    cpSync(demoDir, copy, { recursive: true });
    // Removed by the run's cleanup too, should the server below not start.
    cleanups.push(async () => rmSync(copy, { recursive: true, force: true }));
    const srv = await startUntrustedCodeServer({ vsix, folder: copy, log: (x) => console.log(`[workbench] ${x}`) });
    const page2 = await context.newPage();
    const main = wb;
    wb = new Workbench(page2);
    try {
      await wb.open(srv.url, copy);
      // The workbench's own sign that the folder is not trusted.
      await page2.locator('.part.statusbar .statusbar-item', { hasText: 'Restricted Mode' }).first().waitFor({ timeout: 60000 });
      await wb.activityItem(containerTitle).waitFor({ timeout: 60000 });
      await wb.openFromExplorer(chat);
      const frame = await wb.recordView(chat, 60000);
      const view = await waitFor(`${chat} to be indexed in Restricted Mode`, async () => {
        const v = await readRecordView(frame);
        return v.complete && v.rows.some((r) => !r.loading) ? v : null;
      }, 120000);
      assert(countOf(view.entriesText) === facts.get(chat).entries, `header says "${view.entriesText}", expected ${facts.get(chat).entries}`);
      expectFirstRecordShown(view, facts.get(chat), chat);
      const note = await waitFor('the trust note', async () => {
        const t = await frame.evaluate(() => { const n = document.querySelector('.sw-notice'); return n && !n.hidden ? n.textContent : null; });
        // The settings' note names shardwise.schemas; the project file's note names its schemas.
        return t && /schemas/.test(t) ? t : null;
      }, 20000).catch(async (e) => {
        await page2.screenshot({ path: join(outDir, 'restricted-mode-failure.png') }).catch(() => {});
        const seen = await frame.evaluate(() => ({ notice: document.querySelector('.sw-notice')?.outerHTML.slice(0, 300), banner: document.querySelector('.sw-banner')?.textContent }));
        throw new Error(`${e.message}; the view shows ${JSON.stringify(seen)}`);
      });
      assert(/not trusted/.test(note), `the note says "${note}"`);
      // The schema from the folder's settings is not applied: the check finds no schema violation.
      const { frame: panel } = await panelFor(chat);
      const schemaGroups = await panel.locator('.sw-group-head[data-rule="schema-violation"], .sw-finding[data-rule="schema-violation"]').count();
      assert(schemaGroups === 0, `the panel lists schema-violation findings in Restricted Mode (${schemaGroups})`);
      const checked = await panel.locator('.sw-group-head, .sw-finding').count();
      assert(checked > 0, 'the panel lists no finding at all in Restricted Mode: was the shard checked?');
      // The note's link opens the workbench's trust editor.
      await frame.locator('.sw-notice .sw-link').click();
      let seenTab = '';
      await waitFor('the Workspace Trust editor', async () => {
        seenTab = (await wb.activeTab().catch(() => '')).replace(/\s+/g, ' ');
        return /Workspace\s*Trust/i.test(seenTab) || (await page2.locator('.workspace-trust-editor').count()) > 0;
      }, 20000).catch(async (e) => {
        await page2.screenshot({ path: join(outDir, 'restricted-mode-failure.png') }).catch(() => {});
        throw new Error(`${e.message}; the active tab is "${seenTab}"`);
      });
    } finally {
      wb = main;
      await page2.close().catch(() => {});
      await srv.stop();
      rmSync(copy, { recursive: true, force: true });
    }
  });

  const tEnd = Date.now();
  const noise = wb.consoleErrors.length;
  console.log(`[workbench] setup ${((tSetup - t0) / 1000).toFixed(1)} s, checks ${((tEnd - tSetup) / 1000).toFixed(1)} s; ${noise} console errors ignored; screenshots in ${outDir}`);
  writeFileSync(join(outDir, 'console-errors.txt'), wb.consoleErrors.join('\n'));
}

let fatal = null;
try {
  await main();
} catch (e) {
  fatal = e;
  results.push({ name: 'workbench setup', ok: false, error: e.message });
  console.log(`  ✗ workbench setup\n      ${e.message.split('\n').join('\n      ')}`);
  if (wb) await wb.screenshot(join(outDir, 'setup-failure.png')).catch(() => {});
} finally {
  await cleanup();
}
const passed = results.filter((r) => r.ok).length;
const failed = results.length - passed;
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed || fatal ? 1 : 0);
