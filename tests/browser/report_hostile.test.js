// Hostile text in every place a report shows: a pipeline answer, a question, gold answers, a
// corpus document drawn as an excerpt, citation warnings, a run label, error excerpts of a
// crashing pipeline and an invalid reply, and (by editing run.json, since the suite loader
// refuses such tags) a tag that reaches an <option>, a data attribute and a link. Each payload
// would set window.__pwned or log "PWNED" if it ever ran; the test watches for both, for
// dialogs, CSP violations and any element or attribute the payloads would create.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

const ANSWER =
    '<script>window.__pwned=1;console.log("PWNED-answer")</script>' +
    '<img src=x onerror="window.__pwned=2;console.log(\'PWNED-img\')">' +
    '<a href="javascript:window.__pwned=3">click me</a>' +
    '</textarea><script>window.__pwned=4</script>' +
    '"><svg onload="window.__pwned=5"></svg></style></title><!-- --!> &amp; &lt;';

const NOTES =
    '# Notes\n\nSome text. <script>window.__pwned=40;console.log(\'PWNED-doc\')</script> and ' +
    '<img src=x onerror="window.__pwned=41"> and [link](javascript:window.__pwned=42) and ' +
    '</textarea><textarea autofocus onfocus="window.__pwned=43"> end.\n';

const SUITE = `plumb: 1
name: browser-hostile
corpus: docs
max_error_rate: 1
cases:
  - id: hostile-answer
    question: "What does <b>bold</b> & <script>window.__pwned=20</script> do?"
    answers: ["<img src=x onerror=window.__pwned=21>", "</textarea><script>window.__pwned=22</script>"]
    sources:
      - {doc: notes.md, quote: "<script>window.__pwned=40;console.log('PWNED-doc')</script>"}
    tags: [hostile]
  - id: plain
    question: A plain question?
    answers: ["plain"]
    tags: [plain]
`;

const PREDICTIONS = [
  { id: 'hostile-answer', answer: ANSWER,
    citations: [
      { doc: 'notes.md', quote: '</textarea><textarea autofocus onfocus="window.__pwned=43"> end.' },
      { doc: 'notes.md', quote: '<script>not in the document</script>' },
      { doc: '<svg onload=window.__pwned=44>.md' },
    ],
    retrieved: [{ doc: '<img src=x onerror=window.__pwned=45>.md', start: 0, end: 5 }] },
  { id: 'plain', answer: 'plain' },
];

// A per-case pipeline that crashes with hostile output on one case and replies with hostile
// non-JSON on the other.
const EVIL_SH = `req=$(cat)
case "$req" in
  *crash-case*)
    printf '%s' '<script>window.__pwned=50;console.log("PWNED-stdout")</script>'
    printf '%s' '<img src=x onerror=window.__pwned=51>' >&2
    exit 3;;
  *)
    printf '%s' '<script>window.__pwned=52</script></textarea> not json';;
esac
`;

function evilSuite(dir) {
  return `plumb: 1
name: browser-hostile-errors
max_error_rate: 1
pipelines:
  evil:
    command: [/bin/sh, ${JSON.stringify(path.join(dir, 'evil.sh'))}]
    mode: per-case
    timeout: 20s
cases:
  - id: crash-case
    question: "<script>window.__pwned=53</script>?"
    answers: ["x"]
  - id: garbage-case
    question: Anything?
    answers: ["y"]
`;
}

async function inspect(checks, page, seen, name) {
  // Give any payload a chance: hover and click everything that looks like a link or a button
  // inside the cases, and focus the page.
  for (const el of await page.$$('.case summary, .case a, .answer, .src')) {
    if (await el.isVisible()) await el.hover({ timeout: 2000 }).catch(() => {});
  }
  const clickable = page.getByText('click me', { exact: false });
  if (await clickable.count() > 0) await clickable.first().click({ timeout: 5000 });
  await page.waitForTimeout(200);
  const state = await page.evaluate(() => ({
    pwned: window.__pwned,
    violations: window.__violations,
    scripts: document.scripts.length,
    made: document.querySelectorAll('img, svg:not(.iv), textarea, iframe, object, embed, ' +
                                    'a[href^="javascript"], base, link, meta[http-equiv="refresh"]').length,
    handlers: Array.from(document.querySelectorAll('*')).flatMap((e) =>
      Array.from(e.attributes).filter((a) => a.name.startsWith('on')).map((a) => e.tagName + ' ' + a.name)),
    hrefs: Array.from(document.querySelectorAll('a[href]')).map((a) => a.getAttribute('href'))
        .filter((h) => !h.startsWith('#')),
  }));
  checks.equal(name + ': no payload ran (window.__pwned unset)', state.pwned, undefined);
  checks.equal(name + ': no PWNED console message',
               seen.console.filter((m) => m.includes('PWNED')), []);
  checks.equal(name + ': no dialog', seen.dialogs, []);
  checks.equal(name + ': no CSP violation (nothing even tried to run)', state.violations, []);
  checks.equal(name + ': one script element, the report\'s own', state.scripts, 1);
  checks.equal(name + ': no element a payload would create', state.made, 0);
  checks.equal(name + ': no event-handler attribute anywhere', state.handlers, []);
  checks.equal(name + ': every link is a fragment link', state.hrefs, []);
  checks.equal(name + ': no page error', seen.errors, []);
  checks.equal(name + ': no request but the file', seen.requests.length, 1);
}

lib.main('browser report hostile text', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  const dir = lib.tempDir('hostile');
  lib.writeFiles(dir, {
    'suite.yaml': SUITE, 'docs/notes.md': NOTES, 'predictions.jsonl': lib.jsonl(PREDICTIONS),
    'evil.sh': EVIL_SH, 'evil.yaml': evilSuite(dir),
  });
  const runDir = path.join(dir, 'run');
  lib.score(args, path.join(dir, 'suite.yaml'), path.join(dir, 'predictions.jsonl'), runDir,
            ['--label', 'git=<script>window.__pwned=30</script>',
             '--label', '<img src=x onerror=window.__pwned=31>=v']);
  // A tag no suite may hold, written into run.json as a tampered or foreign record would.
  const TAG = '"><img src=x onerror="window.__pwned=32">&<script>';
  const record = JSON.parse(fs.readFileSync(path.join(runDir, 'run.json'), 'utf8'));
  record.cases['hostile-answer'].tags.push(TAG);
  fs.writeFileSync(path.join(runDir, 'run.json'), JSON.stringify(record));
  const html = path.join(dir, 'report.html');
  lib.writeRunReport(args, runDir, html, { cwd: dir });

  const errorsDir = path.join(dir, 'errors-run');
  const r = lib.run(args.plumb, ['run', path.join(dir, 'evil.yaml'), '--out', errorsDir], { cwd: dir });
  checks.check('the crashing pipeline run finished with a run record',
               fs.existsSync(path.join(errorsDir, 'run.json')), r.stderr);
  const errorsHtml = path.join(dir, 'errors.html');
  lib.writeRunReport(args, errorsDir, errorsHtml, { cwd: dir });

  const browser = await lib.launch();
  try {
    const { page, seen } = await lib.openReport(browser.context, html);
    await inspect(checks, page, seen, 'answers page');
    checks.equal('the answer is shown as its own text',
                 await page.textContent('#case-hostile-answer .answer'), ANSWER);
    checks.check('the question is shown as text', (await page.textContent(
      '#case-hostile-answer summary')).includes('<b>bold</b> & <script>window.__pwned=20</script>'));
    checks.equal('gold answers are shown as text', await lib.texts(page, '#case-hostile-answer .gold li'),
                 ['<img src=x onerror=window.__pwned=21>', '</textarea><script>window.__pwned=22</script>']);
    checks.equal('the document excerpt marks the gold script text as text',
                 await lib.texts(page, '#case-hostile-answer .src .m-gold'),
                 ["<script>window.__pwned=40;console.log('PWNED-doc')</script>"]);
    checks.equal('the located quote citation is drawn as text',
                 await lib.texts(page, '#case-hostile-answer .src .m-cite'),
                 ['</textarea><textarea autofocus onfocus="window.__pwned=43"> end.']);
    const refs = await page.textContent('#case-hostile-answer .refs');
    checks.check('unknown hostile doc name shown as text', refs.includes('<svg onload=window.__pwned=44>.md'), refs);
    checks.check('unlocated hostile quote shown as text', refs.includes('quote not found in notes.md'), refs);
    checks.check('label shown as text', (await page.textContent('.facts')).includes(
      'git=<script>window.__pwned=30</script>'));
    // The hostile tag: an <option>, a data attribute and a #tag= link, all inert; filtering by
    // it still works.
    await page.selectOption('select[name=tag]', TAG);
    checks.equal('filter by the hostile tag', await page.$$eval('.case', (els) =>
      els.filter((e) => !e.hidden).map((e) => e.id.slice(5))), ['hostile-answer']);
    const link = page.locator('#case-hostile-answer .tags a').last();
    checks.equal('hostile tag link text', await link.textContent(), '#' + TAG);
    await link.click();
    checks.equal('hostile tag link filters by that tag',
                 await page.$eval('select[name=tag]', (e) => e.value), TAG);
    await inspect(checks, page, seen, 'answers page after filtering');

    // A fragment is input too: a shared link can carry anything.
    const shared = await browser.context.newPage();
    const sharedSeen = { console: [] };
    shared.on('console', (m) => sharedSeen.console.push(m.text()));
    await shared.goto('file://' + html + '#q=' +
                      encodeURIComponent('<img src=x onerror=window.__pwned=60>') +
                      '&tag=' + encodeURIComponent('<script>window.__pwned=61</script>'));
    checks.equal('hostile fragment: search box holds it as text',
                 await shared.$eval('input[name=q]', (e) => e.value), '<img src=x onerror=window.__pwned=60>');
    checks.equal('hostile fragment: nothing ran', await shared.evaluate(() => window.__pwned), undefined);
    checks.equal('hostile fragment: unknown tag falls back to any',
                 await shared.$eval('select[name=tag]', (e) => e.value), '');
    await shared.close();
    await page.screenshot({ path: path.join(args.artifacts, 'report-hostile.png') });

    const errors = await lib.openReport(browser.context, errorsHtml);
    await inspect(checks, errors.page, errors.seen, 'errors page');
    const crash = await errors.page.textContent('#case-crash-case .error');
    checks.check('crash: stdout excerpt shown as text',
                 crash.includes('<script>window.__pwned=50;console.log("PWNED-stdout")</script>'), crash);
    checks.check('crash: stderr excerpt shown as text',
                 crash.includes('<img src=x onerror=window.__pwned=51>'), crash);
    const garbage = await errors.page.textContent('#case-garbage-case .error');
    checks.check('invalid reply: its text shown as text',
                 garbage.includes('<script>window.__pwned=52</script></textarea> not json'), garbage);
    await errors.page.screenshot({ path: path.join(args.artifacts, 'report-errors.png') });

    // Control: the same watchers do see a payload that was not escaped. With the report's CSP
    // it is blocked and reported as a violation; without the CSP it runs and sets the flag.
    const page0 = fs.readFileSync(html, 'utf8');
    const injected = page0.replace('</main>', '<p><img src=x onerror="window.__pwned=2">' +
                                   '<script>window.__pwned=1</script></p></main>');
    fs.writeFileSync(path.join(dir, 'control-csp.html'), injected);
    fs.writeFileSync(path.join(dir, 'control-nocsp.html'),
                     injected.replace(/<meta http-equiv="Content-Security-Policy"[^>]*>/, ''));
    const withCsp = await lib.openReport(browser.context, path.join(dir, 'control-csp.html'));
    await withCsp.page.waitForTimeout(200);
    checks.check('control: the CSP blocks an unescaped payload and the test sees the violation',
                 (await withCsp.page.evaluate(() => window.__violations)).length > 0 &&
                 (await withCsp.page.evaluate(() => window.__pwned)) === undefined);
    const noCsp = await lib.openReport(browser.context, path.join(dir, 'control-nocsp.html'));
    await noCsp.page.waitForTimeout(200);
    checks.check('control: without the CSP the payload runs and the test sees the flag',
                 (await noCsp.page.evaluate(() => window.__pwned)) !== undefined);
  } finally {
    await browser.close();
  }
  if (!process.env.PLUMB_KEEP_BROWSER_TMP) fs.rmSync(dir, { recursive: true, force: true });
});
