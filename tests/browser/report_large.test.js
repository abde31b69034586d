// A report of 10,000 cases, half failing: the file must stay under 25 MB, and the page must be
// usable (first cases painted, a filter applied) within a few seconds. The figures are printed
// for the record; the time bounds asserted are deliberately loose (30 s) because the machine is
// shared and noisy, so only a page that is broken, not one that is slow today, fails.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

const CASES = 10000;
const DOCS = 20;
const FACTS = 40;

// Document d: FACTS sentences "Fact f of handbook part d: the value is V(d, f) units." plus a
// heading; ASCII only, so JavaScript string offsets are code-point offsets.
function value(d, f) { return (d * 37 + f * 11) % 997; }
function makeDoc(d) {
  let text = '# Handbook part ' + d + '\n\n';
  const spans = [];
  for (let f = 0; f < FACTS; f++) {
    const sentence = 'Fact ' + f + ' of handbook part ' + d + ': the value is ' + value(d, f) + ' units.';
    spans.push([text.length, text.length + sentence.length]);
    text += sentence + (f % 5 === 4 ? '\n\n' : ' ');
  }
  return { text, spans };
}

lib.main('browser report, 10,000 cases', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  const dir = lib.tempDir('large');
  const docs = [];
  const files = {};
  for (let d = 0; d < DOCS; d++) {
    docs.push(makeDoc(d));
    files['docs/part-' + d + '.md'] = docs[d].text;
  }
  const cases = [];
  const predictions = [];
  for (let i = 0; i < CASES; i++) {
    const d = i % DOCS;
    const f = Math.floor(i / DOCS) % FACTS;
    const [start, end] = docs[d].spans[f];
    const id = 'case-' + String(i).padStart(5, '0');
    cases.push({ id, question: 'What is the value of fact ' + f + ' in handbook part ' + d + '?',
                 answers: ['the value is ' + value(d, f) + ' units', value(d, f) + ' units'],
                 sources: [{ doc: 'part-' + d + '.md', start, end }],
                 tags: ['part-' + (d % 8), i % 2 === 0 ? 'even' : 'odd'] });
    const failing = i % 2 === 1;
    const other = docs[d].spans[(f + 1) % FACTS];
    predictions.push({
      id,
      answer: failing ? 'The value is ' + (value(d, f) + 1) + ' units.' : 'The value is ' + value(d, f) + ' units.',
      citations: [{ doc: 'part-' + d + '.md', start: failing ? other[0] : start, end: failing ? other[1] : end }],
      retrieved: [0, 1, 2, 3, 4].map((k) => {
        const [s, e] = docs[(d + k) % DOCS].spans[(f + (failing ? 1 : 0)) % FACTS];
        return { doc: 'part-' + ((d + k) % DOCS) + '.md', start: s, end: e };
      }),
      latency_ms: 5 + (i * 7919) % 400,
    });
  }
  files['suite.yaml'] = 'plumb: 1\nname: browser-large\ncorpus: docs\ninclude: [cases.jsonl]\n' +
                        'retrieval_k: [1, 5]\nfloors:\n  correct: 0.9\ncases: []\n';
  files['cases.jsonl'] = lib.jsonl(cases);
  files['predictions.jsonl'] = lib.jsonl(predictions);
  lib.writeFiles(dir, files);

  let t = Date.now();
  lib.score(args, path.join(dir, 'suite.yaml'), path.join(dir, 'predictions.jsonl'), path.join(dir, 'run'));
  console.log('plumb score, 10,000 cases: ' + (Date.now() - t) + ' ms');
  const html = path.join(dir, 'report.html');
  t = Date.now();
  const written = lib.writeRunReport(args, path.join(dir, 'run'), html, { cwd: dir });
  console.log('report written in ' + (Date.now() - t) + ' ms (' + written.stderr.trim() + ')');
  const bytes = fs.statSync(html).size;
  console.log('report size: ' + bytes + ' bytes (' + (bytes / 1048576).toFixed(2) + ' MiB)');
  checks.check('report under 25 MB', bytes < 25 * 1000 * 1000, bytes);

  const browser = await lib.launch({ viewport: { width: 1280, height: 900 } });
  try {
    const page = await browser.context.newPage();
    const requests = [];
    page.on('request', (r) => requests.push(r.url()));
    const start = Date.now();
    await page.goto('file://' + html, { waitUntil: 'commit', timeout: 120000 });
    await page.waitForSelector('.case', { state: 'visible', timeout: 120000 });
    const firstPaint = Date.now() - start;
    await page.waitForFunction(() => document.documentElement.getAttribute('data-ready') === '1',
                               null, { timeout: 120000, polling: 50 });
    const ready = Date.now() - start;
    console.log('first case visible after ' + firstPaint + ' ms; filters ready after ' + ready + ' ms');
    checks.equal('5,000 failed cards first', await page.$$eval('.case', (els) => {
      let firstPassed = els.findIndex((e) => e.dataset.status === 'passed');
      return [els.length, firstPassed, els.slice(0, firstPassed).every((e) => e.dataset.status === 'failed')];
    }), [CASES, CASES / 2, true]);
    checks.equal('chip counts', await page.$$eval('.chip', (els) =>
      els.map((e) => e.dataset.status + ' ' + e.querySelector('.c').textContent)),
    ['failed 5000', 'errored 0', 'passed 5000']);

    let f = Date.now();
    await page.click('.chip[data-status=failed]');
    await page.waitForFunction(() => document.getElementById('shown').textContent === 'Showing 5000 of 10000 cases.',
                               null, { timeout: 120000, polling: 20 });
    const chipMs = Date.now() - f;
    // part-3 is d = i % 20 in {3, 11, 19}: 1,500 cases, all odd i, so all failing; the failed
    // chip goes back on first.
    await page.click('.chip[data-status=failed]');
    f = Date.now();
    await page.selectOption('select[name=tag]', 'part-3');
    await page.waitForFunction(() => document.getElementById('shown').textContent === 'Showing 1500 of 10000 cases.',
                               null, { timeout: 120000, polling: 20 });
    const tagMs = Date.now() - f;
    f = Date.now();
    await page.fill('input[name=q]', 'case-00043');
    await page.waitForFunction(() => document.getElementById('shown').textContent === 'Showing 1 of 10000 cases.',
                               null, { timeout: 120000, polling: 20 });
    const searchMs = Date.now() - f;
    console.log('filter applied: status chip ' + chipMs + ' ms, tag ' + tagMs +
                ' ms, first text search (reads every card once) ' + searchMs + ' ms');
    checks.check('usable within 30 s (first paint, filters ready)', firstPaint < 30000 && ready < 30000,
                 { firstPaint, ready });
    checks.check('each filter applied within 30 s', Math.max(chipMs, tagMs, searchMs) < 30000,
                 { chipMs, tagMs, searchMs });
    checks.equal('no request but the file itself', requests.length, 1);
    await page.click('#reset');
    await page.screenshot({ path: path.join(args.artifacts, 'report-10000.png') });
  } finally {
    await browser.close();
  }
  if (!process.env.PLUMB_KEEP_BROWSER_TMP) fs.rmSync(dir, { recursive: true, force: true });
});
