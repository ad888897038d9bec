// The layout family: a record that fits another layout than its shard's, what each layout's own
// reading found (an instruction without output, a label that is not a boolean), tool calls whose
// arguments are not JSON, content parts of an unknown type, and media that do not add up.

import type { CheckConfig } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import { LAYOUT_IDS, LAYOUT_RULES, readRecord, shardLayoutId, type RecordReading } from '../layouts/index.js';
import type { LayoutFields } from '../layouts/layout.js';
import { isRelativePath, relativeFileExists } from '../sources/files.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';

const OWN_RULES: RuleInfo[] = [
  { id: 'tool-arguments-invalid', family: 'chat', severity: 'error', summary: "A tool call's arguments are a string that is not valid JSON." },
  { id: 'part-type-unknown', family: 'chat', severity: 'warning', summary: 'A content part has a type no layout knows (text, reasoning, tool call, image, audio, video, file).' },
  { id: 'media-count-mismatch', family: 'media', severity: 'error', summary: 'The number of <image>, <video> or <audio> placeholders in the text differs from the number of media entries.' },
  { id: 'media-path-missing', family: 'media', severity: 'warning', summary: 'A relative media path names no file beside the shard.' },
];

const PLACEHOLDERS: readonly ['image' | 'video' | 'audio', RegExp][] = [
  ['image', /<image>/g],
  ['video', /<video>/g],
  ['audio', /<audio>/g],
];

function checkParts(reading: RecordReading, out: RecordIssue[]): void {
  for (const list of reading.turnLists) {
    for (const turn of list.turns) {
      for (const part of turn.parts) {
        if (part.kind === 'unknown') {
          out.push({ rule: 'part-type-unknown', message: `turn ${turn.index} has a content part of type ${JSON.stringify(part.type).slice(0, 60)}`, pointer: part.pointer });
        } else if (part.kind === 'tool-call' && typeof part.arguments === 'string' && part.argumentsPointer !== part.pointer) {
          try {
            JSON.parse(part.arguments);
          } catch {
            const name = part.name ? ` to ${JSON.stringify(part.name).slice(0, 60)}` : '';
            out.push({ rule: 'tool-arguments-invalid', message: `the call${name} in turn ${turn.index} has arguments that are not valid JSON`, pointer: part.argumentsPointer });
          }
        } else if (part.kind === 'tool-call' && part.argumentsPointer === part.pointer && part.name === '' && typeof part.arguments === 'string') {
          // A speaker list's call turn holds the whole call as a JSON string.
          try {
            JSON.parse(part.arguments);
          } catch {
            out.push({ rule: 'tool-arguments-invalid', message: `the call in turn ${turn.index} is not valid JSON`, pointer: part.pointer });
          }
        }
      }
    }
  }
}

function checkMedia(reading: RecordReading, config: CheckConfig, out: RecordIssue[]): void {
  const parts = reading.turnLists.flatMap((l) => l.turns.flatMap((t) => t.parts));
  const listed = reading.media;
  for (const [kind, re] of PLACEHOLDERS) {
    let marks = 0;
    for (const p of reading.pieces) marks += p.text.match(re)?.length ?? 0;
    // Parts with neither location nor bytes stand for the listed media, as placeholders do.
    const bare = parts.filter((p) => p.kind === 'media' && p.media === kind && p.location === null && p.base64 === null).length;
    const used = Math.max(marks, bare);
    const entries = listed?.filter((m) => m.kind === kind).length;
    if (entries === undefined) {
      if (marks > 0 && listed === undefined && !parts.some((p) => p.kind === 'media' && p.media === kind)) {
        out.push({ rule: 'media-count-mismatch', message: `the text has ${marks} <${kind}> placeholder${marks === 1 ? '' : 's'} but the record lists no ${kind}s`, pointer: '' });
      }
      continue;
    }
    if (used !== entries && (marks > 0 || bare > 0 || entries > 0)) {
      const at = listed!.find((m) => m.kind === kind)?.pointer.replace(/\/\d+$/, '') ?? '';
      out.push({
        rule: 'media-count-mismatch',
        message: `the text has ${used} <${kind}> placeholder${used === 1 ? '' : 's'} but the record lists ${entries} ${kind}${entries === 1 ? '' : 's'}`,
        pointer: at,
      });
    }
  }
  const base = config.baseDir;
  if (!base) return;
  const locations = [
    ...(listed ?? []).map((m) => ({ location: m.location, pointer: m.pointer })),
    ...parts.flatMap((p) => (p.kind === 'media' ? [{ location: p.location, pointer: p.pointer }] : [])),
  ];
  for (const m of locations) {
    if (m.location === null || !isRelativePath(m.location)) continue;
    if (!relativeFileExists(base, m.location)) {
      out.push({ rule: 'media-path-missing', message: `no file ${JSON.stringify(m.location).slice(0, 120)} beside the shard`, pointer: m.pointer });
    }
  }
}

/** One more name for one of the layout's field lists (`--turns-field`, `--role-field`, `--content-field`). */
function addField(prev: unknown, key: 'turns' | 'role' | 'content', v: string): unknown {
  const f = { ...((prev as Record<string, string[]>) ?? {}) };
  f[key] = [...(f[key] ?? []), v];
  return f;
}

export const layoutCheck: Check = {
  name: 'layout',
  rules: [...LAYOUT_RULES, ...OWN_RULES],
  settings: [
    {
      key: 'text.fields',
      type: 'strings',
      summary: "fields looked for, in order, as a plain record's text",
      apply: (c, v) => (c.textFields = [...(v as string[])]),
      cli: [{ flag: '--text-field', value: 'NAME', repeat: true, help: "field holding a plain record's text (repeatable; default: text, content, document, body, passage)" }],
    },
    {
      key: 'layout.default',
      type: 'enum',
      values: () => ['auto', ...LAYOUT_IDS],
      summary: "how records are read ('auto': decided per shard)",
      apply: (c, v) => (c.layout = { ...c.layout, id: v as string }),
      editorReadsItself: true,
      cli: [{ flag: '--layout', value: 'ID', help: `how records are read: auto (decided from the shard's first records) or one of ${LAYOUT_IDS.join(', ')}` }],
    },
    { key: 'layout.byGlob', type: 'map', values: () => ['auto', ...LAYOUT_IDS], summary: 'file glob → layout, before layout.default', editorReadsItself: true },
    {
      key: 'layout.fields',
      type: 'fields',
      summary: 'your field names: {"turns": [...], "role": [...], "content": [...]}',
      apply: (c, v) => (c.layout = { ...c.layout, fields: { ...(v as LayoutFields) } }),
      editorReadsItself: true,
      cli: [
        { flag: '--turns-field', value: 'NAME', repeat: true, help: 'a key holding a list of turns, tried before messages/conversations/conversation/dialog (repeatable)', convert: (v, prev) => addField(prev, 'turns', v) },
        { flag: '--role-field', value: 'NAME', repeat: true, help: 'a turn key holding the role, tried before role/from (repeatable)', convert: (v, prev) => addField(prev, 'role', v) },
        { flag: '--content-field', value: 'NAME', repeat: true, help: 'a turn key holding the content, tried before content/value/text (repeatable)', convert: (v, prev) => addField(prev, 'content', v) },
      ],
    },
  ],
  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    const reading = readRecord(rec.value, config);
    if (reading === null) return;
    out.layout = reading.layout;
    if (reading.mismatch) {
      out.issues.push({
        rule: 'layout-mismatch',
        message: `this record fits the "${reading.fits}" layout, but the shard's layout is "${shardLayoutId(config)}"`,
        pointer: '',
      });
    }
    out.issues.push(...reading.issues);
    checkParts(reading, out.issues);
    checkMedia(reading, config, out.issues);
  },
};
