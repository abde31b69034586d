// The drift page in a real browser: the verdict and the per-metric delta, interval and p-value
// at the top, lost cases first with base and candidate answers side by side, then gained ones,
// then the unchanged, and a status filter. The two runs are made with `plumb score`; the drift
// JSON is written here by hand in the shape the drift computation emits (runner/compare/drift_json.h),
// so every number the page must show is known.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

const DOC = '# Timetable\n\nThe first sailing leaves at 06:40. The last sailing leaves at 22:10.\n';

function suite(withGone) {
  return `plumb: 1
name: browser-drift
corpus: docs
max_error_rate: 1
cases:
  - id: first-sailing
    question: When is the first sailing?
    answers: ["06:40"]
    sources: [{doc: timetable.md, quote: "The first sailing leaves at 06:40."}]
    tags: [timetable]
  - id: last-sailing
    question: When is the last sailing?
    answers: ["22:10"]
    sources: [{doc: timetable.md, quote: "The last sailing leaves at 22:10."}]
    tags: [timetable]
  - id: sunday-sailings
    question: Are there sailings on Sunday?
    answers: ["yes, four"]
    tags: [weekend]
  - id: dogs
    question: Can dogs travel?
    answers: ["yes"]
    tags: [pets]
` + (withGone ? `  - id: gone-case
    question: A case the candidate's suite dropped?
    answers: ["gone"]
` : '');
}

const BASE = [
  { id: 'first-sailing', answer: '06:40', citations: [{ doc: 'timetable.md', start: 13, end: 47 }] },
  { id: 'last-sailing', answer: 'at 21:00' },
  { id: 'sunday-sailings', answer: 'no' },
  { id: 'dogs', answer: 'yes' },
  { id: 'gone-case', answer: 'gone' },
];
const CAND = [
  { id: 'first-sailing', answer: '07:15', citations: [{ doc: 'timetable.md', start: 48, end: 81 }] },
  { id: 'last-sailing', answer: '22:10' },
  { id: 'sunday-sailings', answer: 'never' },
  { id: 'dogs', answer: 'yes' },
];

function driftJson(baseDir, candDir) {
  const metric = (m, b, c, lo, hi, p, test, verdict, gated) => ({
    metric: m, base_mean: b, cand_mean: c, delta: c - b, interval: [lo, hi], p_value: p, test,
    verdict, n: 4, gated });
  return {
    plumb_drift: 1,
    suite: 'browser-drift',
    base: { dir: baseDir, pipeline: 'predictions', labels: { git: 'base111' }, suite_hash: 'x',
            corpus_fingerprint: 'y', started_at: '2026-01-01T00:00:00Z' },
    cand: { dir: candDir, pipeline: 'predictions', labels: { git: 'cand222' }, suite_hash: 'z',
            corpus_fingerprint: 'y', started_at: '2026-01-02T00:00:00Z' },
    changed: { suite: true, corpus: false, pipeline_config: false },
    paired_cases: 4,
    only_in_base: ['gone-case'],
    only_in_cand: [],
    gold_changed: [],
    metrics: [
      metric('correct', 0.5, 0.5, -0.75, 0.75, 1.0, 'mcnemar', 'steady', true),
      metric('token_f1', 0.75, 0.5, -0.625, 0.125, 0.5, 'wilcoxon', 'steady', false),
      metric('citation_recall', 1.0, 0.5, -1.0, -0.25, 0.03125, 'wilcoxon', 'regressed', false),
    ],
    tags: [{ tag: 'timetable', cases: 2, metrics: [
      { ...metric('correct', 0.5, 0.5, -1, 1, 1.0, 'mcnemar', 'steady', false), p_holm: 1.0 }] }],
    latency: { n: 4, p50: { base: 10, cand: 20, ratio: 2, interval: [1.5, 2.5] },
               p95: { base: null, cand: null, ratio: null, interval: null } },
    min_detectable_effect: { correct: 1.0, token_f1: 0.5 },
    lost: [{ id: 'first-sailing', deltas: { correct: -1, exact_match: -1, token_f1: -1 },
             base_answer: '06:40', cand_answer: '07:15', base_error: null, cand_error: null }],
    gained: [{ id: 'last-sailing', deltas: { correct: 1, exact_match: 1, token_f1: 0.5 },
               base_answer: 'at 21:00', cand_answer: '22:10', base_error: null, cand_error: null }],
    unstable: [],
    gate: { metrics: ['correct'], regressed: ['citation_recall'], broken_floors: [], exit_code: 1,
            reason: 'citation_recall regressed by 0.500' },
  };
}

lib.main('browser drift page', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  const dir = lib.tempDir('drift');
  lib.writeFiles(dir, {
    'base.yaml': suite(true), 'cand.yaml': suite(false), 'docs/timetable.md': DOC,
    'base.jsonl': lib.jsonl(BASE), 'cand.jsonl': lib.jsonl(CAND),
  });
  checks.equal('fixture: base citation', DOC.slice(13, 47), 'The first sailing leaves at 06:40.');
  checks.equal('fixture: cand citation', DOC.slice(48, 81), 'The last sailing leaves at 22:10.');
  const baseDir = path.join(dir, 'base');
  const candDir = path.join(dir, 'cand');
  lib.score(args, path.join(dir, 'base.yaml'), path.join(dir, 'base.jsonl'), baseDir);
  lib.score(args, path.join(dir, 'cand.yaml'), path.join(dir, 'cand.jsonl'), candDir);
  fs.writeFileSync(path.join(dir, 'drift.json'), JSON.stringify(driftJson(baseDir, candDir)));
  const html = path.join(dir, 'drift.html');
  lib.writeDriftReport(args, path.join(dir, 'drift.json'), baseDir, candDir, html);

  const browser = await lib.launch({ viewport: { width: 1280, height: 1000 } });
  try {
    const { page, seen, url } = await lib.openReport(browser.context, html);
    checks.equal('verdict', await page.textContent('h1 .verdict'), 'Regressed');
    checks.equal('reason', await page.textContent('.reason'), 'citation_recall regressed by 0.500');
    const rows = await page.$$eval('#scores tbody tr', (trs) => trs.map((tr) =>
      Array.from(tr.cells).map((td) => td.textContent.trim())));
    // metric, base, cand, delta, interval, (bar), p, test, n, verdict, gated
    checks.equal('citation_recall row', rows[2].filter((_, i) => i !== 5),
                 ['citation_recall', '1.000', '0.500', '\u22120.500', '\u22121.000 \u2026 \u22120.250',
                  '0.031', 'wilcoxon', '4', 'regressed', '']);
    checks.equal('correct row is gated', rows[0][10], 'gated');
    checks.check('tag rows show the Holm-adjusted p-value',
                 (await page.textContent('#tags tbody tr')).includes('1.000'));
    const latency = await page.textContent('#scores .note:last-of-type');
    checks.check('latency ratio with its interval',
                 latency.includes('p50 10 ms \u2192 20 ms, ratio 2.000 (95% interval 1.500\u20132.500)'),
                 latency);
    checks.check('latency p95 not measured', latency.includes('p95 not measured'), latency);
    const facts = await page.textContent('.facts');
    checks.check('labels of both runs', facts.includes('git=base111') && facts.includes('git=cand222'));
    checks.check('what changed', facts.includes('suite changed between the runs'), facts);
    checks.check('detectable effect',
                 facts.includes('smallest drop the gate catches (power 0.8)correct 1.000, token_f1 0.500'),
                 facts);

    checks.equal('lost first, then gained, then unchanged', await page.$$eval('.case', (els) =>
      els.map((e) => e.id.slice(5) + ':' + e.dataset.status)),
    ['first-sailing:lost', 'last-sailing:gained', 'sunday-sailings:failing', 'dogs:passing']);
    checks.equal('chip counts', await page.$$eval('.chip', (els) => els.map((e) =>
      e.dataset.status + ' ' + e.querySelector('.c').textContent)),
    ['lost 1', 'gained 1', 'failing 1', 'passing 1']);
    checks.equal('lost and gained open, unchanged folded',
                 await page.$$eval('.case', (els) => els.map((e) => e.open)), [true, true, false, false]);
    checks.equal('lost: per-case deltas from the drift', await page.textContent('#case-first-sailing .key'),
                 'correct \u22121.000 \u00b7 exact_match \u22121.000 \u00b7 token_f1 \u22121.000');
    const base = page.locator('#case-first-sailing .side.base');
    const cand = page.locator('#case-first-sailing .side.cand');
    checks.equal('lost: base answer', await base.locator('.answer').textContent(), '06:40');
    checks.equal('lost: candidate answer', await cand.locator('.answer').textContent(), '07:15');
    const [bb, cb] = [await base.boundingBox(), await cand.boundingBox()];
    checks.check('lost: base and candidate side by side', bb.x + bb.width <= cb.x + 1 &&
                 Math.abs(bb.y - cb.y) < 2, { base: bb, cand: cb });
    checks.equal('lost: base citation on the gold', await base.locator('.src .m-both').allTextContents(),
                 ['The first sailing leaves at 06:40.']);
    checks.equal('lost: candidate cites the wrong sentence',
                 await cand.locator('.src .m-cite').allTextContents(), ['The last sailing leaves at 22:10.']);
    checks.equal('lost: candidate diff', await cand.locator('.diff .tk').allTextContents(), ['0715', '0640']);
    checks.equal('only in base listed', await page.$$eval('.idlist li', (els) => els.map((e) => e.textContent)),
                 ['gone-case']);

    await page.screenshot({ path: path.join(args.artifacts, 'drift-page.png') });
    await page.click('.chip[data-status=lost]');
    checks.equal('lost chip off hides the lost case', await page.$$eval('.case', (els) =>
      els.filter((e) => !e.hidden).map((e) => e.id.slice(5))),
    ['last-sailing', 'sunday-sailings', 'dogs']);
    checks.equal('shown line', await page.textContent('#shown'), 'Showing 3 of 4 cases.');
    checks.equal('fragment', decodeURIComponent(await page.evaluate(() => location.hash)),
                 '#status=gained,failing,passing');
    checks.equal('no request but the file itself', seen.requests, [url]);
    checks.equal('no CSP violation', await page.evaluate(() => window.__violations), []);
    checks.equal('no page error', seen.errors, []);
  } finally {
    await browser.close();
  }
  if (!process.env.PLUMB_KEEP_BROWSER_TMP) fs.rmSync(dir, { recursive: true, force: true });
});
