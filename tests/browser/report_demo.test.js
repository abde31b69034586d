// The demo suite's report (suites/ferry.yaml run by the bundled demo pipeline), as a reviewer
// would open it from CI: its case counts must agree with the run's own record (run.json's
// aggregates, computed by the runner, not by the page), it must load nothing but itself, and
// screenshots of its top and of its first failed cases are left in the artifacts folder.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

lib.main('browser demo report', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  if (!args['demo-pipeline']) throw new Error('missing --demo-pipeline');
  const dir = lib.tempDir('demo');
  const docs = path.join(args.source, 'fixtures/ferry/docs');
  // The suite's own pipelines name build/fixtures/demo-pipeline; point them at this build's.
  fs.writeFileSync(path.join(dir, 'pipelines.yaml'), `pipelines:
  retrieve:
    command: [${JSON.stringify(args['demo-pipeline'])}, --docs, ${JSON.stringify(docs)}, --top-k, "3"]
    mode: persistent
    timeout: 30s
`);
  const runDir = path.join(dir, 'run');
  const r = lib.run(args.plumb, ['run', path.join(args.source, 'suites/ferry.yaml'), '--pipelines',
                                 path.join(dir, 'pipelines.yaml'), '--out', runDir,
                                 '--label', 'git=demo'], { cwd: args.source });
  checks.check('demo run finished (exit 0 or 1)', r.status === 0 || r.status === 1, r.stderr);
  const html = path.join(args.artifacts, 'ferry-report.html');
  lib.writeRunReport(args, runDir, html, { cwd: args.source });
  const bytes = fs.statSync(html).size;
  console.log('demo report size: ' + bytes + ' bytes (' + (bytes / 1024).toFixed(0) + ' KiB)');

  const record = JSON.parse(fs.readFileSync(path.join(runDir, 'run.json'), 'utf8'));
  const agg = record.aggregates;
  const browser = await lib.launch({ viewport: { width: 1280, height: 1000 } });
  try {
    const { page, seen, url } = await lib.openReport(browser.context, html);
    const counts = await page.$$eval('.chip', (els) =>
      Object.fromEntries(els.map((e) => [e.dataset.status, Number(e.querySelector('.c').textContent)])));
    checks.equal('cases on the page = cases in run.json', await page.$$eval('.case', (e) => e.length), agg.cases);
    checks.equal('passed = run.json aggregates.passed', counts.passed, agg.passed);
    checks.equal('failed + errored = the rest', counts.failed + counts.errored, agg.cases - agg.passed);
    checks.equal('errored = run.json aggregates.errored', counts.errored, agg.errored);
    const statuses = await page.$$eval('.case', (els) => els.map((e) => e.dataset.status));
    const firstPassed = statuses.indexOf('passed');
    checks.check('every failed or errored case comes before every passed one',
                 statuses.slice(firstPassed).every((s) => s === 'passed'));
    const broken = record.thresholds.filter((t) => !t.held).length;
    checks.equal('floors table: one BROKEN per broken threshold',
                 (await lib.texts(page, '#floors .res.broken')).length, broken);
    checks.check('footer caution', (await page.textContent('footer')).includes(
      'It does not certify the pipeline for legal, medical or safety-critical use'));
    checks.equal('no request but the file itself', seen.requests, [url]);
    checks.equal('no CSP violation', await page.evaluate(() => window.__violations), []);
    checks.equal('no page error', seen.errors, []);
    await page.screenshot({ path: path.join(args.artifacts, 'ferry-report-top.png') });
    await page.evaluate(() => document.getElementById('cases').scrollIntoView());
    await page.waitForTimeout(100);
    await page.screenshot({ path: path.join(args.artifacts, 'ferry-report-cases.png') });
  } finally {
    await browser.close();
  }
  if (!process.env.PLUMB_KEEP_BROWSER_TMP) fs.rmSync(dir, { recursive: true, force: true });
});
