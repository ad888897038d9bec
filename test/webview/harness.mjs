// Test harness for the two webviews: builds their bundles with esbuild into a temporary folder,
// serves them with the HTML shell from src/host/webviewHtml.ts on 127.0.0.1, and opens them in
// Debian's headless Chromium with a fake `acquireVsCodeApi` that records what the view posts.
import { after, before } from 'node:test';
import { build } from 'esbuild';
import { chromium } from 'playwright-core';
import { createServer } from 'node:http';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, extname, join, resolve, sep } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const projectRoot = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
export const screenshotDir = join(projectRoot, 'test-output/webview');
const CHROMIUM = process.env.SHARDWISE_CHROMIUM ?? '/usr/bin/chromium';

// Two small theme sheets standing in for what VS Code sets on the page: only `--vscode-*` variables.
const THEMES = {
  dark: {
    'editor-background': '#1f1f1f',
    'sideBar-background': '#181818',
    foreground: '#cccccc',
    descriptionForeground: '#9d9d9d',
    errorForeground: '#f85149',
    'font-family': 'system-ui, "Ubuntu", "Droid Sans", sans-serif',
    'font-size': '13px',
    'editor-font-family': '"Droid Sans Mono", "monospace", monospace',
    'editor-font-size': '13px',
    'editorError-foreground': '#f14c4c',
    'editorWarning-foreground': '#cca700',
    'editorInfo-foreground': '#3794ff',
    'list-activeSelectionBackground': '#04395e',
    'list-activeSelectionForeground': '#ffffff',
    'list-inactiveSelectionBackground': '#37373d',
    'list-hoverBackground': '#2a2d2e',
    'list-focusOutline': '#0078d4',
    focusBorder: '#0078d4',
    'panel-border': '#2b2b2b',
    'widget-border': '#313131',
    'editorWidget-background': '#202020',
    'badge-background': '#616161',
    'badge-foreground': '#f8f8f8',
    'button-secondaryBackground': '#313131',
    'button-secondaryForeground': '#cccccc',
    'button-secondaryHoverBackground': '#3c3c3c',
    'input-background': '#313131',
    'input-foreground': '#cccccc',
    'input-border': '#3c3c3c',
    'input-placeholderForeground': '#989898',
    'inputValidation-errorBorder': '#be1100',
    'inputValidation-errorBackground': '#5a1d1d',
    'progressBar-background': '#0078d4',
    'toolbar-hoverBackground': '#5a5d5e50',
    'icon-foreground': '#cccccc',
    'charts-blue': '#3794ff',
    'charts-green': '#89d185',
    'charts-orange': '#d18616',
    'charts-purple': '#b180d7',
    'charts-red': '#f14c4c',
    'charts-yellow': '#cca700',
    'editorLineNumber-foreground': '#6e7681',
    'editorIndentGuide-background': '#404040',
    'editorGroupHeader-tabsBackground': '#181818',
    'textBlockQuote-background': '#2b2b2b',
    'textPreformat-foreground': '#d0d0d0',
    'symbolIcon-propertyForeground': '#9cdcfe',
    'debugTokenExpression-string': '#ce9178',
    'debugTokenExpression-number': '#b5cea8',
    'debugTokenExpression-boolean': '#4e94ce',
    'editor-findMatchHighlightBackground': '#623315',
    'editor-findMatchBorder': '#d18616',
    'testing-iconPassed': '#73c991',
  },
  light: {
    'editor-background': '#ffffff',
    'sideBar-background': '#f8f8f8',
    foreground: '#3b3b3b',
    descriptionForeground: '#717171',
    errorForeground: '#c72e0f',
    'font-family': 'system-ui, "Ubuntu", "Droid Sans", sans-serif',
    'font-size': '13px',
    'editor-font-family': '"Droid Sans Mono", "monospace", monospace',
    'editor-font-size': '13px',
    'editorError-foreground': '#e51400',
    'editorWarning-foreground': '#bf8803',
    'editorInfo-foreground': '#1a85ff',
    'list-activeSelectionBackground': '#e8e8e8',
    'list-activeSelectionForeground': '#000000',
    'list-inactiveSelectionBackground': '#e4e6f1',
    'list-hoverBackground': '#f2f2f2',
    'list-focusOutline': '#005fb8',
    focusBorder: '#005fb8',
    'panel-border': '#e5e5e5',
    'widget-border': '#e5e5e5',
    'editorWidget-background': '#f8f8f8',
    'badge-background': '#cccccc',
    'badge-foreground': '#3b3b3b',
    'button-secondaryBackground': '#e5e5e5',
    'button-secondaryForeground': '#3b3b3b',
    'button-secondaryHoverBackground': '#cccccc',
    'input-background': '#ffffff',
    'input-foreground': '#3b3b3b',
    'input-border': '#cecece',
    'input-placeholderForeground': '#767676',
    'inputValidation-errorBorder': '#be1100',
    'inputValidation-errorBackground': '#f2dede',
    'progressBar-background': '#005fb8',
    'toolbar-hoverBackground': '#b8b8b850',
    'icon-foreground': '#3b3b3b',
    'charts-blue': '#1a85ff',
    'charts-green': '#388a34',
    'charts-orange': '#d18616',
    'charts-purple': '#652d90',
    'charts-red': '#e51400',
    'charts-yellow': '#bf8803',
    'editorLineNumber-foreground': '#6e7681',
    'editorIndentGuide-background': '#d3d3d3',
    'editorGroupHeader-tabsBackground': '#f8f8f8',
    'textBlockQuote-background': '#f2f2f2',
    'textPreformat-foreground': '#3b3b3b',
    'symbolIcon-propertyForeground': '#0451a5',
    'debugTokenExpression-string': '#a31515',
    'debugTokenExpression-number': '#098658',
    'debugTokenExpression-boolean': '#0000ff',
    'editor-findMatchHighlightBackground': '#ea5c0055',
    'editor-findMatchBorder': '#d18616',
    'testing-iconPassed': '#388a34',
  },
};

// High-contrast themes (values from memory of VS Code's built-in "Dark High Contrast" and "Light
// High Contrast"): the only themes that set contrastBorder and contrastActiveBorder.
THEMES['hc-dark'] = {
  ...THEMES.dark,
  'editor-background': '#000000',
  'sideBar-background': '#000000',
  foreground: '#ffffff',
  descriptionForeground: '#ffffff',
  contrastBorder: '#6fc3df',
  contrastActiveBorder: '#f38518',
  focusBorder: '#f38518',
  'list-focusOutline': '#f38518',
  'list-activeSelectionBackground': '#00000000',
  'list-hoverBackground': '#00000000',
};
THEMES['hc-light'] = {
  ...THEMES.light,
  'editor-background': '#ffffff',
  'sideBar-background': '#ffffff',
  foreground: '#292929',
  descriptionForeground: '#292929',
  contrastBorder: '#0f4a85',
  contrastActiveBorder: '#006bbd',
  focusBorder: '#006bbd',
  'list-focusOutline': '#006bbd',
  'list-activeSelectionBackground': '#ffffff00',
  'list-hoverBackground': '#ffffff00',
};

function themeCss(name) {
  const vars = THEMES[name];
  if (!vars) throw new Error(`unknown theme ${name}`);
  return `body {\n${Object.entries(vars)
    .map(([k, v]) => `  --vscode-${k}: ${v};`)
    .join('\n')}\n}\n`;
}

let built;
/** Bundles the two webviews (as VS Code loads them) and the HTML shell (for Node) once per process. */
export async function buildBundles() {
  if (built) return built;
  const out = mkdtempSync(join(tmpdir(), 'shardwise-webview-'));
  await build({
    entryPoints: [
      { in: join(projectRoot, 'src/webview/recordView.ts'), out: 'recordView' },
      { in: join(projectRoot, 'src/webview/panel.ts'), out: 'panel' },
    ],
    outdir: join(out, 'webview'),
    bundle: true,
    format: 'iife',
    platform: 'browser',
    target: 'chrome114',
    sourcemap: 'inline',
    logLevel: 'error',
  });
  await build({
    entryPoints: [join(projectRoot, 'src/host/webviewHtml.ts')],
    outfile: join(out, 'webviewHtml.mjs'),
    bundle: true,
    format: 'esm',
    platform: 'node',
    target: 'node20',
    logLevel: 'error',
  });
  const html = await import(pathToFileURL(join(out, 'webviewHtml.mjs')).href);
  built = { out, html };
  process.on('exit', () => rmSync(out, { recursive: true, force: true }));
  return built;
}

const TYPES = { '.js': 'text/javascript', '.css': 'text/css', '.ttf': 'font/ttf', '.html': 'text/html' };

/** Serves the bundles, media/, codicons and theme sheets; `/page/<kind>/<theme>` is the webview page. */
export async function startServer() {
  const { out, html } = await buildBundles();
  const codicons = join(projectRoot, 'node_modules/@vscode/codicons/dist');
  const roots = { dist: join(out, 'webview'), media: join(projectRoot, 'media'), codicons };
  let origin = '';
  const server = createServer((req, res) => {
    try {
      const url = new URL(req.url ?? '/', 'http://x');
      const parts = url.pathname.split('/').filter(Boolean);
      if (parts[0] === 'page' && parts.length === 3) {
        const [, kind, theme] = parts;
        const page = html.renderWebviewHtml({
          kind,
          cspSource: origin,
          nonce: html.makeNonce(),
          scriptUri: `${origin}/dist/${kind}.js`,
          styleUris: [`${origin}/theme/${theme}.css`, `${origin}/media/common.css`, `${origin}/media/${kind}.css`],
          codiconUri: `${origin}/codicons/codicon.css`,
          title: url.searchParams.get('title') ?? kind,
          strings: url.searchParams.has('strings') ? JSON.parse(url.searchParams.get('strings')) : undefined,
        });
        res.writeHead(200, { 'content-type': 'text/html; charset=utf-8' });
        res.end(page);
        return;
      }
      if (url.pathname === '/favicon.ico') {
        res.writeHead(204);
        res.end();
        return;
      }
      if (parts[0] === 'theme' && parts.length === 2) {
        res.writeHead(200, { 'content-type': 'text/css' });
        res.end(themeCss(parts[1].replace(/\.css$/, '')));
        return;
      }
      const base = roots[parts[0]];
      const file = base ? resolve(base, ...parts.slice(1)) : '';
      if (!base || !file.startsWith(base + sep) || !existsSync(file)) {
        res.writeHead(404);
        res.end();
        return;
      }
      res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream' });
      res.end(readFileSync(file));
    } catch (err) {
      res.writeHead(500);
      res.end(String(err));
    }
  });
  await new Promise((r) => server.listen(0, '127.0.0.1', r));
  origin = `http://127.0.0.1:${server.address().port}`;
  return { origin, close: () => new Promise((r) => server.close(r)) };
}

export async function launchBrowser() {
  if (!existsSync(CHROMIUM)) {
    throw new Error(`Chromium not found at ${CHROMIUM}: install Debian's package (apt-get install -y chromium)`);
  }
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
}

// Runs in the page before its own script: the fake VS Code API and a record of CSP violations.
function fakeVsCodeApi() {
  window.__posted = [];
  window.__cspViolations = [];
  window.__state = undefined;
  let acquired = false;
  document.addEventListener('securitypolicyviolation', (e) => {
    window.__cspViolations.push({ directive: e.violatedDirective, blocked: e.blockedURI, sample: e.sample });
  });
  window.acquireVsCodeApi = () => {
    if (acquired) throw new Error('acquireVsCodeApi may be called only once');
    acquired = true;
    return {
      postMessage(m) {
        const copy = JSON.parse(JSON.stringify(m));
        window.__posted.push(copy);
        if (typeof window.__toHost === 'function') window.__toHost(copy);
      },
      getState: () => window.__state,
      setState: (s) => {
        window.__state = s;
      },
    };
  };
}

const shared = new WeakMap(); // browser → { context, page, current }

/** One page per browser and viewport, navigated afresh for every view: a new renderer per test is slow. */
async function sharedPage(browser, viewport) {
  const key = `${viewport.width}x${viewport.height}`;
  let byViewport = shared.get(browser);
  if (!byViewport) shared.set(browser, (byViewport = new Map()));
  let s = byViewport.get(key);
  if (s) return s;
  const context = await browser.newContext({ viewport, deviceScaleFactor: 1 });
  const page = await context.newPage();
  s = { context, page, current: null };
  page.on('pageerror', (e) => s.current?.errors.push(String(e)));
  page.on('console', (m) => {
    if (m.type() === 'error') s.current?.errors.push(m.text());
  });
  await page.exposeBinding('__toHost', async (_src, msg) => {
    const view = s.current;
    if (!view || view.closed) return;
    view.posted.push(msg);
    if (view.onMessage) await view.onMessage(msg, view);
  });
  await page.addInitScript(fakeVsCodeApi);
  byViewport.set(key, s);
  return s;
}

/**
 * Opens one webview. `onMessage(msg, view)` plays the host: it sees each posted message and may answer
 * through `view.send(msg)`. Returns helpers to wait for posts and to read the CSP record.
 */
export async function openView(browser, server, { kind, theme = 'dark', title, strings, onMessage, viewport = { width: 1200, height: 760 } }) {
  const s = await sharedPage(browser, viewport);
  const page = s.page;
  const view = {
    page,
    errors: [],
    posted: [],
    onMessage,
    closed: false,
    /** Posts a host message and resolves once the view's own listener has handled it (ours runs after it). */
    async send(msg) {
      await page.evaluate(
        (m) =>
          new Promise((resolve) => {
            const done = () => {
              window.removeEventListener('message', done);
              resolve();
            };
            window.addEventListener('message', done);
            window.postMessage(m, '*');
          }),
        msg,
      );
    },
    /** Resolves with the first posted message (counting from `from`) that matches. */
    async waitForPost(pred, { from = 0, timeout = 5000 } = {}) {
      const t0 = Date.now();
      for (;;) {
        const hit = view.posted.slice(from).find(pred);
        if (hit) return hit;
        if (Date.now() - t0 > timeout) throw new Error(`no matching message posted; saw ${JSON.stringify(view.posted.slice(from)).slice(0, 800)}`);
        await new Promise((r) => setTimeout(r, 15));
      }
    },
    async cspViolations() {
      return page.evaluate(() => window.__cspViolations);
    },
    async close() {
      view.closed = true;
      if (s.current === view) s.current = null;
    },
  };
  s.current = view;
  const params = new URLSearchParams();
  if (title !== undefined) params.set('title', title);
  if (strings !== undefined) params.set('strings', JSON.stringify(strings));
  const q = params.size ? `?${params}` : '';
  await page.goto(`${server.origin}/page/${kind}/${theme}${q}`);
  await view.waitForPost((m) => m.type === 'ready');
  return view;
}

export async function screenshot(page, name) {
  mkdirSync(screenshotDir, { recursive: true });
  await page.screenshot({ path: join(screenshotDir, `${name}.png`) });
}

/** One page server and one browser for a test file (or a describe block), closed after it. */
export function useBrowser() {
  const env = { browser: null, server: null };
  before(async () => {
    env.server = await startServer();
    env.browser = await launchBrowser();
  });
  after(async () => {
    await env.browser?.close();
    await env.server?.close();
  });
  return env;
}
