// The splitter between the grid and the detail pane: drag it, or press the arrow keys while it has
// focus, to resize the pane (kept between the sizes gridGeometry.ts allows).

import { h, t } from '../common.js';
import { clampPaneSize, PANE_STEP, splitterKeyDirection } from './gridGeometry.js';

export const splitter = h('div', 'sw-splitter');
splitter.setAttribute('role', 'separator');
splitter.title = t('Drag to resize');
splitter.hidden = true;
splitter.tabIndex = 0;
splitter.setAttribute('aria-label', t('Resize the detail pane'));

/**
 * Makes the splitter resize `pane` inside `main` (a row, or a column in a narrow view) through the
 * `--sw-detail-size` property of `main`; `resized` runs once a resize is done.
 */
export function wireSplitter(main: HTMLElement, pane: HTMLElement, resized: () => void): void {
  splitter.addEventListener('keydown', (ev) => {
    const vertical = getComputedStyle(main).flexDirection === 'column';
    const direction = splitterKeyDirection(ev.key, vertical);
    if (direction === 0) return;
    ev.preventDefault();
    const rect = main.getBoundingClientRect();
    const now = pane.getBoundingClientRect();
    const v = clampPaneSize((vertical ? now.height : now.width) + direction * PANE_STEP, vertical ? rect.height : rect.width);
    main.style.setProperty('--sw-detail-size', `${v}px`);
    splitter.setAttribute('aria-valuenow', String(Math.round(v)));
    resized();
  });
  splitter.addEventListener('pointerdown', (ev) => {
    splitter.setPointerCapture(ev.pointerId);
    const vertical = getComputedStyle(main).flexDirection === 'column';
    const rect = main.getBoundingClientRect();
    const move = (e: PointerEvent): void => {
      const size = vertical ? rect.bottom - e.clientY : rect.right - e.clientX;
      main.style.setProperty('--sw-detail-size', `${clampPaneSize(size, vertical ? rect.height : rect.width)}px`);
    };
    const up = (): void => {
      splitter.removeEventListener('pointermove', move);
      splitter.removeEventListener('pointerup', up);
      resized();
    };
    splitter.addEventListener('pointermove', move);
    splitter.addEventListener('pointerup', up);
  });
}
