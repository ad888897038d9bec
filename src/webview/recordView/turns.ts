// The turns of a record in the detail pane: a conversation (roles, parts, tool calls and the turns
// that answer them, media), the two sides of a preference pair, and each sequence as the chat
// template renders it with the spans the loss covers. Every text reaches the DOM as text.

import type { DetailView, PairSideView, PairView, PartView, RenderedView, TurnView } from '../../protocol.js';
import { formatCount, h, icon, iconButton, str, t, visibleText } from '../common.js';

const KNOWN_ROLES = new Set(['system', 'user', 'assistant', 'tool']);

/** Only these four raster formats, as base64, may become an <img>: the host sniffed them, and we check again. */
const THUMBNAIL_SRC = /^data:image\/(?:png|jpeg|gif|webp);base64,[A-Za-z0-9+/]*={0,2}$/;
const MEDIA_ICON: Record<string, string> = { image: 'file-media', audio: 'unmute', video: 'device-camera-video', file: 'file' };

/** Shows the node at a JSON Pointer in the detail pane's JSON tree. */
export type ShowInTree = (pointer: string) => void;

interface TurnOptions {
  /** Index of the first prompt turn where a pair's sides differ. */
  differs?: number | null;
  showInTree: ShowInTree;
}

export function renderConversation(turns: TurnView[], d: DetailView, showInTree: ShowInTree): HTMLElement {
  const list = h('div', 'sw-conversation');
  if (typeof d.toolsPointer === 'string') {
    const tools = h('button', 'sw-button sw-tools-link');
    tools.type = 'button';
    tools.append(icon('tools'), h('span', '', t('Tool definitions')));
    tools.title = t('Show the tools this record offers in the JSON tree');
    const pointer = d.toolsPointer;
    tools.addEventListener('click', () => showInTree(pointer));
    list.append(tools);
  }
  if (Array.isArray(d.media) && d.media.length) {
    const media = h('div', 'sw-record-media');
    media.append(h('div', 'sw-record-media-head', t('Media of the record')));
    for (const p of d.media) if (p && typeof p === 'object') media.append(renderPart(p));
    list.append(media);
  }
  if (!turns.length) list.append(h('div', 'sw-muted', t('This conversation has no turns.')));
  appendTurns(list, turns, { showInTree });
  return list;
}

function appendTurns(list: HTMLElement, turns: unknown[], opts: TurnOptions): void {
  for (const t of turns) if (t && typeof t === 'object') list.append(renderTurn(t as TurnView, list, opts));
}

function renderTurn(tv: TurnView, scope: HTMLElement, opts: TurnOptions): HTMLElement {
  const role = str(tv.role);
  const turn = h('article', `sw-turn sw-role-${KNOWN_ROLES.has(role) ? role : 'other'}`);
  turn.dataset.role = role;
  turn.dataset.turn = String(tv.index);
  turn.dataset.pointer = str(tv.pointer);
  const head = h('div', 'sw-turn-head');
  head.append(h('span', 'sw-role', role || t('(no role)')));
  if (tv.tokens !== null && tv.tokens !== undefined) head.append(h('span', 'sw-turn-tokens', t('{0} tokens', formatCount(tv.tokens))));
  if (tv.trainable === false) {
    turn.classList.add('sw-turn-untrained');
    const tag = h('span', 'sw-tag sw-untrained-tag');
    tag.title = t('The record excludes this turn from the loss');
    tag.append(icon('circle-slash'), h('span', '', t('not trained on')));
    head.append(tag);
  }
  if (opts.differs !== null && opts.differs !== undefined && tv.index === opts.differs) {
    turn.classList.add('sw-turn-differs');
    const tag = h('span', 'sw-tag sw-differs-tag');
    tag.title = t('The prompts of chosen and rejected differ from this turn on');
    tag.append(icon('diff'), h('span', '', t('differs')));
    head.append(tag);
  }
  if (tv.answers && typeof tv.answers === 'object') head.append(answersLink(tv.answers, scope));
  head.append(h('span', 'sw-spacer-flex'));
  const show = iconButton('json', t('Show this turn in the JSON tree'), 'sw-turn-to-json');
  const pointer = str(tv.pointer);
  show.addEventListener('click', () => opts.showInTree(pointer));
  head.append(show);
  const body = h('div', 'sw-turn-content');
  if (Array.isArray(tv.parts)) {
    for (const p of tv.parts) if (p && typeof p === 'object') body.append(renderPart(p));
  } else body.append(...visibleText(str(tv.content)));
  turn.append(head, body);
  return turn;
}

/** "answers call_1 · get_weather": a button that scrolls to the call when it is on screen. */
function answersLink(answers: { id: string; name: string | null }, scope: HTMLElement): HTMLElement {
  const id = str(answers.id);
  const name = answers.name === null || answers.name === undefined ? '' : str(answers.name);
  const link = h('button', 'sw-answers');
  link.type = 'button';
  link.dataset.callId = id;
  link.title = name ? t('Answers the call {0} to {1}', id, name) : t('Answers the call {0}, which no earlier turn makes', id);
  link.append(icon('reply'), h('span', '', name ? t('answers {0} · {1}', id, name) : t('answers {0}', id)));
  link.addEventListener('click', () => {
    const calls = [...scope.querySelectorAll<HTMLElement>('.sw-part-tool-call')].filter((c) => c.dataset.callId === id);
    const call = calls.at(-1);
    if (!call) return;
    for (const old of scope.querySelectorAll('.sw-part-flash')) old.classList.remove('sw-part-flash');
    call.classList.add('sw-part-flash');
    call.scrollIntoView({ block: 'nearest' });
  });
  return link;
}

function renderPart(p: PartView): HTMLElement {
  const el = renderPartBody(p);
  el.dataset.pointer = str(p.pointer);
  return el;
}

function renderPartBody(p: PartView): HTMLElement {
  switch (p.kind) {
    case 'text':
    {
      const d = h('div', 'sw-part sw-part-text');
      d.append(...visibleText(str(p.text)));
      return d;
    }
    case 'reasoning': {
      const box = h('details', 'sw-part sw-part-reasoning');
      const summary = h('summary', 'sw-part-reasoning-head');
      summary.append(icon('lightbulb'), h('span', '', t('Reasoning')));
      box.append(summary, h('div', 'sw-part-reasoning-text', str(p.text)));
      return box;
    }
    case 'tool-call': {
      const box = h('div', 'sw-part sw-part-tool-call');
      if (p.id !== null && p.id !== undefined) box.dataset.callId = str(p.id);
      const head = h('div', 'sw-tool-head');
      head.append(icon('tools'), h('span', 'sw-tool-label', t('calls')), h('span', 'sw-tool-name', str(p.name)));
      if (p.id !== null && p.id !== undefined) head.append(h('span', 'sw-call-id', str(p.id)));
      box.append(head);
      const args = str(p.arguments);
      if (args !== '') {
        const pre = h('pre', 'sw-tool-args');
        pre.append(h('code', '', args));
        box.append(pre);
      }
      return box;
    }
    case 'media': {
      const chip = str(p.chip);
      const src = typeof p.src === 'string' ? p.src : '';
      if (src && THUMBNAIL_SRC.test(src)) {
        const fig = h('figure', 'sw-part sw-part-media sw-thumb');
        const img = h('img', 'sw-thumb-image');
        img.alt = chip;
        img.src = src;
        fig.append(img, h('figcaption', 'sw-thumb-caption', chip));
        return fig;
      }
      const media = str(p.media);
      const ic = p.inline ? (Object.hasOwn(MEDIA_ICON, media) ? MEDIA_ICON[media] : 'file') : /^[a-z][a-z0-9+.-]*:/i.test(chip) ? 'link' : 'file';
      const box = h('span', 'sw-part sw-part-media sw-chip');
      box.title = p.inline ? t('{0} held in the record', media) : t('{0} at a location the view does not open', media);
      box.append(icon(ic), h('span', 'sw-chip-text', chip));
      return box;
    }
    default: {
      const box = h('span', 'sw-part sw-part-unknown sw-chip');
      box.append(icon('question'), h('span', 'sw-chip-text', t('part of type {0} not shown', JSON.stringify(str((p as { type?: unknown }).type)))));
      return box;
    }
  }
}

export function renderPair(pair: PairView, showInTree: ShowInTree): HTMLElement {
  const box = h('div', 'sw-pair');
  const differs = typeof pair.promptDiffers === 'number' ? pair.promptDiffers : null;
  if (differs !== null) {
    const note = h('div', 'sw-note sw-pair-differs');
    note.append(icon('diff'), h('span', '', t('Chosen and rejected carry different prompts, from turn {0} on.', formatCount(differs + 1))));
    box.append(note);
  }
  const side = (cls: 'prompt' | 'chosen' | 'rejected', label: string, ic: string, s: PairSideView | undefined): HTMLElement => {
    const el = h('div', `sw-pair-side sw-pair-${cls}`);
    const head = h('div', 'sw-pair-head');
    head.append(icon(ic), h('span', '', label));
    if (s && s.tokens !== null && s.tokens !== undefined) head.append(h('span', 'sw-pair-tokens', t('{0} tokens', formatCount(s.tokens))));
    if (s && s.transcript) head.append(h('span', 'sw-tag', t('from a transcript')));
    el.append(head);
    if (!s || typeof s !== 'object' || !s.present) {
      el.append(h('div', 'sw-muted', t('Not in the record.')));
      return el;
    }
    el.dataset.pointer = str(s.pointer);
    if (Array.isArray(s.turns)) {
      const list = h('div', 'sw-conversation');
      if (!s.turns.length) list.append(h('div', 'sw-muted', t('No turns.')));
      appendTurns(list, s.turns, { differs: cls === 'prompt' ? null : differs, showInTree });
      el.append(list);
    } else el.append(h('div', 'sw-pair-text', str(s.text)));
    return el;
  };
  if (pair.prompt && typeof pair.prompt === 'object' && pair.prompt.present) box.append(side('prompt', t('Prompt'), 'comment', pair.prompt));
  const sides = h('div', 'sw-pair-sides');
  sides.append(side('chosen', t('Chosen'), 'thumbsup', pair.chosen), side('rejected', t('Rejected'), 'thumbsdown', pair.rejected));
  box.append(sides);
  return box;
}

/** Each sequence as the chat template renders it, the spans the loss covers marked; text nodes only. */
export function renderRendered(seqs: RenderedView[]): HTMLElement {
  const box = h('div', 'sw-rendered');
  for (const s of seqs) {
    if (!s || typeof s !== 'object') continue;
    const sec = h('section', 'sw-rendered-seq');
    const head = h('div', 'sw-rendered-head');
    const overhead = Number(s.rendered) - Number(s.content);
    head.append(
      h('span', 'sw-rendered-name', str(s.name)),
      h('span', 'sw-badge', t('{0} rendered', formatCount(Number(s.rendered) || 0))),
      h('span', 'sw-muted', t('{0} content · {1}{2} template', formatCount(Number(s.content) || 0), overhead >= 0 ? '+' : '−', formatCount(Math.abs(overhead) || 0))),
      h('span', 'sw-badge sw-trained-badge', t('{0} trained', formatCount(Number(s.trainable) || 0))),
    );
    sec.append(head);
    if (typeof s.error === 'string') {
      const err = h('div', 'sw-note sw-rendered-error');
      err.append(icon('error'), h('span', '', t('The chat template could not render this sequence: {0}', s.error)));
      sec.append(err);
    } else {
      const pre = h('pre', 'sw-rendered-text');
      const text = str(s.text);
      let at = 0;
      const spans = (Array.isArray(s.spans) ? s.spans : [])
        .map((x) => ({ start: Math.max(0, Number(x?.start) || 0), end: Math.min(text.length, Number(x?.end) || 0) }))
        .filter((x) => x.end > x.start)
        .sort((a, b) => a.start - b.start);
      for (const sp of spans) {
        if (sp.start < at) continue;
        if (sp.start > at) pre.append(document.createTextNode(text.slice(at, sp.start)));
        const mark = h('mark', 'sw-trained', text.slice(sp.start, sp.end));
        mark.title = t('Inside the loss: the model is trained on these tokens');
        pre.append(mark);
        at = sp.end;
      }
      if (at < text.length) pre.append(document.createTextNode(text.slice(at)));
      if (s.cut) pre.append(h('span', 'sw-muted', '…'));
      sec.append(pre);
    }
    box.append(sec);
  }
  return box;
}
