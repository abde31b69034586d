// The compare page (`plumb compare --html`) in Debian's chromium: three runs of one recorded
// suite (fixtures/runs/, scored with `plumb score`), one of them with a hostile pipeline name,
// and warm-ups written into run.json so that one pair trades start-up for per-case time. The
// chart must draw one mark per run with its interval bar, both axis labels and the front the
// JSON names; labels must stay inside the drawing and the page no wider than the window; the
// hostile name must stay text; the break-even must be the one worked from the recorded figures.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

const HOSTILE = '<img src=x onerror="window.__pwned=1;console.log(\'PWNED\')">' +
                '</text></svg><script>window.__pwned=2</script> a very long pipeline name indeed';

function editRecord(dir, edit) {
  const file = path.join(dir, 'run.json');
  const record = JSON.parse(fs.readFileSync(file, 'utf8'));
  edit(record);
  fs.writeFileSync(file, JSON.stringify(record, null, 2));
}

function warmup(ms, n) {
  const workers = [];
  for (let w = 0; w < n; w++) {
    workers.push({ worker: w, restart: false, signal: 'ready_line', warmup_ms: ms, ready: { ready: true } });
  }
  return { signal: 'ready_line', n, restarts: 0, mean_ms: ms, max_ms: ms, workers };
}

lib.main('browser compare', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  const dir = lib.tempDir('compare');
  const runs = path.join(args.source, 'fixtures/runs');
  const suite = path.join(runs, 'suite.yaml');
  const a = path.join(dir, 'a'), b = path.join(dir, 'b'), c = path.join(dir, 'c');
  lib.score(args, suite, path.join(runs, 'base.jsonl'), a);
  lib.score(args, suite, path.join(runs, 'cand-broken20.jsonl'), b);
  lib.score(args, suite, path.join(runs, 'cand-flip2-mixed.jsonl'), c);
  // a: quick start, slower cases; b: the hostile name, a long start-up and faster cases.
  editRecord(a, (r) => {
    r.pipeline.name = 'retrieve';
    r.aggregates.warmup = warmup(50, 2);
    r.aggregates.latency_ms.mean = 100;
  });
  editRecord(b, (r) => {
    r.pipeline.name = HOSTILE;
    r.aggregates.warmup = warmup(4000, 1);
    r.aggregates.latency_ms.mean = 20;
    r.aggregates.latency_ms.p95 = r.aggregates.latency_ms.p95 / 10;
  });
  editRecord(c, (r) => { r.pipeline.name = 'preload'; });

  const html = path.join(args.artifacts, 'compare.html');
  const cmp = lib.run(args.plumb, ['compare', a, b, c, '--html', html, '--json']);
  checks.check('compare exits 1 (the broken run regressed against the first)', cmp.status === 1,
               cmp.stderr);
  const json = JSON.parse(cmp.stdout);
  checks.equal('three runs in the JSON', json.runs.length, 3);
  // (4000 - 50) / (100 - 20) = 49.375: from 50 cases on (break_even_test.cc works the same).
  const be = json.break_even.find((x) => x.quick_start === 'retrieve');
  checks.check('the break-even of the long start-up against retrieve is 50 cases',
               be !== undefined && be.cases === 50, json.break_even);

  const browser = await lib.launch({ viewport: { width: 1280, height: 900 } });
  try {
    const { page, seen } = await lib.openReport(browser.context, html);
    const marks = await page.$$eval('svg#tradeoff g.run', (gs) => gs.length);
    checks.equal('one mark per run', marks, 3);
    checks.equal('one dot per run', await page.$$eval('svg#tradeoff g.run circle.mk', (x) => x.length), 3);
    checks.equal('an interval bar per run (stem and two caps)',
                 await page.$$eval('svg#tradeoff g.run line.eb', (x) => x.length), 9);
    const xt = await lib.texts(page, 'svg#tradeoff text.xt');
    const yt = await lib.texts(page, 'svg#tradeoff text.yt');
    checks.check('x axis says latency p95 on a log scale', xt.length === 1 && xt[0].includes('latency p95') && xt[0].includes('logarithmic'), xt);
    checks.check('y axis says correct with its interval', yt.length === 1 && yt[0].startsWith('correct'), yt);
    const decades = await lib.texts(page, 'svg#tradeoff text.xl');
    checks.check('decade labels on the latency axis', decades.length >= 2 && decades.every((t) => / (ms|s)$/.test(t)), decades);
    const front = await page.$eval('svg#tradeoff polyline.front', (p) => p.getAttribute('points').trim().split(/\s+/).length).catch(() => 0);
    const onFront = await page.$$eval('svg#tradeoff g.run.on', (gs) => gs.length);
    checks.equal('the front joins the filled marks', front, onFront);
    checks.equal('the marks on the front are the JSON front', onFront, json.front.length);
    checks.check('the hostile run is on the front (fastest)', json.front.includes(json.runs[1].name), json.front);
    const labels = await lib.texts(page, 'svg#tradeoff text.nm');
    checks.check('the hostile name is drawn as text, cut with an ellipsis',
                 labels.some((t) => t.startsWith('<img src=x') && t.endsWith('\u2026') && t.length <= 28), labels);
    checks.check('the run names are labels', labels.includes('retrieve') && labels.includes('preload'), labels);
    const headCell = await page.$$eval('table#figures th.run', (ths) => ths.map((t) => t.textContent));
    checks.check('the table heads carry the whole hostile name as text', headCell.includes(HOSTILE), headCell);
    checks.equal('no element made from a name', await page.$$eval('img, main script, svg script', (x) => x.length), 0);
    checks.check('nothing ran', await page.evaluate(() => window.__pwned === undefined), null);
    // Inside the drawing: every text of the chart within the chart's box on the screen (the
    // y axis title is rotated, so its own getBBox would not say where it is drawn).
    const outside = await page.$eval('svg#tradeoff', (svg) => {
      const box = svg.getBoundingClientRect();
      return Array.from(svg.querySelectorAll('text')).map((t) => {
        const b = t.getBoundingClientRect();
        return { t: t.textContent, left: b.left - box.left, right: box.right - b.right,
                 top: b.top - box.top, bottom: box.bottom - b.bottom };
      }).filter((b) => b.left < -0.5 || b.right < -0.5 || b.top < -0.5 || b.bottom < -0.5);
    });
    checks.equal('every chart text inside the chart', outside, []);
    const wide = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    checks.check('the page is no wider than the window', wide <= 0, wide);
    const statements = await lib.texts(page, '#statements li.breakeven');
    checks.check('the page states the break-even', statements.some((s) => s.includes('from 50 cases on')), statements);
    const footer = await page.textContent('footer');
    checks.check('the page carries the caution', footer.includes('certify') && footer.includes('medical'), footer);
    checks.equal('no request but the page', seen.requests.filter((u) => !u.startsWith('file://')), []);
    checks.equal('no page errors', seen.errors, []);
    checks.equal('no console output', seen.console.filter((m) => m.includes('PWNED')), []);
    checks.equal('no CSP violation', await page.evaluate(() => window.__violations), []);
    await page.screenshot({ path: path.join(args.artifacts, 'compare.png'), fullPage: true });

    // A narrow window: the chart shrinks with the page instead of widening it.
    await page.setViewportSize({ width: 700, height: 900 });
    const narrow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    checks.check('no overflow at 700 px either', narrow <= 0, narrow);

    // The demo: both demo pipelines over suites/ferry.yaml with their ready lines, compared.
    if (args['demo-pipeline']) {
      const docs = path.join(args.source, 'fixtures/ferry/docs');
      const pipeline = (name, extra) => `  ${name}:
    command: [${JSON.stringify(args['demo-pipeline'])}, --docs, ${JSON.stringify(docs)}, ${extra}, --ready-line]
    mode: persistent
    ready: line
    timeout: 30s
`;
      fs.writeFileSync(path.join(dir, 'pipelines.yaml'), 'pipelines:\n' +
                       pipeline('retrieve', '--top-k, "3"') + pipeline('preload', '--preload'));
      const out = path.join(dir, 'demo');
      const r = lib.run(args.plumb, ['run', path.join(args.source, 'suites/ferry.yaml'),
                                     '--pipelines', path.join(dir, 'pipelines.yaml'),
                                     '--pipeline', 'retrieve', '--pipeline', 'preload', '--out', out,
                                     '--grade-cache', path.join(dir, 'grades.sqlite')],
                        { cwd: args.source });
      checks.check('demo runs finished (exit 0 or 1)', r.status === 0 || r.status === 1, r.stderr);
      const ready = JSON.parse(fs.readFileSync(path.join(out, 'preload', 'run.json'), 'utf8'))
          .aggregates.warmup.workers[0].ready;
      checks.check('the preload ready line says what it preloaded',
                   ready.architecture === 'preload' && ready.tokens_preloaded > 0 && ready.chunks > 0,
                   ready);
      const demoHtml = path.join(args.artifacts, 'compare-demo.html');
      const d = lib.run(args.plumb, ['compare', path.join(out, 'retrieve'), path.join(out, 'preload'),
                                     '--html', demoHtml], { cwd: args.source });
      checks.check('compare on the demo finished (exit 0 or 1)', d.status === 0 || d.status === 1,
                   d.stderr);
      checks.check('compare on the demo prints the table',
                   d.stdout.includes('latency p95') && d.stdout.includes('warm-up'), d.stdout);
      const demo = await lib.openReport(browser.context, demoHtml);
      checks.equal('demo: a mark per pipeline',
                   await demo.page.$$eval('svg#tradeoff g.run circle.mk', (x) => x.length), 2);
      checks.equal('demo: the labels are the pipelines',
                   (await lib.texts(demo.page, 'svg#tradeoff text.nm')).sort(), ['preload', 'retrieve']);
      checks.check('demo: axis labels drawn',
                   (await lib.texts(demo.page, 'svg#tradeoff text.xt'))[0].includes('latency p95') &&
                   (await lib.texts(demo.page, 'svg#tradeoff text.yt'))[0].startsWith('correct'));
      checks.check('demo: the front is drawn',
                   (await demo.page.$$('svg#tradeoff polyline.front')).length === 1);
      checks.equal('demo: no page errors', demo.seen.errors, []);
      await demo.page.screenshot({ path: path.join(args.artifacts, 'compare-demo.png'), fullPage: true });
    }
  } finally {
    await browser.close();
  }
  fs.rmSync(dir, { recursive: true, force: true });
});
