// @ts-check
// The scripted host side of the webview tests: protocol messages a host would send for a large
// JSONL shard of chat records, including deliberately hostile text. Typed against src/protocol.ts
// (the types layer checks this file), so a message the host no longer sends fails the build.

/** @typedef {import('../../src/protocol.js').HostToRecordView} HostToRecordView */
/** @typedef {import('../../src/protocol.js').RecordViewToHost} RecordViewToHost */
/** @typedef {import('../../src/protocol.js').HostToPanel} HostToPanel */
/** @typedef {Extract<HostToRecordView, { type: 'init' }>} InitMessage */
/** @typedef {Extract<HostToPanel, { type: 'state' }>} PanelState */

export const HOSTILE = [
  '<script>window.__pwned=1</script>',
  '<img src=x onerror="window.__pwned=1">',
  '"><svg onload="window.__pwned=1">',
];
export const HOSTILE_TEXT = HOSTILE.join(' ');

/** @type {import('../../src/protocol.js').ColumnInfo[]} */
export const COLUMNS = [
  { name: 'id', type: 'string' },
  { name: 'messages', type: 'list<struct<role: string, content: string>>' },
  { name: 'source', type: 'string' },
];

/** The format traits the host sends (src/engine/sources/traits.ts), by format. */
/** @type {Record<string, import('../../src/protocol.js').FormatTraits>} */
const TRAITS = {
  jsonl: { textual: true, oneLinePerEntry: true, entries: 'lines', group: null, wasmMemory: false },
  'json-array': { textual: true, oneLinePerEntry: false, entries: 'lines', group: null, wasmMemory: false },
  parquet: { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'row group', many: 'row groups' }, wasmMemory: true },
  'arrow-file': { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
  'arrow-stream': { textual: false, oneLinePerEntry: false, entries: 'rows', group: { one: 'batch', many: 'batches' }, wasmMemory: false },
};

/**
 * @param {number} entries
 * @param {Partial<InitMessage>} [overrides]
 * @returns {InitMessage}
 */
export function initMessage(entries, overrides = {}) {
  const format = overrides.format ?? 'jsonl';
  return {
    type: 'init',
    fileName: 'workshop-chats.jsonl',
    format,
    sizeBytes: entries * 612,
    columns: COLUMNS,
    facts: { compression: 'none', encoding: 'cl100k_base' },
    entries,
    complete: true,
    traits: TRAITS[format],
    ...overrides,
  };
}

/**
 * Every entry's row, computed from its index so a test can say what a row must show.
 * @param {number} e
 * @returns {import('../../src/protocol.js').RowView}
 */
export function rowFor(e) {
  const blank = e % 1000 === 999;
  const severity = blank ? 'warning' : e % 25 === 7 ? 'error' : e % 10 === 3 ? 'info' : null;
  /** @type {import('../../src/protocol.js').RowView} */
  const row = {
    entry: e,
    record: blank ? null : e - Math.floor(e / 1000),
    place: String(e + 1),
    line: e + 1,
    tokens: blank ? null : 20 + ((e * 37) % 900),
    severity,
    findingCount: severity ? 1 + (e % 3) : 0,
    cells: blank ? {} : { id: `chat-${e}`, messages: `[{"role":"user","content":"my chain skips on gear ${e % 11}"}…`, source: 'counter' },
  };
  if (blank) row.raw = '';
  return row;
}

/**
 * @param {Extract<RecordViewToHost, { type: 'requestRows' }>} m
 * @returns {Extract<HostToRecordView, { type: 'rows' }>}
 */
export function rowsAnswer(m) {
  const rows = [];
  for (let e = m.start; e < m.start + m.count; e++) rows.push(rowFor(e));
  return { type: 'rows', requestId: m.requestId, start: m.start, rows };
}

export const TURNS = [
  { role: 'system', content: 'You are the repair desk assistant of a volunteer bicycle workshop.', tokens: 14 },
  { role: 'user', content: 'My rear derailleur clicks twice\nbut the chain only moves once.', tokens: 15 },
  { role: 'assistant', content: 'Check the cable tension: turn the barrel adjuster a quarter turn anticlockwise.', tokens: 19 },
  { role: 'user', content: 'Done, it shifts cleanly now.', tokens: 8 },
];

/**
 * @param {number} entry
 * @param {Partial<import('../../src/protocol.js').DetailView>} [extra]
 * @returns {import('../../src/protocol.js').DetailView}
 */
export function chatDetail(entry, extra = {}) {
  const value = {
    id: `chat-${entry}`,
    messages: TURNS.map(({ role, content }) => ({ role, content })),
    'a/b~c': { nested: [1, 2, { deep: true }] },
    source: 'counter',
  };
  return {
    entry,
    record: entry,
    place: String(entry + 1),
    value,
    truncated: false,
    turns: TURNS.map((t, i) => ({ index: i, role: t.role, content: t.content, tokens: t.tokens, pointer: `/messages/${i}` })),
    tokens: TURNS.reduce((s, t) => s + t.tokens, 0),
    findings: [
      {
        id: 41,
        rule: 'chat-role-repeated',
        family: 'chat',
        severity: 'warning',
        message: 'Two user turns in a row',
        record: entry,
        line: entry + 1,
        column: 14,
        pointer: '/messages/3',
        entry,
        place: `${entry + 1}:14`,
      },
    ],
    ...extra,
  };
}

/**
 * A host that pages rows and answers detail requests with a chat record.
 * @param {{ detailFor?: (entry: number) => import('../../src/protocol.js').DetailView }} [options]
 * @returns {(m: RecordViewToHost, view: { send(m: HostToRecordView): Promise<void> }) => Promise<void>}
 */
export function scriptedHost({ detailFor = chatDetail } = {}) {
  return async (m, view) => {
    if (m.type === 'requestRows') await view.send(rowsAnswer(m));
    else if (m.type === 'requestDetail') {
      const d = detailFor(m.entry);
      if (m.reveal !== undefined) d.reveal = m.reveal;
      await view.send({ type: 'detail', detail: d });
    }
  };
}

/**
 * @param {number} id
 * @param {import('../../src/protocol.js').Severity} severity
 * @param {string} rule
 * @param {string} message
 * @param {number} entry
 * @returns {import('../../src/protocol.js').FindingView}
 */
export function finding(id, severity, rule, message, entry) {
  return {
    id,
    rule,
    family: 'chat',
    severity,
    message,
    record: entry,
    line: entry + 1,
    column: 1,
    pointer: '',
    entry,
    place: `${entry + 1}:1`,
  };
}

/**
 * @param {Partial<PanelState>} [overrides]
 * @returns {PanelState}
 */
export function panelState(overrides = {}) {
  const findings = [
    finding(1, 'error', 'json-syntax', 'Expected a value after the comma', 12),
    finding(2, 'warning', 'chat-role-repeated', 'Two assistant turns in a row', 40),
    finding(3, 'info', 'tokens-over-context', 'Record uses 91% of the context length', 77),
    finding(4, 'warning', 'line-blank', 'Blank line between records', 118),
  ];
  return {
    type: 'state',
    summary: {
      path: '/data/workshop-chats.jsonl',
      fileName: 'workshop-chats.jsonl',
      format: 'jsonl',
      sizeBytes: 4_812_331,
      entries: 5120,
      records: 5117,
      blankLines: 2,
      invalidLines: 1,
      tokens: { encoding: 'cl100k_base', tokenizer: 'cl100k_base', total: 1_734_220, prompt: 602_118, response: 1_132_102, max: 9210, p50: 302, p90: 811, p99: 2402, contextLength: 8192, overContext: 3 },
      layout: { id: 'turns', share: 0.9981 },
      findingsBySeverity: { error: 1, warning: 2, info: 1 },
      phase: 'done',
      progress: 1,
    },
    findings,
    totalFindings: findings.length,
    ...overrides,
  };
}
