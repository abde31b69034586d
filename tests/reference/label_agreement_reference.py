#!/usr/bin/python3
"""Checks plumb's grader-calibration statistics against Debian's sklearn, scipy and statsmodels.

Usage: label_agreement_reference.py LABEL_AGREEMENT_DRIVER

The driver (tests/reference/label_agreement_driver.cc) prints plumb_metrics' values
(metrics/label_agreement.h) for label sets written to its stdin; this script recomputes them:
  - the 2x2 table with sklearn.metrics.confusion_matrix(labels=[1, 0]),
  - Cohen's kappa with sklearn.metrics.cohen_kappa_score (nan where sklearn divides 0 by 0),
  - agreement, base rate and grader pass rate as numpy means,
  - sensitivity and specificity as shares of the table's rows, their Wilson intervals with
    statsmodels.stats.proportion.proportion_confint(method="wilson"),
  - Spearman's rho with scipy.stats.spearmanr (nan for a constant side), the mean absolute
    difference with numpy.
Label sets: 300 random ones (n from 2 to 300, base rates and grader error rates drawn at random)
and the degenerate ones: all pass, all fail, perfect agreement, total disagreement, n = 1, and a
grader that always says pass. Exits 1 and lists every disagreement.
"""

import math
import random
import subprocess
import sys
import warnings

import numpy as np
import scipy.stats
import sklearn
from sklearn.metrics import cohen_kappa_score, confusion_matrix
from statsmodels.stats.proportion import proportion_confint

failures = []
checks = 0


def same(got, want, tol=1e-12):
    if want is None or (isinstance(want, float) and math.isnan(want)):
        return math.isnan(got)
    return abs(got - want) <= tol * max(1.0, abs(want))


def check(name, got, want, tol=1e-12):
    global checks
    checks += 1
    if not same(got, want, tol):
        failures.append(f"{name}: plumb {got!r}, reference {want!r}")


def label_sets():
    rng = random.Random(20261205)
    sets = [
        ("all pass", [1] * 40, [1] * 40),
        ("all fail", [0] * 40, [0] * 40),
        ("person all pass, grader mixed", [1] * 30, [1] * 20 + [0] * 10),
        ("person mixed, grader always pass", [1] * 25 + [0] * 15, [1] * 40),
        ("perfect agreement", [1] * 17 + [0] * 23, [1] * 17 + [0] * 23),
        ("total disagreement", [1] * 10 + [0] * 10, [0] * 10 + [1] * 10),
        ("n = 1 pass", [1], [1]),
        ("n = 1 fail/pass", [0], [1]),
        ("n = 2", [1, 0], [1, 0]),
    ]
    for k in range(300):
        n = rng.randint(2, 300)
        base = rng.random()
        sens = rng.random()
        spec = rng.random()
        person = [1 if rng.random() < base else 0 for _ in range(n)]
        grader = [(1 if rng.random() < sens else 0) if p else (0 if rng.random() < spec else 1)
                  for p in person]
        sets.append((f"random set {k} (n={n})", person, grader))
    return sets


def main():
    driver = sys.argv[1]
    sets = label_sets()
    numeric = []
    rng = random.Random(7)
    for k in range(150):
        n = rng.randint(1, 120)
        scale = rng.choice([[1, 2, 3, 4, 5], [0, 0.25, 0.5, 0.75, 1], [1, 5]])
        x = [rng.choice(scale) for _ in range(n)]
        y = [min(max(v + rng.choice([-1, 0, 0, 1]) * (scale[1] - scale[0]), scale[0]), scale[-1])
             for v in x]
        numeric.append((f"numeric set {k} (n={n})", x, y))
    numeric.append(("constant person", [3] * 10, [1, 2, 3, 4, 5] * 2))
    numeric.append(("identical", [1, 2, 3, 4, 5], [1, 2, 3, 4, 5]))

    lines = []
    for _, p, g in sets:
        lines.append(f"verdicts {len(p)} " + " ".join(map(str, p + g)))
    for _, x, y in numeric:
        lines.append(f"spearman {len(x)} " + " ".join(repr(float(v)) for v in x + y))
    out = subprocess.run([driver], input="\n".join(lines) + "\n", capture_output=True, text=True,
                         check=True).stdout.splitlines()
    assert len(out) == len(lines), (len(out), len(lines))

    for (name, p, g), text in zip(sets, out[:len(sets)]):
        v = [float(t) for t in text.split()]
        cm = confusion_matrix(p, g, labels=[1, 0])
        for i, want in enumerate([cm[0][0], cm[0][1], cm[1][0], cm[1][1]]):
            check(f"{name}: table cell {i}", v[i], float(want), 0)
        n = len(p)
        check(f"{name}: n", v[4], float(n), 0)
        check(f"{name}: base rate", v[5], float(np.mean(p)))
        check(f"{name}: grader pass rate", v[6], float(np.mean(g)))
        check(f"{name}: agreement", v[7], float(np.mean(np.array(p) == np.array(g))))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            kappa = float(cohen_kappa_score(p, g))
        check(f"{name}: kappa", v[8], kappa, 1e-9)
        rows = [(cm[0][0], cm[0][0] + cm[0][1], 9), (cm[1][1], cm[1][0] + cm[1][1], 12)]
        for label, (hits, total, at) in zip(["sensitivity", "specificity"], rows):
            if total == 0:
                for j in range(3):
                    check(f"{name}: {label} [{j}]", v[at + j], float("nan"))
                continue
            check(f"{name}: {label}", v[at], hits / total)
            low, high = proportion_confint(int(hits), int(total), alpha=0.05, method="wilson")
            check(f"{name}: {label} low", v[at + 1], float(low), 1e-9)
            check(f"{name}: {label} high", v[at + 2], float(high), 1e-9)

    for (name, x, y), text in zip(numeric, out[len(sets):]):
        v = [float(t) for t in text.split()]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            rho = float(scipy.stats.spearmanr(x, y)[0]) if len(x) > 1 else float("nan")
        check(f"{name}: spearman rho", v[0], rho, 1e-9)
        check(f"{name}: mean absolute difference", v[1],
              float(np.mean(np.abs(np.array(x) - np.array(y)))))

    print(f"sklearn {sklearn.__version__}, scipy {scipy.__version__}: {checks} checks over "
          f"{len(sets)} label sets and {len(numeric)} numeric sets")
    if failures:
        print("\n".join(failures[:50]))
        print(f"{len(failures)} disagreements")
        sys.exit(1)
    print("all agree")


main()
