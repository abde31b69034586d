// The first screen of the run page, as a reviewer with one minute sees it (issue 20, "Done
// when"): at 1400x900 the verdict, the cause breakdown and the first failed card are all in view
// before any scrolling; no element is wider than the page; the latency chart (and on the drift
// page the base/candidate overlay and the per-tag delta charts) render with labelled axes and a
// text alternative. Made from the demo suite run by the bundled pipeline, both ways (retrieve
// and preload), and the drift between them; counts are checked against run.json and the drift
// JSON, which the runner computed, not the page.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

const VIEWPORT = { width: 1400, height: 900 };

// Elements whose box reaches past the right edge of the page (a tooltip clipped to 1 px and
// not shown counts too, so a hidden overflow is caught as well as a shown one).
async function overflowing(page) {
  return page.evaluate(() => {
    const width = document.documentElement.clientWidth;
    const out = [];
    for (const el of document.body.querySelectorAll('*')) {
      const r = el.getBoundingClientRect();
      if (r.width > 0 && r.right > width + 0.5) {
        out.push(el.tagName.toLowerCase() + '.' + el.getAttribute('class') + ' ' + Math.round(r.right));
      }
    }
    return { scrollWidth: document.documentElement.scrollWidth, width, elements: out.slice(0, 8) };
  });
}

async function box(page, selector) {
  const el = await page.$(selector);
  return el ? el.boundingBox() : null;
}

function inFirstScreen(b) {
  return b !== null && b.y >= 0 && b.y + b.height <= VIEWPORT.height && b.x >= 0 &&
         b.x + b.width <= VIEWPORT.width;
}

// The axis labels and text alternative of one chart.
async function chartFacts(page, selector) {
  return page.$eval(selector, (svg) => ({
    width: svg.getBoundingClientRect().width,
    title: svg.querySelector('title') ? svg.querySelector('title').textContent : '',
    desc: svg.querySelector('desc') ? svg.querySelector('desc').textContent : '',
    labelledBy: svg.getAttribute('aria-labelledby'),
    ticks: Array.from(svg.querySelectorAll('text.xl')).map((t) => t.textContent),
    xTitle: svg.querySelector('text.xt') ? svg.querySelector('text.xt').textContent : '',
    yTitle: svg.querySelector('text.yt') ? svg.querySelector('text.yt').textContent : '',
    yTicks: Array.from(svg.querySelectorAll('text.yl')).map((t) => t.textContent),
    lines: Array.from(svg.querySelectorAll('path.cdf')).map((p) => p.getAttribute('d').length),
    // A label drawn: its box has a size (so the font rendered it).
    drawnLabels: Array.from(svg.querySelectorAll('text')).filter((t) => t.getBBox().width > 0).length,
  }));
}

lib.main('browser report first screen', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  if (!args['demo-pipeline']) throw new Error('missing --demo-pipeline');
  const dir = lib.tempDir('first-screen');
  const docs = path.join(args.source, 'fixtures/ferry/docs');
  const pipeline = (name, extra) => `  ${name}:
    command: [${JSON.stringify(args['demo-pipeline'])}, --docs, ${JSON.stringify(docs)}, ${extra}]
    mode: persistent
    timeout: 30s
`;
  fs.writeFileSync(path.join(dir, 'pipelines.yaml'), 'pipelines:\n' +
                   pipeline('retrieve', '--top-k, "3"') + pipeline('preload', '--preload'));
  const out = path.join(dir, 'runs');
  const r = lib.run(args.plumb, ['run', path.join(args.source, 'suites/ferry.yaml'), '--pipelines',
                                 path.join(dir, 'pipelines.yaml'), '--pipeline', 'retrieve',
                                 '--pipeline', 'preload', '--out', out], { cwd: args.source });
  checks.check('demo runs finished (exit 0 or 1)', r.status === 0 || r.status === 1, r.stderr);
  const runDir = path.join(out, 'retrieve');
  const html = path.join(args.artifacts, 'first-screen-run.html');
  lib.writeRunReport(args, runDir, html, { cwd: args.source });
  const driftHtml = path.join(args.artifacts, 'first-screen-drift.html');
  const d = lib.run(args.plumb, ['drift', runDir, path.join(out, 'preload'), '--html', driftHtml,
                                 '--json'], { cwd: args.source });
  checks.check('drift finished (exit 0 or 1)', d.status === 0 || d.status === 1, d.stderr);
  const drift = JSON.parse(d.stdout);
  const record = JSON.parse(fs.readFileSync(path.join(runDir, 'run.json'), 'utf8'));
  const failed = record.aggregates.cases - record.aggregates.passed - record.aggregates.errored;

  const browser = await lib.launch({ viewport: VIEWPORT });
  try {
    const { page, seen, url } = await lib.openReport(browser.context, html);
    // The first screen: verdict, cause breakdown, first failed card.
    checks.check('verdict in the first screen', inFirstScreen(await box(page, 'h1 .verdict')));
    checks.check('verdict reason in full (no "...")', !(await page.textContent('.reason')).includes('...'));
    checks.equal('verdict reason = run.json verdict.reason', await page.textContent('.reason'),
                 record.verdict.reason);
    checks.check('cause breakdown in the first screen', inFirstScreen(await box(page, '#causes')),
                 await box(page, '#causes'));
    const causeRows = await page.$$eval('#causes tbody tr:not(.sub)', (trs) => trs.map((tr) =>
      [tr.querySelector('a').getAttribute('href'), tr.cells[1].textContent]));
    checks.equal('cause breakdown = run.json failures', causeRows,
                 record.failures.causes.map((c) => ['#cause=' + c.cause, String(c.count)]));
    checks.equal('causes add up to the failed and errored cases',
                 record.failures.causes.reduce((n, c) => n + c.count, 0), failed + record.aggregates.errored);
    const first = '[data-group=failed] .case:first-of-type > summary';
    checks.check('first failed card in the first screen', inFirstScreen(await box(page, first)),
                 await box(page, first));
    checks.equal('first failed card is open', await page.$eval('[data-group=failed] .case', (e) => e.open), true);
    const opened = await page.$$eval('[data-group=failed] .case', (els) => els.map((e) => e.open));
    checks.equal('the first ten failed cards open, the rest folded', opened,
                 opened.map((_, i) => i < 10));
    // Below the cards: the scores, the latency chart and the tag grid, in that order.
    const order = await page.$$eval('main > section, main > div > section', (els) => els.map((e) => e.id));
    checks.equal('sections in order', order, ['floors', 'causes', 'cases', 'scores', 'latency', 'tags']);
    checks.equal('no element wider than the page', (await overflowing(page)).elements, []);
    checks.check('no sideways scroll', (await overflowing(page)).scrollWidth <= VIEWPORT.width);

    // The latency chart: log axis with decade labels, both axis titles, a line, a description
    // with the run's own p50 (run.json aggregates.latency_ms).
    const chart = await chartFacts(page, '#latency svg.latency');
    checks.check('latency chart drawn', chart.width > 300 && chart.lines.length === 1 && chart.lines[0] > 20,
                 chart);
    checks.check('latency x labels are decades', chart.ticks.length >= 2 &&
                 chart.ticks.every((t) => /^(0\.0*1 ms|1(0)* ms|1(0)* s)$/.test(t)), chart.ticks);
    checks.equal('latency axis titles', [chart.xTitle, chart.yTitle],
                 ['latency of a reply (logarithmic scale)', 'replies at or below']);
    checks.equal('latency y labels', chart.yTicks, ['0%', '25%', '50%', '75%', '100%']);
    checks.check('latency labels rendered', chart.drawnLabels >= chart.ticks.length + 7, chart.drawnLabels);
    checks.equal('latency chart named by its title and desc', chart.labelledBy,
                 'latency-chart-t latency-chart-d');
    const p50 = record.aggregates.latency_ms.p50;
    const p50Words = p50 < 10 ? p50.toFixed(2) + ' ms' : p50.toFixed(0) + ' ms';
    checks.check('latency desc gives the run\'s p50', chart.desc.includes('p50 ' + p50Words), chart.desc);

    // The tag grid fits: every metric column inside the page, values in words on focus.
    const grid = await box(page, '#tags table');
    checks.check('tag grid within the page width', grid && grid.x + grid.width <= VIEWPORT.width, grid);
    await page.focus('#tags tbody td[tabindex]');
    checks.check('a focused grid cell shows its interval', await page.$eval('#tags tbody td[tabindex] .tip',
      (t) => t.getBoundingClientRect().width > 50 && t.textContent.includes('95% interval')));

    // lang marks on the French and Japanese questions.
    checks.equal('French question marked fr',
                 await page.getAttribute('#case-fr-fin-embarquement .sq', 'lang'), 'fr');
    checks.equal('Japanese question marked ja',
                 await page.getAttribute('#case-ja-car-checkin .sq', 'lang'), 'ja');
    checks.equal('English question not marked',
                 await page.getAttribute('#case-boarding-cutoff .sq', 'lang'), null);

    // A cause is a link that filters the cards.
    const top = record.failures.causes[0];
    await page.click('#causes a[href="#cause=' + top.cause + '"]');
    await page.waitForFunction((n) => document.getElementById('shown').textContent.startsWith('Showing ' + n + ' '),
                               top.count);
    checks.equal('the cause link shows that cause\'s cards only', await page.$$eval('.case',
      (els) => [...new Set(els.filter((e) => !e.hidden).map((e) => e.dataset.cause))]), [top.cause]);
    checks.equal('shown line names the cause', await page.textContent('#shown'),
                 'Showing ' + top.count + ' of ' + record.aggregates.cases + ' cases. Cause: ' + top.label + '.');
    checks.equal('the cause is in the fragment', await page.evaluate(() => location.hash), '#cause=' + top.cause);
    await page.click('#reset');
    checks.equal('clear filters shows every case again', await page.textContent('#shown'),
                 'Showing ' + record.aggregates.cases + ' of ' + record.aggregates.cases + ' cases.');

    checks.equal('no request but the file itself', seen.requests, [url]);
    checks.equal('no CSP violation', await page.evaluate(() => window.__violations), []);
    checks.equal('no page error', seen.errors, []);
    await page.goto(url);
    await page.screenshot({ path: path.join(args.artifacts, 'first-screen-run.png') });
    await page.close();

    // The drift page: the comparison and the floors said apart, both runs' latency, and one
    // delta chart per gated metric with a row for all cases and one per tag.
    const drifted = await lib.openReport(browser.context, driftHtml);
    const dp = drifted.page;
    const lines = await lib.texts(dp, '.lines li');
    const improved = drift.metrics.filter((m) => m.verdict === 'improved').map((m) => m.metric);
    checks.equal('comparison line', lines[0], 'Against the base: ' +
                 (drift.gate.regressed.length ? 'gated ' + drift.gate.regressed.join(', ') + ' regressed' : 'no regression') +
                 (improved.length ? '; ' + improved.length + ' improved (' + improved.join(', ') + ').' : '; nothing improved.'));
    checks.check('floors line: the same floors as the base (same suite, both break them)',
                 lines[1].startsWith('Floors and ceilings: the candidate breaks the same ' +
                                     drift.gate.broken_floors.length + ' floors as the base'), lines[1]);
    const lostCauses = drift.lost_by_cause ? drift.lost_by_cause.causes : [];
    checks.equal('lost cases by cause, as links', await dp.$$eval('[data-group=lost] h3 a', (as) =>
      as.map((a) => a.getAttribute('href'))), lostCauses.sort((a, b) => b.count - a.count)
      .map((c) => '#status=lost&cause=' + c.cause));
    const overlay = await chartFacts(dp, '#latency svg.latency');
    checks.equal('drift latency: base and candidate lines', overlay.lines.length, 2);
    checks.check('drift latency legend names both', (await dp.textContent('#latency figcaption'))
      .includes('base retrieve (solid)') && (await dp.textContent('#latency figcaption')).includes('candidate preload (dashed)'));
    const deltas = await dp.$$eval('svg.deltas', (svgs) => svgs.map((s) => ({
      title: s.querySelector('title').textContent,
      rows: s.querySelectorAll('g.row').length,
      band: s.querySelectorAll('rect.band').length,
      zero: s.querySelectorAll('line.zero').length,
      ticks: Array.from(s.querySelectorAll('text.xl')).map((t) => t.textContent),
      xTitle: s.querySelector('text.xt').textContent,
      width: s.getBoundingClientRect().width,
    })));
    checks.equal('one delta chart per gated metric', deltas.map((c) => c.title),
                 drift.gate.metrics.map((m) => m + ': candidate minus base, by tag'));
    const rowsOf = (m) => 1 + drift.tags.filter((t) => t.metrics.some((x) => x.metric === m)).length;
    checks.equal('a row for all cases and per tag', deltas.map((c) => c.rows), drift.gate.metrics.map(rowsOf));
    checks.check('zero line, min-effect band and labelled axis', deltas.every((c) =>
      c.band === 1 && c.zero === 1 && c.ticks.includes('0') && c.ticks.length === 5 &&
      c.xTitle.includes('delta, candidate \u2212 base') && c.width > 250), deltas);
    checks.equal('drift page: no element wider than the page', (await overflowing(dp)).elements, []);
    checks.equal('drift page: no CSP violation', await dp.evaluate(() => window.__violations), []);
    checks.equal('drift page: no page error', drifted.seen.errors, []);
    await dp.screenshot({ path: path.join(args.artifacts, 'first-screen-drift.png') });
  } finally {
    await browser.close();
  }
  if (!process.env.PLUMB_KEEP_BROWSER_TMP) fs.rmSync(dir, { recursive: true, force: true });
});
