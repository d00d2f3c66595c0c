// The workbench page in headless Chromium (Debian's `chromium`, driven by
// playwright-core; no browser is ever downloaded). A small static server in
// this process serves web/; the test types rules, reads the member table,
// clicks a ballot, cancels a long count and saves screenshots under
// web/test-output/. Every request the page makes must go to that server.
// Run after `bash bindings-wasm/build.sh` (which puts the package in web/pkg/).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { createServer } from 'node:http';
import { createRequire } from 'node:module';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, extname, join, normalize, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';

const web = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const output = join(web, 'test-output');
const browserPath = process.env.CHROMIUM ?? '/usr/bin/chromium';
const pkg = createRequire(import.meta.url)('../../bindings-wasm/pkg-node');

const TYPES = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.wasm': 'application/wasm',
  '.json': 'application/json',
  '.ts': 'text/plain',
};

let server;
let base;
let context;
let page;
let profile;
const requests = [];
const problems = [];

before(async () => {
  for (const need of [join(web, 'pkg/clout_wasm.js'), browserPath]) {
    if (!existsSync(need)) throw new Error(`missing ${need}: run bash bindings-wasm/build.sh and apt-get install -y chromium`);
  }
  server = createServer((req, res) => {
    const path = normalize(decodeURIComponent(new URL(req.url, 'http://x').pathname)).replace(/^(\.\.[/\\])+/, '');
    const file = join(web, path.endsWith('/') ? `${path}index.html` : path);
    if (!file.startsWith(web) || !existsSync(file)) {
      res.writeHead(404).end();
      return;
    }
    res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream' });
    res.end(readFileSync(file));
  });
  await new Promise((ok) => server.listen(0, '127.0.0.1', ok));
  base = `http://127.0.0.1:${server.address().port}/`;
  mkdirSync(output, { recursive: true });
  profile = mkdtempSync(join(tmpdir(), 'clout-chromium-'));
  context = await chromium.launchPersistentContext(profile, {
    executablePath: browserPath,
    headless: true,
    viewport: { width: 1400, height: 1000 },
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync',
    ],
  });
  context.on('request', (r) => requests.push(r.url()));
  page = context.pages()[0] ?? (await context.newPage());
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error') problems.push(`console: ${m.text()}`);
  });
  await page.goto(`${base}index.html`);
  await page.waitForSelector('body[data-ready="true"]');
});

after(async () => {
  await context?.close();
  server?.close();
  if (profile) rmSync(profile, { recursive: true, force: true });
});

/** Waits until the worker has finished the current report. */
async function computed() {
  await page.waitForFunction(() => /^Computed in/.test(document.getElementById('progress').textContent), null, { timeout: 60_000 });
}

/** Replaces the editor's text by typing it, as a person would. */
async function typeRule(text) {
  await page.focus('#source');
  await page.keyboard.press('Control+A');
  await page.keyboard.press('Delete');
  await page.keyboard.type(text);
}

/** The member table as { label: { cells by column name } }. */
async function table() {
  return page.$eval('#members', (t) => {
    const head = [...t.tHead.rows[0].cells].map((c) => c.textContent);
    const rows = {};
    for (const tr of t.tBodies[0].rows) {
      const cells = [...tr.cells].map((c) => c.textContent);
      rows[cells[0]] = Object.fromEntries(head.map((h, i) => [h, cells[i]]));
    }
    return rows;
  });
}

test('the demo loads with its report, and the table shows the package figures', async () => {
  await computed();
  const rows = await table();
  assert.deepEqual(Object.keys(rows), ['harbor', 'mill', 'ferry', 'delegate1..delegate12']);
  const report = pkg.parse(pkg.examples()[0].text).report();
  for (const [label, i] of [['harbor', 0], ['mill', 1], ['ferry', 2], ['delegate1..delegate12', 3]]) {
    const m = report.members[i];
    assert.equal(rows[label].Banzhaf, m.banzhaf.toFixed(4), label);
    assert.equal(rows[label]['Shapley-Shubik'], m.shapley_shubik.toFixed(4), label);
    assert.equal(rows[label].swings.replaceAll(',', ''), m.swings, label);
  }
  assert.equal(rows['delegate1..delegate12']['×'], '12');
  assert.equal(await page.$$eval('#chart svg .chart-row', (g) => g.length), 4);
  assert.deepEqual(await page.$$eval('#rule option', (o) => o.map((x) => x.value)), ['budget', 'charter', 'closure', 'quick']);
});

test('an error is shown at its line and column as you type', async () => {
  await typeRule('member a seats=4\nmember b seats=2\nmember c seats=1\nrule r = seats >= 6 and d\n');
  await page.waitForSelector('#errors li');
  const error = await page.$eval('#errors li', (li) => li.textContent);
  assert.match(error, /^Line 4, column 25: unknown name `d`Hint: did you mean `a`\?/);
  assert.equal(await page.$eval('#source', (t) => t.getAttribute('aria-invalid')), 'true');
  assert.deepEqual(await page.$$eval('#gutter .bad', (s) => s.map((x) => x.textContent)), ['! 4']);
  assert.equal(await page.$eval('#backdrop mark', (m) => m.textContent), 'd');
  // Clicking the error puts the caret on it.
  await page.click('#errors li button');
  const selection = await page.$eval('#source', (t) => t.value.slice(t.selectionStart, t.selectionEnd));
  assert.equal(selection, 'd');
});

test('a typed rule gives its table: vetoes and the dummy are marked', async () => {
  // a and b together reach 6 of 7 seats; c never decides anything.
  await typeRule('member a seats=4\nmember b seats=2\nmember c seats=1\nrule r = seats >= 6\n');
  await page.waitForFunction(() => document.querySelector('#rule-text').textContent === 'rule r = seats >= 6');
  await computed();
  const rows = await table();
  assert.deepEqual(Object.keys(rows), ['a', 'b', 'c']);
  assert.match(rows.a.flags, /veto/);
  assert.match(rows.b.flags, /veto/);
  assert.match(rows.c.flags, /dummy/);
  assert.equal(rows.c.Banzhaf, '0.0000');
  assert.equal(rows.a.Banzhaf, '0.5000');
  assert.equal(await page.$eval('#errors', (e) => e.children.length), 0);
  const chart = await page.$$eval('#chart svg .chart-row', (g) => g.map((x) => x.textContent));
  assert.match(chart[0], /^◆ a/);
  assert.match(chart[2], /^○ c/);
  await page.screenshot({ path: join(output, 'typed-rule.png'), fullPage: true });
});

test('a ballot clicked and keyed shows the outcome and the critical members', async () => {
  await page.click('fieldset[data-member="a"] label:has-text("yes")');
  // Keyboard: b's radios are a group; from "no", the left arrow moves to "yes".
  await page.focus('fieldset[data-member="b"] input[value="no"]');
  await page.keyboard.press('ArrowLeft');
  await page.waitForFunction(() => /Passes/.test(document.getElementById('outcome').textContent));
  const outcome = await page.$eval('#outcome', (o) => o.textContent);
  assert.match(outcome, /Critical \(★\): a, b\./);
  assert.deepEqual(await page.$$eval('fieldset.critical', (f) => f.map((x) => x.dataset.member)), ['a', 'b']);
  await page.click('fieldset[data-member="b"] label:has-text("absent")');
  await page.waitForFunction(() => /Fails/.test(document.getElementById('outcome').textContent));
  const expected = pkg.parse(await page.$eval('#source', (t) => t.value)).decide({ yes: ['a'], no: ['c'], rest: 'absent' });
  assert.equal(expected.passed, false);
  const shown = await page.$$eval('fieldset.critical', (f) => f.map((x) => x.dataset.member));
  assert.deepEqual(shown, expected.critical);
});

test('a long count shows its progress and can be cancelled', async () => {
  // 30 members with unrelated weights in two attributes: a large decision diagram.
  let s = 1;
  const next = () => (s = (s * 48271) % 2147483647);
  const lines = [];
  for (let i = 1; i <= 30; i += 1) lines.push(`member m${i} a=${(next() % 900000) + 1000} b=${(next() % 900000) + 1000}`);
  lines.push('rule r = a >= 50% and b >= 60% or count >= 25');
  await page.$eval('#source', (t, text) => {
    t.value = text;
    t.dispatchEvent(new Event('input'));
  }, lines.join('\n'));
  await page.waitForFunction(() => /Counting exactly: rule “r”, diagram engine/.test(document.getElementById('progress').textContent));
  assert.equal(await page.$eval('#cancel', (b) => b.disabled), false);
  await page.click('#cancel');
  const progress = await page.$eval('#progress', (p) => p.textContent);
  assert.match(progress, /^Cancelled after \d+\.\d s\./);
  assert.equal(await page.$eval('#again', (b) => b.hidden), false);
  assert.equal(await page.$eval('#cancel', (b) => b.disabled), true);
});

test('the demo again, with a ballot, for the README screenshot', async () => {
  await page.selectOption('#example', '0');
  await computed();
  await page.selectOption('#rule', 'closure');
  await computed();
  for (const m of ['harbor', 'mill', 'ferry', 'delegate1', 'delegate2', 'delegate3']) {
    await page.click(`fieldset[data-member="${m}"] label:has-text("yes")`);
  }
  await page.waitForFunction(() => /Passes/.test(document.getElementById('outcome').textContent));
  assert.match(await page.$eval('#outcome', (o) => o.textContent), /Critical \(★\): harbor, mill\./);
  await page.screenshot({ path: join(output, 'workbench.png'), fullPage: true });
  assert.ok(readFileSync(join(output, 'workbench.png')).length > 10_000);
});

test('every control has a label and can be reached by the keyboard', async () => {
  const unlabelled = await page.$$eval('input, select, textarea, button', (controls) =>
    controls
      .filter((c) => !c.hidden && !(c.labels?.length || c.getAttribute('aria-label') || c.textContent.trim()))
      .map((c) => c.outerHTML.slice(0, 80)),
  );
  assert.deepEqual(unlabelled, []);
  const unreachable = await page.$$eval('input, select, textarea, button', (controls) =>
    controls.filter((c) => c.tabIndex < 0 && !c.disabled && !c.hidden).map((c) => c.id || c.outerHTML.slice(0, 60)),
  );
  assert.deepEqual(unreachable, []);
  // From a fresh load, Tab reaches the skip link first, then the example picker.
  await page.reload();
  await page.waitForSelector('body[data-ready="true"]');
  await page.keyboard.press('Tab');
  assert.equal(await page.evaluate(() => document.activeElement.className), 'skip');
  await page.keyboard.press('Tab');
  assert.equal(await page.evaluate(() => document.activeElement.id), 'example');
});

test('the page made no request outside its own folder and raised no error', () => {
  assert.ok(requests.length > 0);
  assert.deepEqual(requests.filter((u) => !u.startsWith(base)), []);
  assert.deepEqual(problems, []);
});
