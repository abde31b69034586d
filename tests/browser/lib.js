// Shared by the browser tests of the HTML report: command-line paths from CTest, making runs
// with the real plumb executable, writing pages with html-report-driver, launching Debian's
// chromium through playwright-core, and a small check list that prints "N passed, N failed"
// and sets the exit code. Plain node, no test framework: CTest is the runner.
'use strict';

const childProcess = require('node:child_process');
const fs = require('node:fs');
const os = require('node:os');
const path = require('node:path');

function parseArgs(argv) {
  const out = {};
  for (let i = 0; i < argv.length; i += 2) {
    if (!argv[i].startsWith('--') || i + 1 >= argv.length) {
      throw new Error('usage: --plumb P --driver D --source DIR --artifacts DIR');
    }
    out[argv[i].slice(2)] = argv[i + 1];
  }
  for (const key of ['plumb', 'driver', 'source', 'artifacts']) {
    if (!out[key]) throw new Error('missing --' + key);
  }
  fs.mkdirSync(out.artifacts, { recursive: true });
  return out;
}

function loadPlaywright() {
  try {
    return require('playwright-core');
  } catch (e) {
    console.error('playwright-core is not installed in tests/browser/node_modules; ' +
                  'run `bash .ci/deps` (or `npm install` in tests/browser) first.');
    process.exit(1);
  }
}

const CHROMIUM = '/usr/bin/chromium';
const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
                       '--disable-background-networking', '--disable-component-update',
                       '--disable-sync'];

// A fresh, temporary profile per launch: nothing carries over between tests or runs.
async function launch(options = {}) {
  const { chromium } = loadPlaywright();
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'plumb-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: CHROMIUM_ARGS,
    viewport: options.viewport || { width: 1280, height: 900 },
    javaScriptEnabled: options.javaScriptEnabled !== false,
    acceptDownloads: false,
    offline: true,
  });
  return {
    context,
    async close() {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
    },
  };
}

// Opens `file` in a new page and records every request, console message, page error, dialog
// and CSP violation, so a test can assert that the page loaded nothing and ran nothing but its
// own script.
async function openReport(context, file, hash = '') {
  const page = await context.newPage();
  const seen = { requests: [], console: [], errors: [], dialogs: [] };
  page.on('request', (r) => seen.requests.push(r.url()));
  page.on('console', (m) => seen.console.push(m.type() + ': ' + m.text()));
  page.on('pageerror', (e) => seen.errors.push(e.message));
  page.on('dialog', (d) => {
    seen.dialogs.push(d.message());
    d.dismiss().catch(() => {});
  });
  // Installed by the browser itself before any page script (not an inline script, so the CSP
  // does not apply): records any policy violation the page triggers.
  await page.addInitScript(() => {
    window.__violations = [];
    document.addEventListener('securitypolicyviolation', (e) => {
      window.__violations.push(e.violatedDirective + ' ' + e.blockedURI);
    });
  });
  const url = 'file://' + path.resolve(file) + hash;
  await page.goto(url, { waitUntil: 'load' });
  return { page, seen, url };
}

function run(command, args, options = {}) {
  const result = childProcess.spawnSync(command, args, { encoding: 'utf8', ...options });
  if (result.error) throw result.error;
  return result;
}

// `plumb score SUITE PREDICTIONS --out DIR`; exit 0 or 1 (floors) are both a finished run.
function score(args, suite, predictions, outDir, extra = []) {
  const r = run(args.plumb, ['score', suite, predictions, '--out', outDir, ...extra]);
  if (r.status !== 0 && r.status !== 1) {
    throw new Error('plumb score exited ' + r.status + ':\n' + r.stdout + r.stderr);
  }
  return r;
}

function writeRunReport(args, runDir, html, options = {}) {
  const r = run(args.driver, ['run', runDir, html], options);
  if (r.status !== 0) throw new Error('html-report-driver failed:\n' + r.stderr);
  return r;
}

function writeDriftReport(args, driftJson, baseDir, candDir, html) {
  const r = run(args.driver, ['drift', driftJson, baseDir, candDir, html]);
  if (r.status !== 0) throw new Error('html-report-driver failed:\n' + r.stderr);
  return r;
}

function tempDir(name) {
  return fs.mkdtempSync(path.join(os.tmpdir(), 'plumb-browser-' + name + '-'));
}

function writeFiles(dir, files) {
  for (const [name, text] of Object.entries(files)) {
    const file = path.join(dir, name);
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, text);
  }
}

function jsonl(objects) {
  return objects.map((o) => JSON.stringify(o)).join('\n') + '\n';
}

// The check list. `check(name, ok, detail)` records one result; `finish()` prints them and the
// closing line, and exits non-zero if any failed.
class Checks {
  constructor(title) {
    this.title = title;
    this.passed = 0;
    this.failed = 0;
  }
  check(name, ok, detail) {
    if (ok) {
      this.passed++;
      console.log('ok   ' + name);
    } else {
      this.failed++;
      console.log('FAIL ' + name + (detail === undefined ? '' : ': ' + JSON.stringify(detail)));
    }
    return ok;
  }
  equal(name, actual, expected) {
    const ok = JSON.stringify(actual) === JSON.stringify(expected);
    return this.check(name, ok, ok ? undefined : { actual, expected });
  }
  finish() {
    console.log(this.title + ': ' + this.passed + ' passed, ' + this.failed + ' failed');
    process.exit(this.failed === 0 ? 0 : 1);
  }
}

// Runs `body(checks)`; any exception is a failed check, and the browser is always closed.
async function main(title, body) {
  const checks = new Checks(title);
  try {
    await body(checks);
  } catch (e) {
    checks.check('no exception', false, String(e && e.stack ? e.stack : e));
  }
  checks.finish();
}

// Texts of the elements matching `selector` under `root` (visible or not).
async function texts(page, selector) {
  return page.$$eval(selector, (els) => els.map((e) => e.textContent));
}

// The inline script's text and the script-src hash the page's CSP names, so a test can check
// the hash with node's own crypto (an implementation independent of plumb's).
async function scriptAndPolicy(page) {
  return page.evaluate(() => ({
    scripts: Array.from(document.scripts).map((s) => s.textContent),
    styles: Array.from(document.querySelectorAll('style')).map((s) => s.textContent),
    policy: document.querySelector('meta[http-equiv="Content-Security-Policy"]').content,
  }));
}

module.exports = {
  parseArgs, launch, openReport, run, score, writeRunReport, writeDriftReport, tempDir,
  writeFiles, jsonl, Checks, main, texts, scriptAndPolicy,
};
