// Every user-visible string of the webviews goes through t(), so the host's localisation bundle can
// translate it. The scan finds literals in the places the views put text; a missed one fails here.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const LITERAL = String.raw`(?:'(?:[^'\\\n]|\\.)*'|"(?:[^"\\\n]|\\.)*"|\x60(?:[^\x60\\]|\\.)*\x60)`;
const PLACES: [string, RegExp][] = [
  ['assigned to a text property', new RegExp(String.raw`\.(?:textContent|title|placeholder)\s*=\s*(?:[^;\n]*?[?:|]\s*)?(${LITERAL})`, 'g')],
  ['an aria-label', new RegExp(String.raw`setAttribute\(\s*'aria-label'\s*,\s*(${LITERAL})`, 'g')],
  ['a button title', new RegExp(String.raw`iconButton\(\s*'[^']*'\s*,\s*(${LITERAL})`, 'g')],
  ['a text child of h()', new RegExp(String.raw`\bh\(\s*'\w+'\s*,\s*${LITERAL}\s*,\s*(?:[^,()\n]*?[?:|]\s*)?(${LITERAL})`, 'g')],
  ['a title or placeholder option', new RegExp(String.raw`\b(?:title|placeholder|'aria-label')\s*:\s*(${LITERAL})`, 'g')],
];

/** A literal a person would read: it holds a word (two letters in a row). */
const isWords = (lit: string): boolean => /[A-Za-z]{2}/.test(lit.replace(/\$\{[^}]*\}/g, ''));

export function unwrappedLiterals(source: string): { line: number; literal: string; place: string }[] {
  const out: { line: number; literal: string; place: string }[] = [];
  for (const [place, re] of PLACES) {
    for (const m of source.matchAll(re)) {
      const lit = m[1];
      if (!isWords(lit)) continue;
      const at = m.index! + m[0].lastIndexOf(lit);
      // Inside t(…): right after it, or a branch of a choice made inside it.
      if (/\bt\(/.test(m[0].slice(0, m[0].lastIndexOf(lit)))) continue;
      out.push({ line: source.slice(0, at).split('\n').length, literal: lit, place });
    }
  }
  return out;
}

describe('webview strings', () => {
  it('finds an unwrapped literal in each place and passes a wrapped one', () => {
    const bad = [
      "b.title = 'Match case';",
      "input.placeholder = 'Search records';",
      "el.textContent = done ? 'Done' : 'Reading';",
      "x.setAttribute('aria-label', 'Entries');",
      "iconButton('close', 'Hide the pane', 'sw-close');",
      "h('span', 'sw-muted', 'No turns.');",
      "h('span', '', `${n} records`);",
    ];
    for (const src of bad) expect(unwrappedLiterals(src), src).not.toEqual([]);
    const good = [
      "b.title = t('Match case');",
      "x.setAttribute('aria-label', t('Entries'));",
      "iconButton('close', t('Hide the pane'), 'sw-close');",
      "h('span', 'sw-muted', t('{0} records', formatCount(n)));",
      "h('span', 'sw-count', '0');",
      "x.setAttribute('role', 'grid');",
    ];
    for (const src of good) expect(unwrappedLiterals(src), src).toEqual([]);
  });

  // Every source of the webviews, the record view's parts included.
  const dir = join(__dirname, '../../../src/webview');
  const files = (readdirSync(dir, { recursive: true }) as string[]).filter((f) => f.endsWith('.ts')).sort();
  it('scans the views and the parts they are made of', () => {
    for (const f of ['common.ts', 'panel.ts', 'recordView.ts', 'findingsList.ts', join('recordView', 'rows.ts'), join('recordView', 'detail.ts')]) expect(files).toContain(f);
  });
  for (const file of files) {
    it(`${file} passes every user-visible literal through t()`, () => {
      const source = readFileSync(join(dir, file), 'utf8');
      expect(unwrappedLiterals(source)).toEqual([]);
    });
  }
});
