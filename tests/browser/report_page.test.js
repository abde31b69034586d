// The run report in a real browser: failed cases first with the right counts, filters that
// change the visible cases and the counts and live in the URL fragment, the token diff, the
// citation marks on the right characters, no request but the file itself, and a page that
// still shows every case with scripting off. The suite, corpus and replies are written here;
// every expected value is worked by hand below from the texts and the metric definitions of
// SPEC §6 (SQuAD normalization and token F1, the §6.3 hit rule).
'use strict';

const crypto = require('node:crypto');
const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

// boarding.md, by code point (all ASCII, so JavaScript string indexes agree):
//   "# Boarding\n" 0-11, "\n" 11-12,
//   "Foot passengers: " 12-29, "Boarding closes " 29-45, "ten minutes before departure." 45-74,
//   " Cars board first.\n" 74-93,
//   "Drivers check in " 93-110, "at least 20 minutes before departure." 110-147, "\n" 147-148
// so "board" starts at 80 (after " Cars " 74-80) and "at least 20" ends at 121.
const BOARDING =
    '# Boarding\n\nFoot passengers: Boarding closes ten minutes before departure. Cars board ' +
    'first.\nDrivers check in at least 20 minutes before departure.\n';
const FARES = '# Fares\n\nA car costs 40 pounds each way. Foot passengers pay 6 pounds.\n';

const SUITE = `plumb: 1
name: browser-page
corpus: docs
normalize: squad
case_pass: {correct: 1}
max_error_rate: 0.5
floors:
  correct: 0.5
cases:
  - id: boarding-close
    question: When does boarding close for foot passengers?
    answers: ["ten minutes before departure"]
    sources:
      - {doc: boarding.md, quote: "Boarding closes ten minutes before departure."}
    tags: [boarding]
  - id: no-cabins
    question: Is there a cabin on board?
    answers: []
    tags: [abstain]
  - id: checkin-cars
    question: How early must drivers check in?
    answers: ["at least 20 minutes before departure"]
    sources:
      - {doc: boarding.md, quote: "Drivers check in at least 20 minutes before departure."}
    tags: [boarding, vehicles]
  - id: pets-onboard
    question: May I bring my dog?
    answers: ["dogs on a lead"]
    tags: [pets]
  - id: car-fare
    question: How much is it to take a car across?
    answers: ["40 pounds each way"]
    number: {value: 40, tolerance: 0}
    sources:
      - {doc: fares.md, quote: "A car costs 40 pounds each way."}
    tags: [fares, vehicles]
`;

// pets-onboard has no prediction: a case error.
const PREDICTIONS = [
  { id: 'boarding-close', answer: 'Ten minutes before departure.',
    citations: [{ doc: 'boarding.md', start: 45, end: 79 }], latency_ms: 12 },
  { id: 'no-cabins', answer: null, citations: [], latency_ms: 3 },
  { id: 'checkin-cars', answer: 'At least 30 minutes before departure.',
    citations: [{ doc: 'boarding.md', start: 80, end: 121 }],
    retrieved: [{ doc: 'fares.md', start: 0, end: 8 }, { doc: 'boarding.md', start: 93, end: 148 }],
    latency_ms: 40 },
  { id: 'car-fare', answer: '6 pounds',
    citations: [{ doc: 'fares.md', quote: 'Foot passengers pay 6 pounds.' }], latency_ms: 25 },
];

async function visibleIds(page) {
  return page.$$eval('.case', (els) => els.filter((e) => !e.hidden).map((e) => e.id.slice(5)));
}

async function chipCounts(page) {
  return page.$$eval('.chip', (els) =>
    Object.fromEntries(els.map((e) => [e.dataset.status, Number(e.querySelector('.c').textContent)])));
}

lib.main('browser report page', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  const dir = lib.tempDir('page');
  lib.writeFiles(dir, {
    'suite.yaml': SUITE, 'docs/boarding.md': BOARDING, 'docs/fares.md': FARES,
    'predictions.jsonl': lib.jsonl(PREDICTIONS),
  });
  // Guard the hand-worked offsets against a typo in the texts above.
  checks.equal('fixture: cited span text', BOARDING.slice(80, 121),
               'board first.\nDrivers check in at least 20');
  checks.equal('fixture: gold span text', BOARDING.slice(93, 147),
               'Drivers check in at least 20 minutes before departure.');
  lib.score(args, path.join(dir, 'suite.yaml'), path.join(dir, 'predictions.jsonl'),
            path.join(dir, 'run'));
  const html = path.join(dir, 'report.html');
  lib.writeRunReport(args, path.join(dir, 'run'), html, { cwd: dir });

  const browser = await lib.launch();
  try {
    const { page, seen, url } = await lib.openReport(browser.context, html);

    // Failed cases first, in suite order, then errored, then passed.
    checks.equal('cards: failed, errored, then passed', await page.$$eval('.case', (els) =>
      els.map((e) => e.id.slice(5) + ':' + e.dataset.status)),
    ['checkin-cars:failed', 'car-fare:failed', 'pets-onboard:errored', 'boarding-close:passed',
     'no-cabins:passed']);
    checks.equal('status counts on the chips', await chipCounts(page),
                 { failed: 2, errored: 1, passed: 2 });
    checks.equal('shown line', await page.textContent('#shown'), 'Showing 5 of 5 cases.');
    checks.check('header counts', (await page.textContent('.facts')).includes(
      '5: 2 failed, 1 errored, 2 passed'));
    checks.equal('failed open, passed folded', await page.$$eval('.case', (els) =>
      els.map((e) => e.open)), [true, true, true, false, false]);
    checks.check('verdict: floor broken (correct 2/5 = 0.4 < 0.5)',
                 (await page.textContent('h1 .verdict')) === 'Floors broken');

    // A status chip click hides the passed cases; the counts stay those of the other filters.
    await page.click('.chip[data-status=passed]');
    checks.equal('passed off: visible cases', await visibleIds(page),
                 ['checkin-cars', 'car-fare', 'pets-onboard']);
    checks.equal('passed off: shown line', await page.textContent('#shown'), 'Showing 3 of 5 cases.');
    checks.equal('passed off: chip pressed state',
                 await page.getAttribute('.chip[data-status=passed]', 'aria-pressed'), 'false');
    checks.equal('passed off: fragment', decodeURIComponent(await page.evaluate(() => location.hash)),
                 '#status=failed,errored');

    // Tag filter: vehicles holds checkin-cars and car-fare, both failed.
    await page.selectOption('select[name=tag]', 'vehicles');
    checks.equal('tag vehicles: visible', await visibleIds(page), ['checkin-cars', 'car-fare']);
    checks.equal('tag vehicles: chip counts', await chipCounts(page),
                 { failed: 2, errored: 0, passed: 0 });
    checks.equal('tag vehicles: group line', await page.textContent('[data-group=failed] .n-shown'),
                 '2 shown');

    // Metric under a value. token_f1 by hand (SQuAD tokens, multiset F1):
    //   checkin-cars: [at least 30 minutes before departure] vs [at least 20 ...]: P = R = 5/6
    //   car-fare: [6 pounds] vs [40 pounds each way]: common 1, P = 1/2, R = 1/4, F1 = 1/3
    //   pets-onboard: errored, 0;  boarding-close: exact, 1;  no-cabins: abstained rightly, 1
    await page.click('#reset');
    await page.selectOption('select[name=metric]', 'token_f1');
    await page.fill('input[name=below]', '0.5');
    await page.waitForFunction(() => document.getElementById('shown').textContent.startsWith('Showing 2'));
    checks.equal('token_f1 under 0.5: visible', await visibleIds(page), ['car-fare', 'pets-onboard']);
    checks.equal('token_f1 under 0.5: chip counts', await chipCounts(page),
                 { failed: 1, errored: 1, passed: 0 });
    const hash = decodeURIComponent(await page.evaluate(() => location.hash));
    checks.equal('metric filter in the fragment', hash, '#metric=token_f1&below=0.5');

    // Sorting by the chosen metric puts car-fare (1/3) before checkin-cars (5/6).
    await page.click('#reset');
    await page.selectOption('select[name=metric]', 'token_f1');
    await page.selectOption('select[name=sort]', 'metric');
    checks.equal('sort by token_f1 within the failed group',
                 await page.$$eval('[data-group=failed] .case', (els) => els.map((e) => e.id.slice(5))),
                 ['car-fare', 'checkin-cars']);

    // Text search.
    await page.click('#reset');
    await page.fill('input[name=q]', 'cabin');
    await page.waitForFunction(() => document.getElementById('shown').textContent.startsWith('Showing 1'));
    checks.equal('search "cabin"', await visibleIds(page), ['no-cabins']);

    // The token diff of checkin-cars: extra 30, missing 20, the rest matched.
    const diff = '#case-checkin-cars .diff';
    checks.equal('diff: matched tokens', await lib.texts(page, diff + ' .tk.ok'),
                 ['at', 'least', 'minutes', 'before', 'departure']);
    checks.equal('diff: missing tokens', await lib.texts(page, diff + ' .tk.miss'), ['20']);
    checks.equal('diff: extra tokens', await lib.texts(page, diff + ' .tk.extra'), ['30']);
    checks.equal('diff: order', await page.$$eval(diff + ' .tk', (els) =>
      els.map((e) => e.className.split(' ')[1] + ':' + e.textContent)),
    ['ok:at', 'ok:least', 'extra:30', 'miss:20', 'ok:minutes', 'ok:before', 'ok:departure']);

    // Citation marks of checkin-cars: gold [93, 147), cited [80, 121).
    const src = '#case-checkin-cars .src';
    checks.equal('cited outside gold on [80, 93)', await lib.texts(page, src + ' .m-cite'),
                 ['board first.\n']);
    checks.equal('overlap marked on [93, 121)', await lib.texts(page, src + ' .m-both'),
                 ['Drivers check in at least 20']);
    checks.equal('gold not cited on [121, 147)', await lib.texts(page, src + ' .m-gold'),
                 [' minutes before departure.']);
    checks.equal('labels C1 then G1', await lib.texts(page, src + ' .lbl'), ['C1', 'G1']);
    // boarding-close passed with its one citation on its one gold span: said, not drawn.
    checks.check('clean passed case: citations summarized', (await page.textContent(
      '#case-boarding-close')).includes('Every citation hits gold and every gold span is cited.'));
    checks.equal('clean passed case: no excerpt', await lib.texts(page, '#case-boarding-close .src'), []);
    // car-fare cites the wrong sentence: a stray citation and a missed gold span, no overlap.
    const fare = '#case-car-fare .src';
    checks.equal('stray citation', await lib.texts(page, fare + ' .m-cite'),
                 ['Foot passengers pay 6 pounds.']);
    checks.equal('missed gold', await lib.texts(page, fare + ' .m-gold'),
                 ['A car costs 40 pounds each way.']);
    checks.equal('no overlap', await lib.texts(page, fare + ' .m-both'), []);
    checks.equal('miss and stray labelled in words', await lib.texts(page, fare + ' .lbl'),
                 ['G1 missed', 'C1 stray']);
    // Retrieved list: fares.md first (no gold), the boarding.md chunk holding the gold second.
    checks.check('retrieved: rank of the gold passage', (await page.textContent(
      '#case-checkin-cars')).includes('A gold span first appears at rank 2 of 2.'));
    checks.check('errored case shows its error',
                 (await page.textContent('#case-pets-onboard .error')).includes('no prediction'));

    // State from the fragment when the page is opened from a shared link.
    const shared = await browser.context.newPage();
    await shared.goto(url + '#tag=fares&status=failed');
    checks.equal('shared link: visible', await visibleIds(shared), ['car-fare']);
    checks.equal('shared link: tag select', await shared.$eval('select[name=tag]', (e) => e.value), 'fares');
    await shared.close();

    // The policy names the script's and the style sheet's hashes; node's crypto agrees.
    const { scripts, styles, policy } = await lib.scriptAndPolicy(page);
    const b64 = (t) => crypto.createHash('sha256').update(t, 'utf8').digest('base64');
    checks.equal('exactly one script', scripts.length, 1);
    checks.check('CSP script hash', policy.includes("script-src 'sha256-" + b64(scripts[0]) + "'"),
                 policy);
    checks.check('CSP style hash', policy.includes("style-src 'sha256-" + b64(styles[0]) + "'"), policy);
    checks.check("CSP default-src 'none'", policy.startsWith("default-src 'none'"), policy);
    checks.equal('no request but the file itself', seen.requests, [url]);
    checks.equal('no CSP violation', await page.evaluate(() => window.__violations), []);
    checks.equal('no page error', seen.errors, []);
    checks.equal('no console error', seen.console.filter((m) => m.startsWith('error')), []);

    // Viewport shots: a full-page one would paint the sticky filter bar mid-page.
    await page.click('#reset');
    await page.evaluate(() => window.scrollTo(0, 0));
    await page.screenshot({ path: path.join(args.artifacts, 'report-page-top.png') });
    await page.evaluate(() => document.getElementById('cases').scrollIntoView());
    await page.screenshot({ path: path.join(args.artifacts, 'report-page-cases.png') });
  } finally {
    await browser.close();
  }

  // With scripting off every case is there to read, failed ones unfolded.
  const noScript = await lib.launch({ javaScriptEnabled: false });
  try {
    const { page } = await lib.openReport(noScript.context, html);
    checks.equal('no script: every case listed and visible', await visibleIds(page),
                 ['checkin-cars', 'car-fare', 'pets-onboard', 'boarding-close', 'no-cabins']);
    checks.equal('no script: filter form stays hidden', await page.isVisible('#filters'), false);
    checks.check('no script: scores are in the HTML', (await page.textContent(
      '#case-car-fare .sc')).includes('token_f1'));
  } finally {
    await noScript.close();
  }
  if (!process.env.PLUMB_KEEP_BROWSER_TMP) fs.rmSync(dir, { recursive: true, force: true });
});
