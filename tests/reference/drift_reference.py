#!/usr/bin/python3
"""Checks `plumb drift --json` against a recomputation from the two runs' journals.

Usage: drift_reference.py PLUMB FIXTURES_RUNS_DIR

Builds run directories from the recorded predictions in fixtures/runs/ with `plumb score`, runs
`plumb drift BASE CAND --json` on several pairs, and recomputes every number of the report from
the runs' own files (run.json's per-case gold hashes and tags, cases.jsonl's scores, pass flags
and latencies), following the definitions in runner/compare/drift.h, with the reference libraries:
  - pairing by id and gold hash, per-case means over repeats, means and deltas: plain Python/numpy,
  - exact McNemar: statsmodels.stats.contingency_tables.mcnemar(exact=True),
  - Wilcoxon signed-rank: scipy.stats.wilcoxon where its method is plumb's (no ties and no zeros
    up to 50 differences, and everything above 50); with ties or zeros at up to 50 non-zero
    differences the exact permutation distribution of the signed ranks, from
    scipy.stats.permutation_test (every sign pattern up to 16, else the sign test
    scipy.stats.binomtest when every |d| is tied, else 200,000 sampled patterns within Monte
    Carlo error); all-zero differences are p = 1, where scipy raises,
  - Holm: statsmodels.stats.multitest.multipletests(method="holm"), over the gated run-level
    metrics with at least six paired cases, and per metric over the tags with at least six,
  - verdicts: interval, min_effect and the (adjusted) p <= 0.05; "too few cases" below six,
  - bootstrap intervals: the draws of runner/compare/drift.h transcribed below (per case
    subset one seeded stream: the draws landing in the subset, then each statistic's grouped
    counts, metrics::GroupedSum; per latency percentile metrics::WindowedQuantileRatio), with
    the generator and binomial sampler of statistics_reference.py (itself checked there against
    published vectors and, for these draws, against numpy's index bootstrap within Monte Carlo
    error); interval ends by numpy.percentile(method="linear"),
  - detectable effect at the level l = 0.05 / (gated family size) for a family member, 0.05
    otherwise: 0/1 metrics by exact power (noise (D + 1/2) / n for D of n pairs discordant) (the discordant count's scipy.stats.binom weights times
    the lost count's binomial upper tail beyond critical values found with
    scipy.stats.binomtest), solved for power 0.8 with scipy.optimize.brentq; continuous ones
    max(0.005, norm.ppf(1 - l/2) se) + norm.ppf(0.8) se; null with too few cases, no spread, or
    beyond the base mean.
Exits 1 and lists every disagreement.
"""

import json
import math
import os
import subprocess
import sys
import tempfile
import warnings

import numpy as np
import scipy.optimize
import scipy.stats
from statsmodels.stats.contingency_tables import mcnemar
from statsmodels.stats.multitest import multipletests

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from statistics_reference import (BinomialOdds, BinomialTables,  # noqa: E402
                                  Xoshiro256StarStar, grouped_plan, resample_indices,
                                  sample_binomial)

BINARY_KIND = {"exact_match", "correct", "pattern_match", "number_match", "covers_gold", "pass_rate"}
failures = []
checks = 0


def close(name, got, want, rel=1e-12, abs_tol=1e-14):
    global checks
    checks += 1
    if want is None or (isinstance(want, float) and math.isnan(want)):
        if got is not None:
            failures.append(f"{name}: plumb {got!r}, reference none")
        return
    if got is None or not math.isclose(float(got), float(want), rel_tol=rel, abs_tol=abs_tol):
        failures.append(f"{name}: plumb {got!r}, reference {want!r}")


def equal(name, got, want):
    global checks
    checks += 1
    if got != want:
        failures.append(f"{name}: plumb {got!r}, reference {want!r}")


def load_run(run_dir):
    """id -> {"gold_hash", "tags", "values": {metric: mean}, "pass", "unstable", "latency"}."""
    with open(os.path.join(run_dir, "run.json"), encoding="utf-8") as f:
        record = json.load(f)
    cases = {}
    for case_id, gold in record["cases"].items():
        cases[case_id] = {"gold_hash": gold["gold_hash"], "tags": sorted(set(gold["tags"])),
                          "scores": {}, "passes": [], "latencies": []}
    with open(os.path.join(run_dir, "cases.jsonl"), encoding="utf-8") as f:
        for line in f:
            r = json.loads(line)
            c = cases.get(r["id"])
            if c is None:
                continue
            for metric, value in r["scores"].items():
                c["scores"].setdefault(metric, []).append(value)
            c["scores"].setdefault("pass_rate", []).append(1.0 if r["pass"] else 0.0)
            c["passes"].append(bool(r["pass"]))
            if r["error"] is None:
                c["latencies"].append(r["latency_ms"])
    for c in cases.values():
        c["values"] = {m: sum(v) / len(v) for m, v in c["scores"].items()}
        c["pass"] = len(c["passes"]) > 0 and all(c["passes"])
        c["unstable"] = any(c["passes"]) and not all(c["passes"])
        c["latency"] = sum(c["latencies"]) / len(c["latencies"]) if c["latencies"] else None
    return record, cases


def rank_sum_positive(x, axis=-1):
    x = np.asarray(x)
    return np.sum(scipy.stats.rankdata(np.abs(x), axis=axis) * (x > 0), axis=axis)


def wilcoxon_p(d):
    """(p, tolerance): exact where scipy computes plumb's method, Monte Carlo error otherwise."""
    d = np.asarray(d, dtype=float)
    if len(d) == 0 or np.all(d == 0):
        return 1.0, 0.0
    nonzero = d[d != 0]
    ties = len(np.unique(np.abs(nonzero))) < len(nonzero)
    if len(nonzero) > 50 or (len(nonzero) == len(d) and not ties):
        return scipy.stats.wilcoxon(d).pvalue, 0.0
    if len(np.unique(np.abs(nonzero))) == 1:  # one tie group: R+ counts the positive signs
        return scipy.stats.binomtest(int(np.sum(nonzero > 0)), len(nonzero)).pvalue, 0.0
    exact = len(nonzero) <= 16
    result = scipy.stats.permutation_test((nonzero,), rank_sum_positive, vectorized=True,
                                          permutation_type="samples",
                                          n_resamples=np.inf if exact else 200000,
                                          alternative="two-sided", random_state=1)
    tolerance = 0.0 if exact else 10 * math.sqrt(max(result.pvalue, 1e-3) / 200000)
    return result.pvalue, tolerance


def mcnemar_drop(n, discordant_rate, level, min_effect, cap):
    """The exact-power detectable drop of a 0/1 metric (runner/compare/drift.h)."""
    noise = min(1.0, discordant_rate) / 2
    cap = min(cap, 1 - 2 * noise)
    if n < 1 or cap <= 0:
        return None
    margin = max(1, math.ceil(n * min_effect - 1e-9))
    critical = np.full(n + 1, 10 ** 9)
    for d in range(n + 1):
        low, high = (d + margin + 1) // 2, d
        if low > d or scipy.stats.binomtest(d, d).pvalue > level:
            continue
        while low < high:
            mid = (low + high) // 2
            if scipy.stats.binomtest(mid, d).pvalue <= level:
                high = mid
            else:
                low = mid + 1
        critical[d] = high
    ds = np.arange(n + 1)
    usable = critical <= ds

    def power(drop):
        q = min(1.0, 2 * noise + drop)
        share = (noise + drop) / q
        tails = scipy.stats.binom.sf(critical[usable] - 1, ds[usable], share)
        return float(np.sum(scipy.stats.binom.pmf(ds[usable], n, q) * tails))

    if power(cap) < 0.8:
        return None
    return scipy.optimize.brentq(lambda x: power(x) - 0.8, 1e-12, cap, xtol=1e-10)


def percentiles(values):
    low, high = np.percentile(np.asarray(values), [2.5, 97.5], method="linear")
    return float(low), float(high)


# --- The drift bootstrap, transcribed from runner/compare/drift.h ------------------------------
# Per case subset one stream Xoshiro256StarStar(seed): per resample, the draws landing in the
# subset (binomial, none when the subset is every paired case), then each statistic over that
# subset, in the order drift.cc registers them, as metrics::GroupedSum (grouped_bootstrap.h);
# per latency percentile one stream for metrics::WindowedQuantileRatio
# (windowed_quantile_ratio.h). Same doubles, same C library log/exp: the same intervals to the
# bit. COSTS: grouped_bootstrap.h's kBinomialDrawCost and kBinomialSdCost.

def header_costs():
    header = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "metrics",
                          "grouped_bootstrap.h")
    with open(header, encoding="utf-8") as f:
        text = f.read()
    value = {}
    for name in ("kBinomialDrawCost", "kBinomialSdCost"):
        value[name] = float(text.split(f"double {name} = ")[1].split(";")[0])
    return value["kBinomialDrawCost"], value["kBinomialSdCost"]


def sum_of_uniform_draws(data, draws, rng):
    s = [0.0, 0.0, 0.0, 0.0]
    i = 0
    while i + 4 <= draws:
        for k in range(4):
            s[k] += data[rng.index(len(data))]
        i += 4
    while i < draws:
        s[0] += data[rng.index(len(data))]
        i += 1
    return (s[0] + s[1]) + (s[2] + s[3])


def grouped_sum(values, costs):
    """metrics::GroupedSum: a function (draws, rng, tables) -> the sum of the draws."""
    values = [float(v) for v in values]
    index, distinct, chain, tail_cases = grouped_plan(values, costs) if len(values) >= 2 \
        else (True, [], 0, 0)
    if index:
        return lambda draws, rng, tables: sum_of_uniform_draws(values, draws, rng)
    odds, remaining = [], len(values)
    for _, count in distinct[:chain]:
        odds.append(BinomialOdds(float(count) / float(remaining)))
        remaining -= count
    tail = [v for v, count in distinct[chain:] for _ in range(count)] if tail_cases else []

    def draw(draws, rng, tables):
        total, left = 0.0, draws
        for j in range(chain):
            count = sample_binomial(rng, left, odds[j], tables)
            total += float(count) * distinct[j][0]
            left -= count
        if not tail:
            return total + float(left) * distinct[-1][0]
        return total + sum_of_uniform_draws(tail, left, rng)
    return draw


def subset_intervals(n, size, differences, resamples, seed, costs, tables):
    """The intervals of the statistics over one subset (each its differences, in order)."""
    rng = Xoshiro256StarStar(seed)
    in_subset = BinomialOdds(float(size) / float(n))
    sums = [grouped_sum(d, costs) for d in differences]
    means = [[] for _ in differences]
    for _ in range(resamples):
        drawn = n if size == n else sample_binomial(rng, n, in_subset, tables)
        if drawn == 0:
            continue
        for k, draw in enumerate(sums):
            means[k].append(draw(drawn, rng, tables) / drawn)
    return [percentiles(m) if m else (None, None) for m in means]


def rank_type7(t, p):
    if t <= 1:
        return 0, 0.0
    h = float(t - 1) * (p / 100.0)
    if not h > 0:
        return 0, 0.0
    if h >= float(t - 1):
        return t - 1, 0.0
    return int(math.floor(h)), h - math.floor(h)


def interpolate(below, above, gamma):
    difference = above - below
    return above - difference * (1 - gamma) if gamma >= 0.5 else below + difference * gamma


def windowed_ratio_interval(lb, lc, n, p, resamples, seed, tables):
    """metrics::WindowedQuantileRatio's resamples, as its header orders the draws."""
    size = len(lb)

    def ranks(values):
        order = sorted(range(size), key=lambda k: values[k])  # stable: ties by position
        rank = [0] * size
        for r, k in enumerate(order):
            rank[k] = r
        return rank, [values[k] for k in order]
    brank, bsorted = ranks(lb)
    crank, csorted = ranks(lc)
    q = p / 100
    half = math.ceil(7 * math.sqrt(float(size) * q * (1 - q))) + 2
    center = math.floor(float(size - 1) * q)
    a, b = int(max(0.0, center - half)), int(min(float(size), center + half + 2))

    def cls(r):
        return 0 if r < a else (1 if r < b else 2)
    cells = {}
    for k in range(size):
        cells.setdefault(3 * cls(brank[k]) + cls(crank[k]), []).append(k)
    chain = sorted(cells.items(), key=lambda item: (len(item[1]), item[0]))
    odds, remaining = [], size
    for _, cases in chain[:-1]:
        odds.append(BinomialOdds(float(len(cases)) / float(remaining)))
        remaining -= len(cases)
    in_subset = BinomialOdds(float(size) / float(n))
    rng = Xoshiro256StarStar(seed)
    ratios = []

    def quantile(counts, start, sorted_values, below, lower, upper, gamma, t):
        seen, k = below, 0
        while seen + counts[k] <= lower:
            seen += counts[k]
            k += 1
        low = sorted_values[start + k]
        while seen + counts[k] <= upper:
            seen += counts[k]
            k += 1
        high = sorted_values[start + k]
        return low if lower + 1 >= t else interpolate(low, high, gamma)

    for _ in range(resamples):
        t = n if size == n else sample_binomial(rng, n, in_subset, tables)
        if t == 0:
            continue
        count, left = [0] * 9, t
        for j, (number, _) in enumerate(chain):
            c = left if j + 1 == len(chain) else sample_binomial(rng, left, odds[j], tables)
            count[number] = c
            left -= c
        drawn = []

        def draw_cell(number):
            cases = cells.get(number)
            if cases:
                for _ in range(count[number]):
                    drawn.append(cases[rng.index(len(cases))])
        for number in range(9):
            if number // 3 == 1 or number % 3 == 1:
                draw_cell(number)
        base_below = sum(count[x] for x in range(9) if x // 3 == 0)
        base_inside = sum(count[x] for x in range(9) if x // 3 == 1)
        cand_below = sum(count[x] for x in range(9) if x % 3 == 0)
        cand_inside = sum(count[x] for x in range(9) if x % 3 == 1)
        lower, gamma = rank_type7(t, p)
        upper = min(lower + 1, t - 1)
        if (base_below <= lower and upper < base_below + base_inside
                and cand_below <= lower and upper < cand_below + cand_inside):
            bc, cc = [0] * (b - a + 1), [0] * (b - a + 1)
            for k in drawn:
                if a <= brank[k] < b:
                    bc[brank[k] - a] += 1
                if a <= crank[k] < b:
                    cc[crank[k] - a] += 1
            ratios.append(quantile(cc, a, csorted, cand_below, lower, upper, gamma, t)
                          / quantile(bc, a, bsorted, base_below, lower, upper, gamma, t))
            continue
        for number in range(9):
            if number // 3 != 1 and number % 3 != 1:
                draw_cell(number)
        bc, cc = [0] * size, [0] * size
        for k in drawn:
            bc[brank[k]] += 1
            cc[crank[k]] += 1
        ratios.append(quantile(cc, 0, csorted, 0, lower, upper, gamma, t)
                      / quantile(bc, 0, bsorted, 0, lower, upper, gamma, t))
    return percentiles(ratios)


def display_order(metrics):
    """MetricDisplayOrder (runner/compare/drift.cc)."""
    first = ["correct", "exact_match", "token_f1", "token_recall", "covers_gold", "knowledge_f1",
             "cited_support", "pattern_match", "number_match", "grade.", "citation_precision",
             "citation_recall", "citation_f1"]

    def rank(m):
        for i, f in enumerate(first):
            if f == m or (f == "grade." and m.startswith("grade.")):
                return (0, i, m)
        if m.startswith("recall@") and m[7:].isdigit():
            return (1, int(m[7:]), m)
        if m == "mrr":
            return (2, 0, m)
        if m == "pass_rate":
            return (3, 0, m)
        return (4, 0, m)
    return sorted(set(metrics), key=rank)


def recompute(base_dir, cand_dir, resamples, seed, min_effect, gate):
    base_record, base = load_run(base_dir)
    _, cand = load_run(cand_dir)
    paired = sorted(i for i in base if i in cand and base[i]["gold_hash"] == cand[i]["gold_hash"])
    n = len(paired)
    metrics = sorted({m for c in list(base.values()) + list(cand.values()) for m in c["values"]})
    metrics = display_order(metrics)  # drift.cc's registration order within a subset
    tables = BinomialTables(n)
    costs = header_costs()
    registered = {}  # subset -> [(differences, statistic)], in registration order

    def binary(metric):
        if metric not in BINARY_KIND:
            return False
        for case_id in paired:
            for run in (base, cand):
                v = run[case_id]["values"].get(metric)
                if v is not None and v not in (0.0, 1.0):
                    return False
        return True

    def stat(metric, members):
        subset = [k for k in members
                  if metric in base[paired[k]]["values"] and metric in cand[paired[k]]["values"]]
        if not subset:
            return None
        b = np.array([base[paired[k]]["values"][metric] for k in subset])
        c = np.array([cand[paired[k]]["values"][metric] for k in subset])
        d = c - b
        is_binary = binary(metric)
        out = {"n": len(subset), "base_mean": b.mean(), "cand_mean": c.mean(), "delta": d.mean(),
               "test": "mcnemar" if is_binary else "wilcoxon", "d": d}
        if is_binary:
            lost, gained = int(np.sum(d < 0)), int(np.sum(d > 0))
            out["p_value"] = mcnemar(np.array([[0, lost], [gained, 0]]), exact=True).pvalue
            out["p_tolerance"] = 0.0
        else:
            out["p_value"], out["p_tolerance"] = wilcoxon_p(d)
        out["too_few"] = len(subset) < 6
        registered.setdefault(tuple(subset), []).append((d, out))
        out["p_holm"] = out["p_value"]
        return out

    def judge(s):
        low, high = s["interval"]
        if s["too_few"]:
            s["verdict"] = "too few cases"
        elif not s["p_holm"] <= 0.05:
            s["verdict"] = "steady"
        elif high is not None and high < 0 and s["delta"] <= -min_effect:
            s["verdict"] = "regressed"
        elif low is not None and low > 0 and s["delta"] >= min_effect:
            s["verdict"] = "improved"
        else:
            s["verdict"] = "steady"

    everyone = list(range(n))
    run_level = {m: s for m in metrics if (s := stat(m, everyone)) is not None}
    tags = sorted({t for case_id in paired for t in base[case_id]["tags"]})
    tag_level = {}
    for t in tags:
        members = [k for k in everyone if t in base[paired[k]]["tags"]]
        tag_level[t] = {m: s for m in metrics if (s := stat(m, members)) is not None}
    for subset, stats in registered.items():
        intervals = subset_intervals(n, len(subset), [d for d, _ in stats], resamples, seed,
                                     costs, tables)
        for (_, out), interval in zip(stats, intervals):
            out["interval"] = interval
    for m in metrics:
        family = [t for t in tags if m in tag_level[t] and not tag_level[t][m]["too_few"]]
        if family:
            adjusted = multipletests([tag_level[t][m]["p_value"] for t in family],
                                     method="holm")[1]
            for t, p in zip(family, adjusted):
                tag_level[t][m]["p_holm"] = p
        for t in tags:
            if m in tag_level[t]:
                judge(tag_level[t][m])
    gated_family = [m for m in gate if m in run_level and not run_level[m]["too_few"]]
    if gated_family:
        adjusted = multipletests([run_level[m]["p_value"] for m in gated_family],
                                 method="holm")[1]
        for m, p in zip(gated_family, adjusted):
            run_level[m]["p_holm"] = p
    for s in run_level.values():
        judge(s)

    mde = {}
    for m, s in run_level.items():
        d = s["d"]
        level = 0.05 / len(gated_family) if m in gated_family else 0.05
        if s["too_few"]:
            mde[m] = None
        elif s["test"] == "mcnemar":
            mde[m] = mcnemar_drop(len(d), (float(np.sum(d != 0)) + 0.5) / len(d), level,
                                  min_effect, s["base_mean"])
        elif np.all(d == d[0]):
            mde[m] = None
        else:
            se = d.std(ddof=1) / math.sqrt(len(d))
            value = max(min_effect, scipy.stats.norm.ppf(1 - level / 2) * se) \
                + scipy.stats.norm.ppf(0.8) * se
            mde[m] = value if value <= s["base_mean"] else None

    latency_subset = [k for k in everyone
                      if base[paired[k]]["latency"] and cand[paired[k]]["latency"]
                      and base[paired[k]]["latency"] > 0 and cand[paired[k]]["latency"] > 0]
    latency = {}
    if latency_subset:
        lb = np.array([base[paired[k]]["latency"] for k in latency_subset])
        lc = np.array([cand[paired[k]]["latency"] for k in latency_subset])
        for p in (50, 95):
            interval = windowed_ratio_interval(list(lb), list(lc), n, float(p), resamples, seed,
                                               tables)
            base_q = np.percentile(lb, p, method="linear")
            cand_q = np.percentile(lc, p, method="linear")
            latency[f"p{p}"] = {"base": base_q, "cand": cand_q, "ratio": cand_q / base_q,
                                "interval": interval}

    lost = [i for i in paired if base[i]["pass"] and not cand[i]["pass"]]
    gained = [i for i in paired if not base[i]["pass"] and cand[i]["pass"]]
    broken_floors = [t for t in load_run(cand_dir)[0]["thresholds"] if not t["held"]]
    regressed = [m for m in gate if m in run_level and run_level[m]["verdict"] == "regressed"]
    return {"paired": paired, "run": run_level, "tags": tag_level, "mde": mde, "latency": latency,
            "lost": sorted(lost), "gained": sorted(gained),
            "only_in_base": sorted(set(base) - set(cand)),
            "only_in_cand": sorted(set(cand) - set(base)),
            "exit_code": 1 if regressed or broken_floors else 0, "regressed": regressed,
            "suite_changed": base_record["suite"]["hash"]
            != load_run(cand_dir)[0]["suite"]["hash"]}


def compare(label, report, want):
    equal(f"{label} paired_cases", report["paired_cases"], want["paired"])
    equal(f"{label} only_in_base", report["only_in_base"], want["only_in_base"])
    equal(f"{label} only_in_cand", report["only_in_cand"], want["only_in_cand"])
    equal(f"{label} changed.suite", report["changed"]["suite"], want["suite_changed"])

    def metric_rows(rows, expected, where):
        equal(f"{label} {where} metric ids", sorted(r["metric"] for r in rows), sorted(expected))
        for row in rows:
            s = expected.get(row["metric"])
            if s is None:
                continue
            name = f"{label} {where} {row['metric']}"
            equal(f"{name} n", row["n"], s["n"])
            equal(f"{name} test", row["test"], s["test"])
            close(f"{name} base_mean", row["base_mean"], s["base_mean"])
            close(f"{name} cand_mean", row["cand_mean"], s["cand_mean"])
            close(f"{name} delta", row["delta"], s["delta"])
            close(f"{name} p_value", row["p_value"], s["p_value"],
                  rel=1e-12 if s["test"] == "mcnemar" else 1e-9,
                  abs_tol=max(1e-300, s["p_tolerance"]))
            close(f"{name} interval low", row["interval"][0], s["interval"][0])
            close(f"{name} interval high", row["interval"][1], s["interval"][1])
            equal(f"{name} verdict", row["verdict"], s["verdict"])
            if "p_holm" in row:
                close(f"{name} p_holm", row["p_holm"], s["p_holm"], rel=1e-9,
                      abs_tol=max(1e-300, 10 * s["p_tolerance"]))

    metric_rows(report["metrics"], want["run"], "run")
    equal(f"{label} tags", [t["tag"] for t in report["tags"]], sorted(want["tags"]))
    for t in report["tags"]:
        metric_rows(t["metrics"], want["tags"].get(t["tag"], {}), f"tag {t['tag']}")
    for metric, value in want["mde"].items():
        # The exact-power drop is found by bisection to 1e-6.
        close(f"{label} mde {metric}", report["min_detectable_effect"].get(metric), value,
              rel=1e-9, abs_tol=2e-6)
    for p, expected in want["latency"].items():
        got = report["latency"][p]
        for key in ("base", "cand", "ratio"):
            close(f"{label} latency {p} {key}", got[key], expected[key])
        close(f"{label} latency {p} interval low", got["interval"][0], expected["interval"][0])
        close(f"{label} latency {p} interval high", got["interval"][1], expected["interval"][1])
    equal(f"{label} lost", sorted(c["id"] for c in report["lost"]), want["lost"])
    equal(f"{label} gained", sorted(c["id"] for c in report["gained"]), want["gained"])
    equal(f"{label} gate exit_code", report["gate"]["exit_code"], want["exit_code"])
    equal(f"{label} gate regressed", report["gate"]["regressed"], want["regressed"])


def main():
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    plumb, fixtures = sys.argv[1], sys.argv[2]
    warnings.simplefilter("ignore")  # scipy warns about zeros and ties in the approximation
    with tempfile.TemporaryDirectory(prefix="plumb_drift_reference_") as tmp:
        def score(name, predictions, suite="suite.yaml"):
            out = os.path.join(tmp, name)
            done = subprocess.run([plumb, "score", os.path.join(fixtures, suite),
                                   os.path.join(fixtures, predictions), "--out", out, "--json"],
                                  capture_output=True, text=True, check=False)
            if done.returncode not in (0, 1):
                sys.exit(f"plumb score {predictions} failed ({done.returncode}): {done.stderr}")
            return out

        base = score("base", "base.jsonl")
        runs = {"same": score("same", "base.jsonl"),
                "broken20": score("broken20", "cand-broken20.jsonl"),
                "flip2-lost": score("flip2-lost", "cand-flip2-lost.jsonl"),
                "flip2-mixed": score("flip2-mixed", "cand-flip2-mixed.jsonl"),
                "strict": score("strict", "base.jsonl", "suite-strict.yaml")}
        # broken20 with the defaults (B = 10000, seed 20261201); the others with a smaller B and
        # another seed, so that --resamples and --seed are exercised too.
        settings = {"broken20": (10000, 20261201)}
        gate = ["correct", "token_f1", "citation_recall"]
        for label, cand in runs.items():
            resamples, seed = settings.get(label, (2000, 7))
            args = [plumb, "drift", base, cand, "--json"]
            if label not in settings:
                args += ["--resamples", str(resamples), "--seed", str(seed)]
            done = subprocess.run(args, capture_output=True, text=True, check=False)
            if done.returncode not in (0, 1):
                failures.append(f"{label}: plumb drift exited {done.returncode}: {done.stderr}")
                continue
            report = json.loads(done.stdout)
            equal(f"{label} exit code", done.returncode, report["gate"]["exit_code"])
            compare(label, report, recompute(base, cand, resamples, seed, 0.005, gate))
    for failure in failures:
        print("FAIL", failure)
    print(f"{checks} values checked, {len(failures)} disagreements")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
