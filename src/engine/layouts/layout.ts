// A layout says where a record's turns, sides and text are. Each layout is one file in this folder
// behind this interface; `index.ts` lists them and decides a shard's layout from its first records.
// The layouts are common practice of the trade (each file names what it follows), not a standard.

import type { RecordIssue, RuleInfo } from '../findings.js';

/** Field names a user maps onto a layout (turns under `dialog`, role under `speaker` …). */
export interface LayoutFields {
  /** Keys that hold a list of turns, tried in order before the built-in ones. */
  turns?: string[];
  /** Keys of a turn that hold its role, tried before `role` and `from`. */
  role?: string[];
  /** Keys of a turn that hold its content, tried before `content` and `value`. */
  content?: string[];
  /** Fields looked for, in order, as the text of a plain record (the `text` layout). */
  text?: string[];
}

export interface LayoutConfig {
  /** 'auto' decides per shard from its first records; else a layout id. */
  id: string;
  fields: LayoutFields;
}

/** Which side of a training example a piece of text is on: conditioned on, or trained on. */
export type Side = 'prompt' | 'response';

/** One piece of text the model is trained on or conditioned on, counted on its own. */
export interface TextPiece {
  /** RFC 6901 pointer to the string inside the record. */
  pointer: string;
  text: string;
  side: Side;
  /** What the string is, for messages and the detail pane. */
  kind: 'text' | 'reasoning' | 'tool-name' | 'tool-arguments';
}

/** One part of a turn's content, as the record holds it. */
export type Part =
  | { kind: 'text'; pointer: string; text: string }
  | { kind: 'reasoning'; pointer: string; text: string }
  | {
      kind: 'tool-call';
      pointer: string;
      /** The call's id, when it has one. */
      id: string | null;
      name: string;
      /** Pointer to the function name string. */
      namePointer: string;
      /** Arguments as written: a JSON string, or an object/array value. */
      arguments: unknown;
      argumentsPointer: string;
    }
  | {
      kind: 'media';
      pointer: string;
      media: 'image' | 'audio' | 'video' | 'file';
      /** A URL or a path, when the part points at the media instead of holding it. */
      location: string | null;
      /** Inline bytes as base64 (a `data:` URL's payload or a `bytes` field), when the part holds them. */
      base64: string | null;
      /** The MIME type the part declares, if any. */
      mime: string | null;
    }
  | { kind: 'unknown'; pointer: string; type: string };

export interface LTurn {
  /** 0-based position in its list. */
  index: number;
  /** RFC 6901 pointer to the turn object, e.g. `/messages/3`. */
  pointer: string;
  /** Role after mapping (`human` → `user`, `gpt` → `assistant`, `function_call` → `assistant` …); null when missing. */
  role: string | null;
  /** The role value as written (undefined when absent). */
  rawRole: unknown;
  /** Pointer to the role value (or where it would be). */
  rolePointer: string;
  /** The turn's text: string content, or its text parts joined by newlines (for display and comparison). */
  text: string;
  /** Pointer to the content value (or where it would be when missing). */
  contentPointer: string;
  /** Whether the content key is present, and its value as written. */
  contentPresent: boolean;
  rawContent: unknown;
  /** Every part of the content (a string content is one text part), tool calls and reasoning included. */
  parts: Part[];
  /** The string ids of the calls this turn makes. */
  toolCallIds: string[];
  /** The call a tool turn answers (`tool_call_id`), or null. */
  toolCallId: string | null;
  /** An assistant turn that calls tools (tool_calls list, function_call object, or a `function_call` speaker turn). */
  hasToolCalls: boolean;
  /** False when the list item is not a JSON object (then every other field is empty). */
  isObject: boolean;
  /** A per-turn flag that excludes the turn from the loss (`train: false`, `weight: 0`, `loss: false`); null when absent. */
  trainable: boolean | null;
}

/** A list of turns the chat rules run on. */
export interface TurnList {
  /** Name for messages: `messages`, `chosen`, `prompt + completion` … */
  name: string;
  /** Pointer to the list (or to the single turn object standing in for it). */
  pointer: string;
  /** The value as written, for the shape rules (not a list, empty). */
  raw: unknown;
  turns: LTurn[];
  /**
   * Whether the list is a whole training example (it must end with the assistant's answer) or a
   * prompt (it may end on the user's turn). A completion or a pair's side also ends on the assistant.
   */
  role: 'example' | 'prompt' | 'answer';
}

/** One side of a preference pair. */
export interface PairSide {
  name: 'prompt' | 'chosen' | 'rejected';
  pointer: string;
  /** Present in the record at all. */
  present: boolean;
  raw: unknown;
  /** Plain text (a string side), or null for a turn side. */
  text: string | null;
  /** The side's turns (a list, a single turn object, or a transcript parsed into turns); null for plain text. */
  turns: LTurn[] | null;
  /** True when the turns were parsed out of a `\n\nHuman:` / `\n\nAssistant:` transcript string. */
  transcript: boolean;
}

export interface PairReading {
  prompt: PairSide;
  chosen: PairSide;
  rejected: PairSide;
}

/** A sequence a trainer feeds as one example: judged against the context length on its own. */
export interface Sequence {
  name: string;
  /** Indices into `Reading.pieces`. */
  pieces: number[];
  /** The conversation of the sequence where it is one, for a chat template to render. */
  turns?: LTurn[];
}

/** What a layout reads out of one record. */
export interface Reading {
  layout: string;
  /** Every piece of content text, each counted on its own. */
  pieces: TextPiece[];
  /** What the trainer feeds (a pair: prompt + chosen and prompt + rejected, each on its own). */
  sequences: Sequence[];
  /** Turn lists for the chat rules. */
  turnLists: TurnList[];
  /** The pair, for the pair rules and the detail pane. */
  pair?: PairReading;
  /** Media the record lists beside its turns (`images`, `videos`, `audios` …) with pointers. */
  media?: { kind: 'image' | 'audio' | 'video'; pointer: string; location: string | null; base64: string | null; mime: string | null }[];
  /** Tool definitions the record offers (not content), for the detail pane. */
  toolsPointer?: string;
  /** The layout's own issues (an instruction without output, a label that is not a boolean …). */
  issues: RecordIssue[];
}

export interface Layout {
  readonly id: string;
  /** One line for `--help`, the README and the panel. */
  readonly summary: string;
  /** Rules the layout itself raises. */
  readonly rules: readonly RuleInfo[];
  /**
   * How sure the layout is that the record is one of its own: 0 = not at all, 1 = certain.
   * Cheap: looks at keys and the first item of lists, never counts tokens.
   */
  recognise(value: Record<string, unknown>, fields: LayoutFields): number;
  /** Reads the record. Only called on a plain object the layout recognised (or was told to use). */
  read(value: Record<string, unknown>, fields: LayoutFields): Reading;
}
