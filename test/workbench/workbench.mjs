// Drives the VS Code workbench served by code-server through Chromium: explorer, activity bar,
// command palette, Problems, and the extension's webviews (found by their content, two frames deep).
import { chromium } from 'playwright-core';
import { mkdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

/** Polls `fn` until it returns a truthy value; throws `what` with the last error on timeout. */
export async function waitFor(what, fn, timeoutMs = 30000, everyMs = 250) {
  const deadline = Date.now() + timeoutMs;
  let last;
  while (Date.now() < deadline) {
    try {
      const v = await fn();
      if (v) return v;
    } catch (e) {
      if (e.fatal) throw e;
      last = e;
    }
    await sleep(everyMs);
  }
  throw new Error(`timed out after ${timeoutMs / 1000} s waiting for ${what}${last ? ` (${last.message.split('\n')[0]})` : ''}`);
}

export async function launchBrowser(executablePath) {
  const profile = join(tmpdir(), `shardwise-chromium-${process.pid}-${Date.now()}`);
  mkdirSync(profile, { recursive: true });
  const context = await chromium.launchPersistentContext(profile, {
    executablePath,
    headless: true,
    viewport: { width: 1600, height: 1000 },
    args: [
      '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync',
      '--disable-dev-shm-usage',
    ],
  });
  const close = async () => {
    await context.close().catch(() => {});
    rmSync(profile, { recursive: true, force: true });
  };
  return { context, close };
}

export class Workbench {
  constructor(page) {
    this.page = page;
    this.consoleErrors = [];
    page.on('console', (m) => { if (m.type() === 'error') this.consoleErrors.push(m.text()); });
    page.on('pageerror', (e) => this.consoleErrors.push(String(e)));
  }

  async open(url, folder) {
    await this.page.goto(`${url}?folder=${encodeURIComponent(folder)}`, { waitUntil: 'domcontentloaded' });
    await this.page.locator('.monaco-workbench').waitFor({ timeout: 90000 });
    await this.page.locator('.explorer-folders-view .monaco-list-row').first().waitFor({ timeout: 90000 });
  }

  /** The activity bar entry of a view container, by its title. */
  activityItem(title) {
    return this.page.locator(`.part.activitybar [aria-label^="${title}"]`).first();
  }

  /** Opens the explorer (if another side bar view is showing) and clicks a file by name. */
  async openFromExplorer(name) {
    await this.runCommand('View: Show Explorer');
    const row = this.page.locator('.explorer-folders-view .monaco-list-row').filter({
      has: this.page.locator('.label-name', { hasText: new RegExp(`^${name.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}$`) }),
    }).first();
    await row.waitFor({ timeout: 20000 });
    await row.click();
  }

  /** Runs a command from the command palette by its full title ("Category: Title"). */
  async runCommand(title, { pick } = {}) {
    const page = this.page;
    // Focus the workbench, not a webview, so the key reaches the command palette.
    await page.locator('.part.statusbar').click({ position: { x: 5, y: 5 } }).catch(() => {});
    await page.keyboard.press('F1');
    const input = page.locator('.quick-input-widget input.input');
    await input.waitFor({ timeout: 10000 });
    await input.fill(`>${title}`);
    const row = page.locator('.quick-input-widget .monaco-list-row').filter({ hasText: title }).first();
    await row.waitFor({ timeout: 10000 });
    await row.click();
    if (pick !== undefined) {
      const item = page.locator('.quick-input-widget .monaco-list-row').filter({ hasText: pick }).first();
      await item.waitFor({ timeout: 10000 });
      await item.click();
    }
    await page.locator('.quick-input-widget').waitFor({ state: 'hidden', timeout: 10000 }).catch(() => {});
  }

  /** Every frame whose document holds `#sw-root[data-view=kind]`, with the file name it shows. */
  async webviewFrames(kind) {
    const out = [];
    for (const f of this.page.frames()) {
      try {
        const name = await f.evaluate((k) => {
          const root = document.querySelector(`#sw-root[data-view="${k}"]`);
          if (!root) return null;
          return root.querySelector('.sw-file-name')?.textContent ?? '';
        }, kind);
        if (name !== null) out.push({ frame: f, name });
      } catch { /* frame detached or cross-origin mid-navigation */ }
    }
    return out;
  }

  /** The record view frame showing `fileName`. */
  recordView(fileName, timeoutMs = 30000) {
    return waitFor(`the record view of ${fileName}`, async () => {
      await this.failOnDialog();
      const all = await this.webviewFrames('recordView');
      return all.find((x) => x.name === fileName)?.frame;
    }, timeoutMs);
  }

  /** The side panel frame (opens the Shardwise container first). */
  async panel(timeoutMs = 30000) {
    return waitFor('the Shardwise side panel', async () => {
      const all = await this.webviewFrames('panel');
      return all[0]?.frame;
    }, timeoutMs);
  }

  /** Throws at once (not retried by waitFor) when the workbench shows an error dialog. */
  async failOnDialog() {
    const text = await this.dismissDialog();
    if (text) throw Object.assign(new Error(`the workbench showed a dialog: ${text}`), { fatal: true });
  }

  /** Closes a modal dialog if one is showing; returns its text (an error the workbench raised) or null. */
  async dismissDialog() {
    const box = this.page.locator('.monaco-dialog-box');
    if (!(await box.count()) || !(await box.first().isVisible())) return null;
    const text = (await box.first().innerText().catch(() => '')).replace(/\s+/g, ' ').trim();
    await this.page.keyboard.press('Escape');
    await box.first().waitFor({ state: 'hidden', timeout: 5000 }).catch(() => {});
    return text || 'a dialog';
  }

  async screenshot(path) {
    await this.page.screenshot({ path });
  }

  /** The editor status bar's cursor place ("Ln 12, Col 5") as numbers. */
  async cursor() {
    const item = this.page.locator('.part.statusbar .statusbar-item').filter({ hasText: /Ln \d+, Col \d+/ }).first();
    const text = await item.innerText({ timeout: 2000 });
    const m = /Ln\s+(\d+),\s*Col\s+(\d+)/.exec(text);
    return m ? { line: Number(m[1]), column: Number(m[2]), text } : null;
  }

  /** The active editor tab's text (its label, plus any decorations). */
  async activeTab() {
    return this.page.locator('.tabs-container .tab.active').first().innerText({ timeout: 2000 });
  }

  /** Which editor the active editor group shows: the text editor or a webview (custom editor). */
  async activeEditorKind() {
    return this.page.evaluate(() => {
      const group = document.querySelector('.editor-group-container.active') ?? document;
      if (group.querySelector('.monaco-editor .view-lines')) return 'text';
      return 'other';
    });
  }
}

/** Digits of a formatted count ("2,048", "2 048") as a number. */
export function countOf(text) {
  const d = String(text ?? '').replace(/[^0-9]/g, '');
  return d === '' ? NaN : Number(d);
}
