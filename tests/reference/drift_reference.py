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
  - bootstrap intervals: numpy over the SAME resamples (the generator transcription in
    statistics_reference.py, itself checked there against published vectors): per resample the
    count of each paired case, a statistic over a case subset = sum(count * d) / sum(count) over
    the subset, resamples without a case of the subset left out; latency = the type-7
    percentile (numpy method="linear") of the drawn cases' latencies, ratio cand / base,
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
from statistics_reference import resample_indices  # noqa: E402

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


def recompute(base_dir, cand_dir, resamples, seed, min_effect, gate):
    base_record, base = load_run(base_dir)
    _, cand = load_run(cand_dir)
    paired = sorted(i for i in base if i in cand and base[i]["gold_hash"] == cand[i]["gold_hash"])
    n = len(paired)
    metrics = sorted({m for c in list(base.values()) + list(cand.values()) for m in c["values"]})
    idx = resample_indices(n, resamples, seed)
    counts = np.zeros((resamples, n), dtype=np.int64)
    for r in range(resamples):
        counts[r] = np.bincount(idx[r], minlength=n)

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
        sub_counts = counts[:, subset]
        drawn = sub_counts.sum(axis=1)
        keep = drawn > 0
        means = (sub_counts[keep] @ d) / drawn[keep]
        out["interval"] = percentiles(means) if len(means) else (None, None)
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
        sub_counts = counts[:, latency_subset]
        for p in (50, 95):
            ratios = []
            for r in range(resamples):
                if sub_counts[r].sum() == 0:
                    continue
                ratios.append(np.percentile(np.repeat(lc, sub_counts[r]), p, method="linear")
                              / np.percentile(np.repeat(lb, sub_counts[r]), p, method="linear"))
            base_q = np.percentile(lb, p, method="linear")
            cand_q = np.percentile(lc, p, method="linear")
            latency[f"p{p}"] = {"base": base_q, "cand": cand_q, "ratio": cand_q / base_q,
                                "interval": percentiles(ratios)}

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
