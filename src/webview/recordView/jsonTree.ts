// The JSON tree of the detail pane: one node per value, each with its JSON Pointer (RFC 6901), folded
// past a depth, large containers shown in batches, and the WAI-ARIA tree pattern's keys.

import { formatCount, h, iconButton, str, t, visibleText } from '../common.js';

/** Children of one JSON container rendered before a "show more" button. */
const TREE_BATCH = 500;
const TREE_MAX_DEPTH = 200;

/** A key as a JSON Pointer reference token (RFC 6901: `~` → `~0`, `/` → `~1`). */
function pointerToken(key: string | number): string {
  return String(key).replace(/~/g, '~0').replace(/\//g, '~1');
}

export function renderTree(value: unknown): HTMLElement {
  const tree = h('div', 'sw-tree');
  tree.setAttribute('role', 'tree');
  tree.append(treeNode(null, value, '', 0));
  return tree;
}

function treeNode(key: string | null, value: unknown, pointer: string, depth: number): HTMLElement {
  const node = h('div', 'sw-node');
  node.dataset.pointer = pointer;
  node.setAttribute('role', 'treeitem');
  node.setAttribute('aria-level', String(depth + 1));
  node.tabIndex = depth === 0 ? 0 : -1;
  const line = h('div', 'sw-node-line');
  const isArr = Array.isArray(value);
  const isObj = !isArr && value !== null && typeof value === 'object';
  const setOpen = (open: boolean) => {
    node.classList.toggle('sw-collapsed', !open);
    node.setAttribute('aria-expanded', String(open));
  };
  if (isArr || isObj) {
    const fold = iconButton('chevron-down', t('Fold'), 'sw-node-toggle');
    fold.tabIndex = -1;
    fold.addEventListener('click', () => setOpen(node.classList.contains('sw-collapsed')));
    line.append(fold);
  } else line.append(h('span', 'sw-node-leaf-pad'));
  // The tree pattern's keys: Up/Down move, Right opens (or goes to the first child), Left closes (or goes to the parent).
  node.addEventListener('keydown', (ev) => {
    if (ev.target !== node) return;
    // The items a person sees: those with no folded ancestor.
    const all = [...(node.closest('.sw-tree')?.querySelectorAll<HTMLElement>('[role="treeitem"]') ?? [])];
    const shown = all.filter((n) => !n.parentElement?.closest('.sw-node.sw-collapsed'));
    const i = shown.indexOf(node);
    const go = (el: HTMLElement | undefined) => {
      if (!el) return;
      node.tabIndex = -1;
      el.tabIndex = 0;
      el.focus();
    };
    const expandable = node.hasAttribute('aria-expanded');
    if (ev.key === 'ArrowDown') go(shown[i + 1]);
    else if (ev.key === 'ArrowUp') go(shown[i - 1]);
    else if (ev.key === 'ArrowRight' && expandable) {
      if (node.getAttribute('aria-expanded') === 'false') setOpen(true);
      else go(node.querySelector<HTMLElement>(':scope > .sw-node-children > [role="treeitem"]') ?? undefined);
    } else if (ev.key === 'ArrowLeft') {
      if (expandable && node.getAttribute('aria-expanded') === 'true') setOpen(false);
      else go(node.parentElement?.closest<HTMLElement>('[role="treeitem"]') ?? undefined);
    } else return;
    ev.preventDefault();
  });
  if (key !== null) line.append(h('span', 'sw-key', key), h('span', 'sw-punct', ': '));
  node.append(line);
  if (depth >= TREE_MAX_DEPTH) {
    line.append(h('span', 'sw-muted', t('… nested too deep to show')));
    return node;
  }
  if (isArr || isObj) {
    const items: [string, unknown][] = isArr
      ? (value as unknown[]).map((v, i) => [String(i), v])
      : Object.entries(value as Record<string, unknown>);
    line.append(h('span', 'sw-summary', isArr ? `[${formatCount(items.length)}]` : `{${formatCount(items.length)}}`));
    const children = h('div', 'sw-node-children');
    children.setAttribute('role', 'group');
    node.append(children);
    setOpen(depth < 6);
    let shown = 0;
    const more = h('button', 'sw-button sw-tree-more');
    more.type = 'button';
    const showBatch = (): void => {
      const stop = Math.min(items.length, shown + TREE_BATCH);
      for (; shown < stop; shown++) {
        const [k, v] = items[shown];
        children.insertBefore(treeNode(k, v, `${pointer}/${pointerToken(k)}`, depth + 1), more.isConnected ? more : null);
      }
      if (shown < items.length) {
        more.textContent = t('Show {0} more of {1}', formatCount(Math.min(TREE_BATCH, items.length - shown)), formatCount(items.length - shown));
        if (!more.isConnected) children.append(more);
      } else more.remove();
    };
    more.addEventListener('click', showBatch);
    showBatch();
    return node;
  }
  const v = h('span', `sw-value sw-t-${value === null ? 'null' : typeof value}`);
  v.append(...visibleText(typeof value === 'string' ? JSON.stringify(value) : value === null ? 'null' : str(value)));
  line.append(v);
  return node;
}

/** Scrolls the node at `pointer` (or its nearest shown ancestor) of the tree inside `scope` into view and marks it. */
export function revealPointer(scope: ParentNode, pointer: string): void {
  const tree = scope.querySelector('.sw-tree');
  if (!tree) return;
  for (const old of tree.querySelectorAll('.sw-node-revealed')) old.classList.remove('sw-node-revealed');
  const byPointer = new Map<string, HTMLElement>();
  for (const n of tree.querySelectorAll<HTMLElement>('.sw-node')) byPointer.set(n.dataset.pointer ?? '', n);
  let p = pointer;
  let node = byPointer.get(p);
  while (!node && p !== '') {
    p = p.slice(0, Math.max(0, p.lastIndexOf('/')));
    node = byPointer.get(p);
  }
  if (!node) return;
  for (let a: HTMLElement | null = node; a && a !== tree; a = a.parentElement) a.classList.remove('sw-collapsed');
  node.classList.add('sw-node-revealed');
  node.scrollIntoView({ block: 'center' });
}
