#include "runner/report/html_page_assets.h"

#include <nlohmann/json.hpp>

#include "runner/base/sha256.h"
#include "runner/report/html_escape.h"
#include "runner/run/run_record.h"

namespace plumb {

// The look: a handbook page rather than a dashboard. Warm paper, ink text, a verdict rule down
// the masthead's left edge (green held, brick broken), serif for what people wrote (questions,
// documents), monospace for what machines compare (ids, tokens). Every mark that carries meaning
// also has a shape (underline, outline, strike) and a word, so nothing depends on colour alone.
// No `style` attributes anywhere: the CSP admits this sheet by hash and nothing else.
const std::string_view kReportStyle = R"CSS(
:root{--paper:#f6f3ec;--card:#fffdf8;--ink:#1f2633;--muted:#5b6474;--rule:#d8d1c1;
--brass:#8f631c;--held:#2d6a4e;--broken:#a33a2b;--errored:#6b4a8e;--gold:#b07a0c;
--cite:#2a5d88;--both:#f1e2bb;--ok:#dcebdf;--miss:#f6dcd6;--extra:#e3e0f1}
*{box-sizing:border-box}
[hidden]{display:none!important}
html{background:var(--paper);color:var(--ink)}
body{margin:0;font:15px/1.45 system-ui,-apple-system,"Segoe UI","DejaVu Sans",sans-serif}
code,.mono,.tk,.cid,.lbl{font-family:ui-monospace,"DejaVu Sans Mono",Menlo,Consolas,monospace}
.wrap{max-width:1180px;margin:0 auto;padding:0 20px}
.mast{background:var(--card);border-bottom:1px solid var(--rule)}
.mast .wrap{border-left:10px solid var(--muted);padding:18px 24px 16px}
.mast.held .wrap{border-left-color:var(--held)}
.mast.broken .wrap{border-left-color:var(--broken)}
.brand{font-size:12px;letter-spacing:.14em;text-transform:uppercase;color:var(--brass);font-weight:700}
.brand span{color:var(--muted);font-weight:400;letter-spacing:.06em}
h1{margin:6px 0 4px;font-size:26px;line-height:1.2;font-weight:650}
h1 .verdict{display:inline-block;padding:1px 10px;border:2px solid currentColor;border-radius:3px;margin-right:10px;font-size:20px;vertical-align:2px}
.held h1 .verdict{color:var(--held)}
.broken h1 .verdict{color:var(--broken)}
.reason{margin:0 0 10px;color:var(--muted)}
.facts{display:grid;grid-template-columns:max-content 1fr max-content 1fr;gap:2px 14px;margin:8px 0 0;font-size:14px}
.facts dt{color:var(--muted)}
.facts dd{margin:0;overflow-wrap:anywhere}
.labels code{background:var(--paper);border:1px solid var(--rule);border-radius:3px;padding:0 4px;margin-right:4px}
main.wrap{padding-top:8px;padding-bottom:24px}
h2{font-size:13px;letter-spacing:.12em;text-transform:uppercase;color:var(--brass);margin:26px 0 8px;border-bottom:1px solid var(--rule);padding-bottom:4px}
h3{font-size:17px;margin:22px 0 8px}
h3 .n{color:var(--muted);font-weight:400;font-size:14px;margin-left:6px}
table{border-collapse:collapse;background:var(--card);font-size:14px}
th,td{padding:4px 10px;border-bottom:1px solid var(--rule);text-align:left;vertical-align:top}
th{font-weight:600;color:var(--muted);font-size:12px;text-transform:uppercase;letter-spacing:.05em}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
th{white-space:nowrap}
.scroll{overflow-x:auto;max-width:100%}
.res{font-weight:700;font-size:12px;letter-spacing:.06em}
.res.held{color:var(--held)}
.res.broken{color:var(--broken)}
.res.held::before{content:"\2713  "}
.res.broken::before{content:"\2717  "}
svg.iv{vertical-align:middle}
svg.iv .track{fill:#ebe6da}
svg.iv .span{fill:var(--cite)}
svg.iv .mean{fill:var(--ink)}
svg.iv .floor{fill:var(--broken)}
svg.iv .zero{fill:var(--muted)}
.grid{width:100%;table-layout:fixed;font-size:13px}
.grid col.tg{width:11em}
.grid col.cn{width:4.2em}
.grid th,.grid td{padding:3px 4px}
.grid tbody th{font-weight:400;text-transform:none;letter-spacing:0;font-size:13px;overflow-wrap:anywhere;white-space:normal}
.grid th.m{vertical-align:bottom;height:13.5em;text-transform:none;letter-spacing:0}
.grid th.m span{writing-mode:vertical-rl;transform:rotate(180deg);white-space:nowrap;display:inline-block;max-height:13.5em;overflow:hidden;text-overflow:ellipsis}
.grid td{text-align:center;font-variant-numeric:tabular-nums;white-space:nowrap;position:relative}
.grid td.num{text-align:right}
.grid td.na,.grid td.cc.none{color:var(--muted)}
.grid th.c{color:var(--broken)}
.grid td.cc{background:#f8ece8}
.grid td.cc.none{background:transparent}
.grid td.v0{background:#fbf9f3}
.grid td.v1{background:#efe8d8}
.grid td.v2{background:#e2d7bd}
.grid td.v3{background:#d3c29c}
.grid td.v4{background:#c2ab78}
.grid td:focus{outline:2px solid var(--cite);outline-offset:-2px}
.grid .fl{font-weight:700;margin-left:1px}
.grid .fl.held{color:var(--held)}
.grid .fl.broken{color:var(--broken)}
.tip{position:absolute;width:1px;height:1px;overflow:hidden;clip:rect(0 0 0 0);white-space:nowrap}
.grid td:hover .tip,.grid td:focus .tip{clip:auto;width:16em;height:auto;overflow:visible;white-space:normal;text-align:left;z-index:3;right:0;top:100%;background:var(--ink);color:var(--card);padding:3px 7px;border-radius:3px;font-size:12px}
.grid td:nth-child(-n+10) .tip{right:auto;left:0}
.grid tr:nth-last-child(-n+3) .tip{top:auto;bottom:100%}
.grid thead th{vertical-align:bottom}
figure.chart{margin:8px 0 0;max-width:760px}
figure.chart svg.latency,figure.chart svg.deltas{width:100%;height:auto;background:var(--card);border:1px solid var(--rule);border-radius:3px}
figure.chart figcaption{font-size:13px;color:var(--muted);display:flex;flex-direction:column;gap:2px;margin-top:4px}
svg .gl{stroke:#e4ddcd;stroke-width:1}
svg .tick{stroke:var(--muted);stroke-width:1}
svg .frame{fill:none;stroke:var(--rule)}
svg text{font-size:11px;fill:var(--muted);font-family:system-ui,"DejaVu Sans",sans-serif}
svg .xl,svg .xt{text-anchor:middle}
svg .yl,svg .lab{text-anchor:end}
svg .yt{text-anchor:middle}
svg .xt,svg .yt{font-size:12px;fill:var(--ink)}
svg .cdf{fill:none;stroke-width:2}
svg .cdf.s0{stroke:var(--ink)}
svg .cdf.s1{stroke:var(--brass);stroke-dasharray:6 4}
.swatch{vertical-align:middle;margin-right:6px}
.charts{display:flex;flex-wrap:wrap;gap:12px 18px}
.charts figure.chart{flex:0 1 372px;min-width:0;margin:0}
svg .band{fill:#ece5d3}
svg .zero{stroke:var(--ink);stroke-width:1.5}
svg .ci{stroke:var(--cite);stroke-width:2.5;stroke-linecap:round}
svg .mk{fill:var(--ink)}
svg .row.down .mk{fill:var(--broken)}
svg .row.up .mk{fill:var(--held)}
svg .lab{font-size:11px;fill:var(--ink)}
figure.chart svg.tradeoff{width:100%;height:auto;background:var(--card);border:1px solid var(--rule);border-radius:3px}
svg .front{fill:none;stroke:var(--brass);stroke-width:2;stroke-dasharray:6 4}
svg .eb{stroke:var(--cite);stroke-width:1.5}
svg .run .mk{stroke:var(--ink);stroke-width:1.5}
svg .run.off .mk{fill:var(--card)}
svg .nm{font-size:11px;fill:var(--ink)}
svg .nm.end{text-anchor:end}
table.compare td{white-space:nowrap;font-variant-numeric:tabular-nums}
table.compare td.txt{white-space:normal;overflow-wrap:anywhere;min-width:12em;max-width:24em;font-size:13px}
table.compare thead th.run{text-align:right}
table.compare tbody th{text-transform:none;letter-spacing:0;font-size:13px;font-weight:400;color:var(--ink);font-family:ui-monospace,"DejaVu Sans Mono",Menlo,Consolas,monospace}
table.compare th.run{text-transform:none;letter-spacing:0;font-size:13px;color:var(--ink);white-space:normal;overflow-wrap:anywhere;max-width:16em}
h1 .verdict.limits{font-size:16px;vertical-align:3px}
h1 .verdict.good{color:var(--held)}
h1 .verdict.bad{color:var(--broken)}
.lines{margin:0 0 8px;padding:0;list-style:none;font-size:15px;overflow-wrap:anywhere}
.lines strong{font-weight:600;margin-right:4px}
table.causes a{color:var(--ink);font-weight:600}
table.causes tr.sub td{border-bottom:1px solid var(--rule);padding-top:0}
.case .cause{font-size:12px;font-weight:600;color:var(--broken)}
.case .cause::before{content:"\2192  "}
.reasons{margin:4px 0 0;padding-left:22px;font-size:14px;overflow-wrap:anywhere}
.reasons a{color:var(--errored);font-weight:700;margin-right:4px}
h4.because{font-size:14px;text-transform:none;letter-spacing:0;color:var(--errored);margin:12px 0 6px;overflow-wrap:anywhere}
h4.because strong{margin-right:6px}
.reason{overflow-wrap:anywhere}
.note{color:var(--muted);font-size:14px}
.top{display:grid;grid-template-columns:minmax(0,auto) minmax(0,1fr);gap:0 36px;align-items:start}
.top section{min-width:0}
.warnbox{border:1px solid var(--broken);background:#fbefec;padding:6px 10px;border-radius:3px;font-size:14px}
.filters{position:sticky;top:0;z-index:2;background:var(--paper);padding:8px 0;border-bottom:1px solid var(--rule);display:flex;flex-wrap:wrap;gap:8px 14px;align-items:center}
.filters label{font-size:13px;color:var(--muted)}
.filters select,.filters input{font:inherit;font-size:14px;padding:2px 6px;border:1px solid var(--rule);border-radius:3px;background:var(--card);color:var(--ink)}
.filters input[type=search]{width:15em}
.filters input[type=number]{width:5.5em}
.chip{font:inherit;font-size:13px;padding:2px 10px;border:1.5px solid var(--muted);border-radius:12px;background:var(--card);color:var(--ink);cursor:pointer}
.chip[aria-pressed=false]{border-style:dashed;color:var(--muted);text-decoration:line-through;background:transparent}
.chip .c{font-weight:700;margin-left:4px}
.btn{font:inherit;font-size:13px;padding:2px 8px;border:1px solid var(--rule);border-radius:3px;background:var(--card);cursor:pointer}
.shown{font-size:14px;color:var(--muted);margin:8px 0}
.case{background:var(--card);border:1px solid var(--rule);border-left:5px solid var(--muted);border-radius:3px;margin:0 0 10px;content-visibility:auto;contain-intrinsic-size:auto 60px}
.case.st-failed,.case.st-lost{border-left-color:var(--broken)}
.case.st-errored{border-left-color:var(--errored)}
.case.st-passed,.case.st-gained{border-left-color:var(--held)}
.case.st-failing{border-left-color:#c9a29a}
.case.st-passing{border-left-color:#9dbdac}
.case>summary{cursor:pointer;padding:7px 12px;display:flex;gap:10px;align-items:baseline;flex-wrap:wrap;list-style-position:outside}
.badge{font-size:11px;font-weight:700;letter-spacing:.08em;padding:0 6px;border:1.5px solid currentColor;border-radius:3px}
.st-failed .badge,.st-lost .badge{color:var(--broken)}
.st-errored .badge{color:var(--errored)}
.st-passed .badge,.st-gained .badge{color:var(--held)}
.st-failing .badge{color:#8a5a52}
.st-passing .badge{color:#4f7a66}
.cid{font-size:13px;color:var(--muted)}
.sq{font-family:"Iowan Old Style",Georgia,"DejaVu Serif",serif;flex:1 1 20em}
.key{font-size:12px;color:var(--muted);font-variant-numeric:tabular-nums}
.cbody{padding:4px 14px 12px;border-top:1px dashed var(--rule)}
.cols{display:grid;grid-template-columns:minmax(0,3fr) minmax(0,2fr);gap:4px 24px}
.pair{display:grid;grid-template-columns:minmax(0,1fr) minmax(0,1fr);gap:16px}
.side{border-top:3px solid var(--rule);padding-top:4px}
.side.base{border-top-color:var(--muted)}
.side.cand{border-top-color:var(--brass)}
.side h4:first-child{margin-top:6px}
h4{font-size:12px;text-transform:uppercase;letter-spacing:.08em;color:var(--muted);margin:12px 0 3px}
h5{font-size:13px;margin:10px 0 2px;font-weight:600}
.question,.answer,.gold li{font-family:"Iowan Old Style",Georgia,"DejaVu Serif",serif;font-size:16px}
.question,.answer{margin:0}
.answer{white-space:pre-wrap;overflow-wrap:anywhere}
.answer.none{font-style:italic;color:var(--muted)}
.gold{margin:0;padding:0;list-style:none;counter-reset:gold}
.gold li{display:inline-block;margin:0 22px 2px 0;counter-increment:gold}
.gold li::before{content:counter(gold) ". ";color:var(--muted);font-size:13px}
.diff{margin:6px 0 0;line-height:2;overflow-wrap:anywhere}
.tk{font-size:13px;padding:1px 4px;border-radius:2px;margin-right:3px;text-decoration:none;white-space:nowrap;display:inline-block;line-height:1.35}
.tk.ok{background:var(--ok)}
.tk.miss{background:var(--miss);text-decoration:line-through;text-decoration-thickness:1.5px}
.tk.extra{background:var(--extra);border-bottom:2px dotted var(--ink)}
.tk.miss::before{content:"\2212"}
.tk.extra::before{content:"+"}
.legend{font-size:12px;color:var(--muted);margin:2px 0 0}
.long .more{color:var(--muted)}
.long .all{font:inherit;font-size:12px;margin-left:4px;cursor:pointer}
.diff .rest{color:var(--muted)}
.legend .tk{font-size:11px}
.legend .tk::before{content:none}
.sc{display:grid;grid-template-columns:max-content 1fr;gap:0 14px;font-size:13px;margin:0;font-variant-numeric:tabular-nums}
.sc dt,.sc dd{margin:0}
.sc dd span{color:var(--muted);font-size:12px}
.sc .low,.sc dd.low span{color:var(--broken);font-weight:600}
.meta{font-size:13px;color:var(--muted)}
.error{border:1.5px solid var(--errored);border-radius:3px;padding:6px 10px;margin:8px 0;background:#f5f0fa}
.error pre,pre.raw{white-space:pre-wrap;overflow-wrap:anywhere;font-size:12px;max-height:18em;overflow:auto;background:var(--paper);padding:6px;margin:4px 0}
.refs{margin:0;padding-left:0;list-style:none;font-size:13px}
.refs li{margin:1px 0}
.refs .hit{color:var(--held);font-weight:600}
.refs .nohit{color:var(--broken);font-weight:600}
.src{font-family:"Iowan Old Style",Georgia,"DejaVu Serif",serif;font-size:15px;white-space:pre-wrap;overflow-wrap:anywhere;background:#fbf9f3;border:1px solid var(--rule);border-radius:3px;padding:8px 10px;line-height:1.7}
.src mark{background:transparent;color:inherit;padding:1px 0}
.src .m-gold{text-decoration:underline;text-decoration-color:var(--gold);text-decoration-thickness:3px;text-underline-offset:4px}
.src .m-cite{outline:1.5px solid var(--cite);outline-offset:1px;border-radius:1px}
.src .m-both{background:var(--both);text-decoration:underline;text-decoration-color:var(--gold);text-decoration-thickness:3px;text-underline-offset:4px;outline:1.5px solid var(--cite);outline-offset:1px}
.lbl{font-size:10px;font-weight:700;padding:0 3px;margin:0 2px;border:1px solid var(--muted);border-radius:2px;vertical-align:2px;color:var(--muted);background:var(--card)}
.gap{color:var(--muted);font-family:system-ui,sans-serif;font-size:12px;white-space:nowrap}
.mlegend{font-size:12px;color:var(--muted)}
.mlegend mark{background:transparent;color:inherit;margin:0 4px}
.mlegend .m-gold{text-decoration:underline;text-decoration-color:var(--gold);text-decoration-thickness:3px;text-underline-offset:3px}
.mlegend .m-cite{outline:1.5px solid var(--cite)}
.mlegend .m-both{background:var(--both);text-decoration:underline;text-decoration-color:var(--gold);text-decoration-thickness:3px;outline:1.5px solid var(--cite)}
.retr{font-size:13px;margin:0;padding-left:24px}
.retr li.hit{font-weight:600}
.retr li.hit::after{content:"  \2190 holds gold";color:var(--held)}
.tags a{font-size:12px;color:var(--cite);margin-right:6px}
.delta.neg{color:var(--broken);font-weight:600}
.delta.pos{color:var(--held);font-weight:600}
.verd{font-weight:700;font-size:12px;letter-spacing:.05em;text-transform:uppercase}
.verd.regressed{color:var(--broken)}
.verd.improved{color:var(--held)}
.idlist{font-size:13px;columns:3 16em}
footer{border-top:1px solid var(--rule);margin-top:30px;background:var(--card)}
footer .wrap{padding:14px 20px 20px;font-size:13px;color:var(--muted)}
footer strong{color:var(--ink)}
@media (max-width:1100px){.top{grid-template-columns:1fr}}
@media (max-width:800px){.cols,.pair{grid-template-columns:1fr}.facts{grid-template-columns:max-content 1fr}}
)CSS";

// Filters, sorting and folding over the cases the HTML already holds. It reads data-* attributes
// and writes only textContent, `hidden`, `open` and aria-pressed: untrusted text never passes
// through an HTML parser here. The filter state lives in the URL fragment (#status=..&tag=..),
// so a link to a filtered view can be shared; a fragment without '=' is a plain anchor.
const std::string_view kReportScript = R"JS(
(function () {
  'use strict';
  // "show all" of a long text: the whole text is already in the page, escaped, in an inert
  // <template> beside the button; its text (never markup) replaces the shown part.
  document.addEventListener('click', function (e) {
    var b = e.target;
    if (!b || !b.classList || !b.classList.contains('all')) return;
    var box = b.parentNode, full = box.querySelector('template'), cut = box.querySelector('.cut');
    var more = box.querySelector('.more');
    if (!full || !cut) return;
    cut.textContent = full.content.textContent;
    if (more) more.remove();
    full.remove();
    b.remove();
  });
  var form = document.getElementById('filters');
  if (!form) return;
  var cards = Array.prototype.slice.call(document.querySelectorAll('.case'));
  var info = cards.map(function (el, i) {
    return { el: el, status: el.getAttribute('data-status'), order: i, tags: null,
             scores: null, text: null, latency: parseFloat(el.getAttribute('data-latency')) };
  });
  var chips = Array.prototype.slice.call(form.querySelectorAll('.chip'));
  var allStatuses = chips.map(function (c) { return c.getAttribute('data-status'); });
  var tagSel = form.elements.tag, metricSel = form.elements.metric, belowIn = form.elements.below;
  var qIn = form.elements.q, sortSel = form.elements.sort;
  var shownEl = document.getElementById('shown');
  var groups = Array.prototype.slice.call(document.querySelectorAll('.group'));
  var state = { status: allStatuses.slice(), tag: '', metric: '', below: '', q: '', sort: '', cause: '' };
  var sortedBy = '|';  // the page arrives in its default order

  function decodeList(el, name) {
    var raw = el.getAttribute(name) || '';
    return raw === '' ? [] : raw.split(' ').map(function (x) {
      try { return decodeURIComponent(x); } catch (e) { return x; }
    });
  }
  function tagsOf(c) { if (c.tags === null) c.tags = decodeList(c.el, 'data-tags'); return c.tags; }
  function scoresOf(c) {
    if (c.scores === null) {
      // "name value name value ...", names percent-encoded.
      c.scores = {};
      var parts = (c.el.getAttribute('data-scores') || '').split(' ');
      for (var i = 0; i + 1 < parts.length; i += 2) {
        try { c.scores[decodeURIComponent(parts[i])] = parseFloat(parts[i + 1]); } catch (e) {}
      }
    }
    return c.scores;
  }
  function textOf(c) { if (c.text === null) c.text = c.el.textContent.toLowerCase(); return c.text; }

  function readHash() {
    var h = location.hash.slice(1);
    var s = { status: allStatuses.slice(), tag: '', metric: '', below: '', q: '', sort: '', cause: '' };
    if (h.indexOf('=') < 0) return s;
    var p = new URLSearchParams(h);
    if (p.has('status')) {
      s.status = p.get('status').split(',').filter(function (x) {
        return allStatuses.indexOf(x) >= 0;
      });
    }
    ['tag', 'metric', 'below', 'q', 'sort', 'cause'].forEach(function (k) { s[k] = p.get(k) || ''; });
    return s;
  }
  function writeHash() {
    var p = new URLSearchParams();
    if (state.status.length !== allStatuses.length) p.set('status', state.status.join(','));
    ['tag', 'metric', 'below', 'q', 'sort', 'cause'].forEach(function (k) { if (state[k]) p.set(k, state[k]); });
    var s = p.toString();
    var url = s ? '#' + s : location.pathname + location.search;
    if (('#' + s) === location.hash || (!s && !location.hash)) return;
    try { history.replaceState(null, '', url); } catch (e) { location.replace('#' + s); }
  }
  function hasOption(sel, v) {
    for (var i = 0; i < sel.options.length; i++) if (sel.options[i].value === v) return true;
    return false;
  }
  function showState() {
    chips.forEach(function (c) {
      c.setAttribute('aria-pressed', String(state.status.indexOf(c.getAttribute('data-status')) >= 0));
    });
    tagSel.value = hasOption(tagSel, state.tag) ? state.tag : '';
    metricSel.value = hasOption(metricSel, state.metric) ? state.metric : '';
    belowIn.value = state.below;
    qIn.value = state.q;
    sortSel.value = hasOption(sortSel, state.sort) ? state.sort : '';
  }

  function compare(a, b) {
    if (state.sort === 'metric' && state.metric) {
      var x = scoresOf(a)[state.metric], y = scoresOf(b)[state.metric];
      var xa = typeof x === 'number', ya = typeof y === 'number';
      if (xa !== ya) return xa ? -1 : 1;
      if (xa && x !== y) return x - y;
    } else if (state.sort === 'latency') {
      var la = isNaN(a.latency) ? -1 : a.latency, lb = isNaN(b.latency) ? -1 : b.latency;
      if (la !== lb) return lb - la;
    } else if (state.sort === 'id') {
      var ia = a.el.id, ib = b.el.id;
      if (ia !== ib) return ia < ib ? -1 : 1;
    }
    return a.order - b.order;
  }
  function sortCards() {
    var key = state.sort + '|' + (state.sort === 'metric' ? state.metric : '');
    if (key === sortedBy) return;
    sortedBy = key;
    Array.prototype.forEach.call(document.querySelectorAll('.cards'), function (list) {
      info.filter(function (c) { return c.el.parentNode === list; }).sort(compare)
        .forEach(function (c) { list.appendChild(c.el); });
    });
  }

  function apply() {
    var q = state.q.toLowerCase();
    var below = parseFloat(state.below);
    var byMetric = state.metric !== '' && !isNaN(below);
    var counts = {}, shown = 0;
    info.forEach(function (c) {
      var ok = true;
      if (state.tag && tagsOf(c).indexOf(state.tag) < 0) ok = false;
      if (ok && state.cause && c.el.getAttribute('data-cause') !== state.cause) ok = false;
      if (ok && byMetric) {
        var v = scoresOf(c)[state.metric];
        if (typeof v !== 'number' || !(v < below)) ok = false;
      }
      if (ok && q && textOf(c).indexOf(q) < 0) ok = false;
      if (ok) counts[c.status] = (counts[c.status] || 0) + 1;
      var visible = ok && state.status.indexOf(c.status) >= 0;
      if (c.el.hidden === visible) c.el.hidden = !visible;
      if (visible) shown++;
    });
    chips.forEach(function (c) {
      c.querySelector('.c').textContent = String(counts[c.getAttribute('data-status')] || 0);
    });
    groups.forEach(function (g) {
      var n = 0;
      info.forEach(function (c) { if (!c.el.hidden && g.contains(c.el)) n++; });
      var out = g.querySelector('.n-shown');
      if (out) out.textContent = n + ' shown';
    });
    shownEl.textContent = 'Showing ' + shown + ' of ' + info.length +
        (info.length === 1 ? ' case.' : ' cases.') + causeWords();
    sortCards();
  }

  // The cause filter has no control of its own: it comes from a cause link (#cause=ID), and
  // the shown line names it until "clear filters".
  function causeWords() {
    if (!state.cause) return '';
    var links = document.querySelectorAll('a[href*="cause="]'), label = state.cause;
    var tail = 'cause=' + state.cause;
    for (var i = 0; i < links.length; i++) {
      var href = links[i].getAttribute('href');
      if (href.slice(href.length - tail.length) === tail) label = links[i].textContent;
    }
    return ' Cause: ' + label + '.';
  }
  function fromForm() {
    state.tag = tagSel.value;
    state.metric = metricSel.value;
    state.below = belowIn.value;
    state.q = qIn.value;
    state.sort = sortSel.value;
  }
  var typing = 0;
  form.addEventListener('input', function (e) {
    fromForm();
    clearTimeout(typing);
    var later = e.target === qIn || e.target === belowIn;
    typing = setTimeout(function () { apply(); writeHash(); }, later ? 120 : 0);
  });
  form.addEventListener('submit', function (e) { e.preventDefault(); });
  chips.forEach(function (c) {
    c.addEventListener('click', function () {
      var s = c.getAttribute('data-status'), i = state.status.indexOf(s);
      if (i >= 0) state.status.splice(i, 1); else state.status.push(s);
      showState();
      apply();
      writeHash();
    });
  });
  function fold(open) {
    info.forEach(function (c) { if (!c.el.hidden) c.el.open = open; });
  }
  document.getElementById('unfold').addEventListener('click', function () { fold(true); });
  document.getElementById('fold').addEventListener('click', function () { fold(false); });
  document.getElementById('reset').addEventListener('click', function () {
    state = { status: allStatuses.slice(), tag: '', metric: '', below: '', q: '', sort: '', cause: '' };
    showState();
    apply();
    writeHash();
  });
  window.addEventListener('hashchange', function () {
    if (location.hash.indexOf('=') < 0) return;
    state = readHash();
    showState();
    apply();
    var cases = document.getElementById('cases');
    if (cases) cases.scrollIntoView();
  });
  document.addEventListener('keydown', function (e) {
    if (e.key === '/' && document.activeElement !== qIn && !e.ctrlKey && !e.metaKey) {
      e.preventDefault();
      qIn.focus();
    }
  });

  form.hidden = false;
  state = readHash();
  showState();
  apply();
  document.documentElement.setAttribute('data-ready', '1');
})();
)JS";

std::string Base64(std::string_view bytes) {
  static const char kAlphabet[] =
      "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  size_t i = 0;
  for (; i + 2 < bytes.size(); i += 3) {
    const uint32_t v = (static_cast<uint8_t>(bytes[i]) << 16) |
                       (static_cast<uint8_t>(bytes[i + 1]) << 8) |
                       static_cast<uint8_t>(bytes[i + 2]);
    out.push_back(kAlphabet[(v >> 18) & 63]);
    out.push_back(kAlphabet[(v >> 12) & 63]);
    out.push_back(kAlphabet[(v >> 6) & 63]);
    out.push_back(kAlphabet[v & 63]);
  }
  const size_t rest = bytes.size() - i;
  if (rest > 0) {
    uint32_t v = static_cast<uint8_t>(bytes[i]) << 16;
    if (rest == 2) v |= static_cast<uint8_t>(bytes[i + 1]) << 8;
    out.push_back(kAlphabet[(v >> 18) & 63]);
    out.push_back(kAlphabet[(v >> 12) & 63]);
    out.push_back(rest == 2 ? kAlphabet[(v >> 6) & 63] : '=');
    out.push_back('=');
  }
  return out;
}

std::string CspHashSource(std::string_view text) {
  // Sha256 offers the digest in hex; CSP wants base64 of the raw bytes.
  const std::string hex = Sha256Hex(text);
  std::string raw;
  raw.reserve(hex.size() / 2);
  for (size_t i = 0; i + 1 < hex.size(); i += 2) {
    raw.push_back(static_cast<char>(std::stoi(hex.substr(i, 2), nullptr, 16)));
  }
  return "sha256-" + Base64(raw);
}

std::string ReportContentSecurityPolicy() {
  return "default-src 'none'; script-src '" + CspHashSource(kReportScript) + "'; style-src '" +
         CspHashSource(kReportStyle) + "'; img-src 'none'; base-uri 'none'; form-action 'none'";
}

void AppendPageStart(std::string* out, std::string_view title, std::string_view page) {
  out->append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
  out->append("<meta http-equiv=\"Content-Security-Policy\" content=\"");
  out->append(ReportContentSecurityPolicy());
  out->append("\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
  out->append("<meta name=\"generator\" content=\"plumb\">\n<title>");
  AppendHtmlText(out, title);
  out->append("</title>\n<style>");
  out->append(kReportStyle);
  out->append("</style>\n</head>\n<body data-page=\"");
  AppendHtmlAttribute(out, page);
  out->append("\">\n");
}

void AppendFilterForm(std::string* out, const std::vector<FilterStatus>& statuses,
                      const std::vector<std::string>& tags, const std::vector<std::string>& metrics,
                      std::string_view metric_note, int64_t total_cases) {
  out->append("<form class=\"filters\" id=\"filters\" hidden role=\"search\">");
  for (const FilterStatus& s : statuses) {
    out->append("<button type=\"button\" class=\"chip\" aria-pressed=\"true\" data-status=\"");
    AppendHtmlAttribute(out, s.id);
    out->append("\">");
    AppendHtmlText(out, s.label);
    out->append("<span class=\"c\">" + std::to_string(s.count) + "</span></button>");
  }
  out->append("<label>tag <select name=\"tag\"><option value=\"\">any</option>");
  for (const std::string& tag : tags) {
    out->append("<option value=\"");
    AppendHtmlAttribute(out, tag);
    out->append("\">");
    AppendHtmlText(out, tag);
    out->append("</option>");
  }
  out->append("</select></label><label>");
  AppendHtmlText(out, metric_note);
  out->append(" <select name=\"metric\"><option value=\"\">metric</option>");
  for (const std::string& metric : metrics) {
    out->append("<option value=\"");
    AppendHtmlAttribute(out, metric);
    out->append("\">");
    AppendHtmlText(out, metric);
    out->append("</option>");
  }
  out->append(
      "</select></label><label>under <input name=\"below\" type=\"number\" step=\"0.05\" "
      "min=\"0\" placeholder=\"1.0\"></label>"
      "<label>text <input name=\"q\" type=\"search\" placeholder=\"id, question, "
      "answer\xE2\x80\xA6 "
      "(press /)\"></label>"
      "<label>order <select name=\"sort\"><option value=\"\">suite order</option>"
      "<option value=\"metric\">chosen metric, lowest first</option>"
      "<option value=\"latency\">slowest first</option><option value=\"id\">case id</option>"
      "</select></label>"
      "<button type=\"button\" class=\"btn\" id=\"unfold\">unfold shown</button>"
      "<button type=\"button\" class=\"btn\" id=\"fold\">fold all</button>"
      "<button type=\"button\" class=\"btn\" id=\"reset\">clear filters</button></form>");
  out->append("<p class=\"shown\" id=\"shown\">All " + std::to_string(total_cases) +
              (total_cases == 1 ? " case" : " cases") +
              " are listed below; with scripting on, the filters above narrow them.</p>");
}

void AppendCaseGroup(std::string* out, std::string_view name, std::string_view title, int64_t count,
                     std::string_view aside, std::string_view empty,
                     const std::function<void()>& cards) {
  out->append("<div class=\"group\" data-group=\"");
  out->append(name);
  out->append("\"><h3>");
  out->append(title);
  out->append("<span class=\"n\">" + std::to_string(count) +
              "</span> <span class=\"n n-shown\"></span>");
  out->append(aside);
  out->append("</h3>");
  if (count == 0) {
    out->append("<p class=\"note\">");
    out->append(empty);
    out->append("</p>");
  }
  out->append("<div class=\"cards\">");
  cards();
  out->append("</div></div>");
}

void AppendCardListBreak(std::string* out, std::string_view id, std::string_view heading) {
  out->append("</div><h4 class=\"because\" id=\"");
  out->append(id);
  out->append("\">");
  out->append(heading);
  out->append("</h4><div class=\"cards\">");
}

void AppendPageEnd(std::string* out) {
  out->append(
      "<footer><div class=\"wrap\"><p><strong>What this report is evidence of.</strong> A suite "
      "score is evidence about this suite only: the questions, gold answers and documents it "
      "holds, run against this pipeline at this time. It does not certify the pipeline for "
      "legal, medical or safety-critical use; such deployments need review by qualified people "
      "under the rules that govern them.</p><p>Written by plumb " PLUMB_VERSION
      ". Everything shown from the suite, the corpus or the pipeline is quoted as text; this "
      "file makes no network requests.</p></div></footer>\n<script>");
  out->append(kReportScript);
  out->append("</script>\n</body>\n</html>\n");
}

bool WriteHtmlPage(std::string_view what, const std::function<std::string()>& render,
                   const std::string& path, std::string* error) {
  std::string html;
  try {
    html = render();
  } catch (const nlohmann::json::exception& e) {
    // Only a run.json or drift JSON of an unexpected shape gets here.
    *error = "cannot build the " + std::string(what) + ": unexpected record: " + e.what();
    return false;
  }
  if (!WriteFileAtomically(path, html, error)) {
    *error = "cannot write the " + std::string(what) + ": " + *error;
    return false;
  }
  return true;
}

}  // namespace plumb
