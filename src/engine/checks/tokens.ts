// The tokens family: each record's token count under the configured tokenizer, its rendered and
// trained tokens where the model has a chat template, records that overflow the context window,
// and text that spells a special token.

import { ENCODINGS, type CheckConfig, type EncodingName } from '../config.js';
import type { RecordIssue, RuleInfo } from '../findings.js';
import { getTokenizer, loadTokenizer, tokenizerOf, type Tokenizer } from '../tokens/index.js';
import { chatTemplateOf, countReading, renderReading } from '../tokens/recordTokens.js';
import type { Check, RecordResult, RecordUnderCheck } from './check.js';
import { readRecord } from '../layouts/index.js';
import type { TextPiece } from '../layouts/layout.js';
import { isPlainObject } from '../layouts/turnReader.js';

export const TOKENS_RULES: RuleInfo[] = [
  {
    id: 'tokens-over-context',
    family: 'tokens',
    severity: 'warning',
    summary: 'The record (its longest sequence: for a pair, prompt + chosen or prompt + rejected) has more tokens than the context length.',
  },
  {
    id: 'tokens-special-text',
    family: 'tokens',
    severity: 'warning',
    summary: "Text spells a special token of the encoding (counted as ordinary text), or a control token of the model (read as that token).",
  },
  {
    id: 'tokens-no-text',
    family: 'tokens',
    severity: 'info',
    summary: 'The record holds no text to count (no turns, no pair sides, no string field).',
  },
  {
    id: 'tokens-template-error',
    family: 'tokens',
    severity: 'error',
    summary: "The model's chat template raises an error on the record's conversation, or cannot render a value it holds (a null or a list where the template wants text).",
  },
  {
    id: 'tokens-rendered-over-context',
    family: 'tokens',
    severity: 'warning',
    summary: 'The conversation rendered with the chat template (its longest sequence) has more tokens than the context length.',
  },
  {
    id: 'tokens-no-trainable',
    family: 'tokens',
    severity: 'warning',
    summary: 'The rendered conversation has no trained token: no assistant turn inside the loss.',
  },
];

function specialTextIssue(unit: TextPiece, tokenizer: Tokenizer): RecordIssue | null {
  const message = tokenizer.specialTextNote(unit.text);
  return message === null ? null : { rule: 'tokens-special-text', message, pointer: unit.pointer };
}

export const tokensCheck: Check = {
  name: 'tokens',
  rules: TOKENS_RULES,
  settings: [
    {
      key: 'tokens.encoding',
      type: 'enum',
      values: () => ENCODINGS,
      summary: 'token encoding for counts and the context check',
      apply: (c, v) => (c.encoding = v as EncodingName),
      cli: [{ flag: '--encoding', value: 'NAME', help: `token encoding: ${ENCODINGS.join(', ')} (default cl100k_base)` }],
    },
    {
      key: 'tokens.tokenizer',
      type: 'string',
      summary: 'a built-in encoding or a model folder holding tokenizer.json (relative to the file that names it)',
      apply: (c, v) => (c.tokenizer = v as string),
      editorReadsItself: true,
      cli: [{ flag: '--tokenizer', value: 'ENCODING|PATH', help: 'a built-in encoding or a model folder holding tokenizer.json (and tokenizer_config.json with a chat template)' }],
    },
    {
      key: 'tokens.contextLength',
      type: 'integer',
      min: 1,
      max: 100_000_000,
      summary: 'context window in tokens; longer records are findings',
      apply: (c, v) => (c.contextLength = v as number),
      cli: [{ flag: '--context-length', alias: ['--context'], value: 'N', help: 'context length in tokens; longer records are findings (default 8192)' }],
    },
  ],

  async prepare(config: CheckConfig): Promise<void> {
    // A template that does not parse is a setup problem, said once, not a finding on every record.
    chatTemplateOf(await loadTokenizer(tokenizerOf(config)));
  },

  checkRecord(rec: RecordUnderCheck, config: CheckConfig, out: RecordResult): void {
    const tokenizer = getTokenizer(config);
    const template = chatTemplateOf(tokenizer);
    const reading = readRecord(rec.value, config);
    if (reading === null) {
      out.tokens = 0;
      if (template) out.rendered = out.trainable = 0;
      // A value that is not an object is already a record-not-object finding: one finding per fault.
      if (isPlainObject(rec.value)) out.issues.push({ rule: 'tokens-no-text', message: 'No text to count: the record has no turns, no pair sides and no string field.', pointer: '' });
      return;
    }
    const t = countReading(reading, tokenizer);
    out.tokens = t.content;
    out.length = t.length;
    out.prompt = t.prompt;
    out.response = t.response;
    const rendered = template ? renderReading(reading, rec.value, tokenizer, template, t.perPiece) : null;
    if (template) {
      // A record that is no conversation is fed as it is: all of it seen, its response side trained.
      out.rendered = rendered?.rendered ?? t.content;
      out.trainable = rendered?.trainable ?? t.response;
    }
    if (rendered) {
      out.length = rendered.length;
      const where = reading.turnLists[0]?.pointer ?? '';
      const many = rendered.sequences.length > 1;
      for (const s of rendered.sequences) {
        const which = many ? ` (${s.name})` : '';
        if (s.error !== null) {
          out.issues.push({
            rule: 'tokens-template-error',
            message: `The chat template (${template!.spec.origin}) could not render this conversation${which}: ${s.error}. Its tokens are counted by content alone.`,
            pointer: s.errorPointer ?? where,
          });
        } else if (s.trainable === 0) {
          out.issues.push({
            rule: 'tokens-no-trainable',
            message: `No token of the rendered conversation${which} is trained: it has no assistant turn inside the loss (${s.rendered} tokens rendered).`,
            pointer: where,
          });
        }
      }
      if (rendered.length > config.contextLength) {
        const which = many ? ` in its longest sequence (${rendered.longest})` : '';
        out.issues.push({
          rule: 'tokens-rendered-over-context',
          message: `Rendered with the chat template, the record has ${rendered.length} tokens${which} (${tokenizer.label}; ${t.content} of content), more than the context length of ${config.contextLength}.`,
          pointer: '',
        });
      }
    } else if (t.length > config.contextLength) {
      const which = reading.sequences.length > 1 ? ` in its longest sequence (${t.longest})` : '';
      out.issues.push({
        rule: 'tokens-over-context',
        message: `The record has ${t.length} tokens${which} (${tokenizer.label}), more than the context length of ${config.contextLength}.`,
        pointer: '',
      });
    }
    for (const piece of reading.pieces) {
      const issue = specialTextIssue(piece, tokenizer);
      if (issue) out.issues.push(issue);
    }
  },
};
