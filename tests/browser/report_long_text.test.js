// Issue 17 items 10 and 11 in a browser: a 1 MB answer made a 7.4 MB case card (200,001 diff
// elements) that took 14 s to open, and U+202E from a pipeline reordered what the reader saw.
// Here the card draws 300 diff tokens and 2,000 characters of the answer; "show all" puts the
// whole answer in view from the escaped copy the page already holds (DOM text only, under the
// page's CSP), and bidi controls read as "[U+202E]". Times are printed, not asserted.
'use strict';

const fs = require('node:fs');
const path = require('node:path');
const lib = require('./lib');

const WORDS = 200000;

lib.main('browser report, long and bidi text', async (checks) => {
  const args = lib.parseArgs(process.argv.slice(2));
  const dir = lib.tempDir('long');
  const words = [];
  for (let i = 0; i < WORDS; i++) words.push('w' + i);
  const answer = words.join(' ') + ' <img src=x onerror="window.__pwned=1"> end';
  lib.writeFiles(dir, {
    'suite.yaml': 'plumb: 1\nname: browser-long\nmax_error_rate: 1\ncases:\n' +
                  '  - {id: long, question: "Which word?", answers: ["w1 w2 nothing"]}\n' +
                  '  - {id: bidi, question: "Which file?", answers: ["invoice.txt"]}\n',
    'predictions.jsonl': lib.jsonl([
      { id: 'long', answer },
      { id: 'bidi', answer: 'open invoice\u202Etxt.exe now' },
    ]),
  });
  lib.score(args, path.join(dir, 'suite.yaml'), path.join(dir, 'predictions.jsonl'),
            path.join(dir, 'run'));
  const html = path.join(dir, 'report.html');
  lib.writeRunReport(args, path.join(dir, 'run'), html, { cwd: dir });
  const bytes = fs.statSync(html).size;
  console.log('report size with a ' + answer.length + '-character answer: ' + bytes + ' bytes');
  checks.check('the page holds the answer about once, not seven times over',
               bytes < answer.length + 200 * 1024, bytes);

  const browser = await lib.launch();
  try {
    const t = Date.now();
    const { page, seen } = await lib.openReport(browser.context, html);
    await page.waitForSelector('html[data-ready="1"]');
    console.log('page loaded and ready in ' + (Date.now() - t) + ' ms');
    const card = page.locator('#case-long');
    await page.evaluate(() => { document.getElementById('case-long').open = true; });
    const before = await page.evaluate(() => {
      const c = document.getElementById('case-long');
      return { tokens: c.querySelectorAll('.tk').length, cut: c.querySelector('.answer .cut').textContent,
               button: c.querySelector('.answer .all').textContent };
    });
    checks.equal('300 diff tokens drawn as elements, plus none per extra word',
                 before.tokens, 300);
    checks.equal('the answer shows its first 2,000 characters', before.cut,
                 answer.slice(0, 2000));
    checks.equal('the button says how much there is', before.button,
                 'show all ' + answer.length.toLocaleString('en-US') + ' characters');
    await card.locator('.answer .all').click();
    const after = await page.evaluate(() => {
      const c = document.getElementById('case-long');
      return { cut: c.querySelector('.answer .cut').textContent,
               buttons: c.querySelectorAll('.answer .all').length,
               templates: c.querySelectorAll('.answer template').length,
               images: document.querySelectorAll('img').length, pwned: window.__pwned,
               violations: window.__violations };
    });
    checks.check('show all puts the whole answer in view, as text', after.cut === answer,
                 after.cut.length);
    checks.equal('the button and the hidden copy are gone', [after.buttons, after.templates], [0, 0]);
    checks.equal('the markup in the answer stayed text', [after.images, after.pwned], [0, undefined]);
    checks.equal('no CSP violation', after.violations, []);
    checks.equal('no page error', seen.errors, []);

    const bidi = await page.evaluate(() =>
      document.querySelector('#case-bidi .answer').textContent);
    checks.equal('U+202E is shown, not obeyed', bidi, 'open invoice[U+202E]txt.exe now');
    await page.screenshot({ path: path.join(args.artifacts, 'report-long-text.png') });
  } finally {
    await browser.close();
  }
});
