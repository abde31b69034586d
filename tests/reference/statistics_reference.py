#!/usr/bin/python3
"""Checks plumb's statistics (SPEC 6.5, 6.6, 7) against Debian's numpy, scipy and statsmodels.

Usage: statistics_reference.py STATISTICS_DRIVER

The driver (tests/reference/statistics_driver.cc) prints plumb_metrics' values for the commands
written to its stdin; this script recomputes every value with a reference library:
  - the normal quantile with scipy.special.ndtri / scipy.stats.norm.ppf,
  - Wilson intervals with statsmodels.stats.proportion.proportion_confint(method="wilson"),
  - percentiles with numpy.percentile(method="linear") (Hyndman and Fan definition 7),
  - bootstrap intervals with numpy over the SAME resamples: the script transcribes the documented
    generator (SplitMix64 seeding xoshiro256**, Lemire's unbiased index; metrics/seeded_random.h)
    from the published algorithms, checks the transcription against published output vectors,
    checks that it draws exactly the driver's stream, then has numpy form the resample means and
    percentiles,
  - McNemar with statsmodels.stats.contingency_tables.mcnemar(exact=True),
  - Wilcoxon with scipy.stats.wilcoxon (defaults of the installed scipy, 1.10.1 on Debian 12),
  - Holm with statsmodels.stats.multitest.multipletests(method="holm"),
  - the minimum detectable effect with scipy's normal quantiles and statsmodels' NormalIndPower.
Exits 1 and lists every disagreement if any value is off.
"""

import math
import subprocess
import sys
import warnings
from decimal import Decimal, localcontext

import numpy as np
import scipy
import scipy.special
import scipy.stats
import statsmodels
from statsmodels.stats.contingency_tables import mcnemar
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.power import NormalIndPower
from statsmodels.stats.proportion import proportion_confint

MASK = (1 << 64) - 1
SEED = 20261201  # plumb's default bootstrap seed (metrics/interval.h, metrics/paired_bootstrap.h)

failures = []
checks = 0


def check(name, got, want, rel, abs_tol):
    global checks
    checks += 1
    if isinstance(got, int) and isinstance(want, int):
        if got != want:
            failures.append(f"{name}: plumb {got}, reference {want}")
        return
    got, want = float(got), float(want)
    if got == want or (math.isnan(got) and math.isnan(want)):
        return
    if not math.isclose(got, want, rel_tol=rel, abs_tol=abs_tol):
        failures.append(f"{name}: plumb {got!r}, reference {want!r}")


def number(token):
    """A driver output token: integers (generator output) stay exact, the rest are doubles."""
    try:
        return int(token)
    except ValueError:
        return float(token)


def fmt(x):
    return repr(float(x))


def values_text(values):
    return " ".join([str(len(values))] + [fmt(v) for v in values])


# --- The generator, transcribed from the published reference code --------------------------------


class Xoshiro256StarStar:
    """xoshiro256** 1.0 (prng.di.unimi.it/xoshiro256starstar.c), seeded by four SplitMix64 outputs
    (prng.di.unimi.it/splitmix64.c); indices by Lemire's nearly divisionless method (ACM TOMACS
    29(1), 2019, Algorithm 5)."""

    def __init__(self, seed):
        x = seed & MASK
        state = []
        for _ in range(4):
            x = (x + 0x9E3779B97F4A7C15) & MASK
            z = x
            z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) & MASK
            z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) & MASK
            state.append(z ^ (z >> 31))
        self.s = state

    def next(self):
        s0, s1, s2, s3 = self.s
        r = (s1 * 5) & MASK
        result = ((((r << 7) | (r >> 57)) & MASK) * 9) & MASK
        t = (s1 << 17) & MASK
        s2 ^= s0
        s3 ^= s1
        s1 ^= s2
        s0 ^= s3
        s2 ^= t
        s3 = ((s3 << 45) | (s3 >> 19)) & MASK
        self.s = [s0, s1, s2, s3]
        return result

    def index(self, n):
        m = self.next() * n
        low = m & MASK
        if low < n:
            threshold = ((1 << 64) - n) % n  # 2^64 mod n, as C's (0 - n) % n on uint64_t
            while low < threshold:
                m = self.next() * n
                low = m & MASK
        return m >> 64


def resample_indices(n, resamples, seed):
    """The case indices every plumb bootstrap draws: resample after resample, n per resample."""
    rng = Xoshiro256StarStar(seed)
    return np.array([[rng.index(n) for _ in range(n)] for _ in range(resamples)], dtype=np.int64)


def bootstrap_percentiles(stat_per_resample, confidence):
    tail = (1 - confidence) / 2
    return np.percentile(stat_per_resample, [100 * tail, 100 * (1 - tail)], method="linear")


# --- An exact binomial tail in 45-digit decimal arithmetic -----------------------------------------


def ln_factorial_decimal(z):
    """ln z! by the Stirling series (Abramowitz and Stegun 6.1.40), exact for small z."""
    if z < 1000:
        return Decimal(math.factorial(z)).ln()
    z = Decimal(z)
    pi = Decimal("3.14159265358979323846264338327950288419716939937510")
    return ((z + Decimal("0.5")) * z.ln() - z + (2 * pi).ln() / 2 + 1 / (12 * z)
            - 1 / (360 * z**3) + 1 / (1260 * z**5) - 1 / (1680 * z**7))


def binomial_half_cdf_decimal(k, n):
    """P(X <= k), X ~ Binomial(n, 1/2): C(n, k) / 2^n, then down the ratio i / (n - i + 1)."""
    with localcontext() as context:
        context.prec = 45
        term = (ln_factorial_decimal(n) - ln_factorial_decimal(k) - ln_factorial_decimal(n - k)
                - n * Decimal(2).ln()).exp()
        total = term
        for i in range(k, 0, -1):
            term = term * i / (n - i + 1)
            total += term
            if term < total * Decimal("1e-30"):
                break
        return total


# --- Running the driver --------------------------------------------------------------------------


def run_driver(driver, commands):
    text = "\n".join(commands) + "\n"
    done = subprocess.run([driver], input=text, capture_output=True, text=True, check=False)
    if done.returncode != 0:
        sys.exit(f"statistics_driver failed ({done.returncode}): {done.stderr}")
    lines = done.stdout.splitlines()
    if len(lines) != len(commands):
        sys.exit(f"statistics_driver answered {len(lines)} of {len(commands)} commands")
    return [[number(x) for x in line.split()] for line in lines]


def main():
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    driver = sys.argv[1]
    warnings.simplefilter("ignore")  # scipy warns on zeros and small approximate samples
    print(f"numpy {np.__version__}, scipy {scipy.__version__}, statsmodels {statsmodels.__version__}")
    rng = np.random.default_rng(5)  # the reference's own inputs; any seed would do

    commands = []
    expectations = []  # (name, list of expected values, rel, abs) per command

    def expect(command, name, want, rel=1e-12, abs_tol=0.0):
        commands.append(command)
        expectations.append((name, [w if isinstance(w, int) else float(w) for w in want], rel, abs_tol))

    # The transcription itself, against a published vector: xoshiro256** from the state
    # {1, 2, 3, 4}, as in the test suite of the Rust crate rand_xoshiro, which took it from the
    # reference C code (from memory). The driver's stream is then compared with the transcription.
    published = Xoshiro256StarStar(0)
    published.s = [1, 2, 3, 4]
    if [published.next() for _ in range(10)] != [
            11520, 0, 1509978240, 1215971899390074240, 1216172134540287360, 607988272756665600,
            16172922978634559625, 8476171486693032832, 10595114339597558777, 2904607092377533576]:
        failures.append("the xoshiro256** transcription misses the published vector")
    # SplitMix64 from seed 1234567, Rosetta Code task "Pseudo-random numbers/Splitmix64" (from
    # memory): the seeding fills the state with exactly these outputs.
    seeded = Xoshiro256StarStar(1234567)
    if seeded.s != [6457827717110365317, 3203168211198807973, 9817491932198370423,
                    4593380528125082431]:
        failures.append("the SplitMix64 transcription misses the published sequence")

    # The generator's raw stream and its indices, including bounds where Lemire's rejection step
    # runs often (2^63 + 1 rejects almost half the draws) or never matters (1).
    for seed in [0, 1, SEED, MASK, 0x0123456789ABCDEF]:
        r = Xoshiro256StarStar(seed)
        expect(f"next {seed} 64", f"Next() seed {seed}", [r.next() for _ in range(64)], rel=0)
    for seed in [SEED, 42]:
        for bound in [1, 2, 3, 7, 10, 1000, 100000, (1 << 32) + 1, (1 << 63) + 1, MASK]:
            r = Xoshiro256StarStar(seed)
            expect(f"draw {seed} {bound} 200", f"UniformIndex({bound}) seed {seed}",
                   [r.index(bound) for _ in range(200)], rel=0)

    # The standard normal quantile: plumb's Wilson z must be norm.ppf(0.975) exactly; elsewhere
    # within 4 units in the last place of ndtri (1e-15 relative; absolute 1e-17 near p = 1/2).
    commands.append("quantile 0.975")
    expectations.append(("NormalQuantile(0.975) == norm.ppf(0.975)",
                         [float(scipy.stats.norm.ppf(0.975))], 0.0, 0.0))
    probabilities = [0.5, 0.025, 0.8, 0.9, 0.95, 0.99, 0.995, 0.999, 0.05, 0.1, 0.2, 0.3, 0.4,
                     0.02425, 0.97575, 1e-3, 1e-6, 1e-10, 1e-20, 1e-100, 1e-300, 1 - 1e-10,
                     0.841344746068543, 0.5 + 1e-12]
    probabilities += list(rng.uniform(0, 1, 200)) + list(10 ** rng.uniform(-300, -1, 100))
    for p in probabilities:
        expect(f"quantile {fmt(p)}", f"NormalQuantile({p!r})", [scipy.special.ndtri(p)],
               rel=1e-15, abs_tol=1e-17)

    # Wilson score intervals.
    wilson_cases = [(0, 1), (1, 1), (0, 10), (8, 10), (10, 10), (81, 263), (15, 148), (0, 20),
                    (1, 29), (50, 100), (1, 1000000), (999999, 1000000), (3, 7), (123456, 654321)]
    wilson_cases += [(int(k), int(n)) for n in rng.integers(1, 5000, 40)
                     for k in [rng.integers(0, n + 1)]]
    for k, n in wilson_cases:
        for confidence in [0.95, 0.9, 0.99]:
            low, high = proportion_confint(k, n, alpha=1 - confidence, method="wilson")
            # statsmodels does not clamp; plumb clamps rounding residue at 0 and 1.
            expect(f"wilson {k} {n} {fmt(confidence)}", f"Wilson({k}/{n}, {confidence})",
                   [min(1.0, max(0.0, low)), min(1.0, max(0.0, high))], rel=1e-12, abs_tol=1e-15)
    expect("wilson 0 0 0.95", "Wilson(0/0)", [0, 1], rel=0)

    # Percentiles, definition 7: random, tied, and tiny samples; p on and between ranks.
    samples = [[3.0], [1.0, 2.0], [15, 20, 35, 40, 50], list(rng.normal(100, 30, 37)),
               list(rng.exponential(250, 1000)), list(rng.integers(0, 5, 60).astype(float)),
               [7.0] * 9, [0.1, 0.1, 0.2, 0.2, 0.2, 0.3], list(rng.uniform(-1e6, 1e6, 11))]
    for sample in samples:
        for p in [0, 1, 2.5, 10, 25, 33.3, 40, 50, 66.6, 90, 95, 97.5, 99, 99.9, 100]:
            want = np.percentile(np.array(sample, dtype=float), p, method="linear")
            expect(f"percentile {fmt(p)} {values_text(sample)}", f"percentile p{p} n{len(sample)}",
                   [want], rel=1e-12, abs_tol=1e-12)

    # Latency summaries (SPEC 6.5).
    for sample in [list(rng.lognormal(5, 0.6, 500)), [12.5], [10.0, 20.0, 30.0, 40.0], []]:
        a = np.array(sample, dtype=float)
        if len(a):
            want = [len(a)] + list(np.percentile(a, [50, 90, 95, 99], method="linear")) + [a.mean(), a.max()]
        else:
            want = [0] * 7
        expect(f"latency {values_text(sample)}", f"latency n{len(sample)}", want, rel=1e-12)

    # The percentile bootstrap of the mean, from the same resamples.
    bootstrap_cases = [([0.0, 1.0], 2000, SEED, 0.95), (list(rng.uniform(0, 1, 7)), 2000, SEED, 0.95),
                       (list(rng.beta(2, 5, 40)), 2000, SEED, 0.95),
                       (list(rng.beta(2, 5, 40)), 500, 99, 0.9),
                       (list(rng.integers(0, 3, 23) / 2.0), 1000, 7, 0.99)]
    for values, resamples, seed, confidence in bootstrap_cases:
        a = np.array(values)
        idx = resample_indices(len(a), resamples, seed)
        want = bootstrap_percentiles(a[idx].mean(axis=1), confidence)
        expect(f"bootstrap {resamples} {seed} {fmt(confidence)} {values_text(values)}",
               f"bootstrap mean n{len(a)} B{resamples} seed {seed}", want, rel=1e-12, abs_tol=1e-14)
    expect(f"bootstrap 2000 {SEED} 0.95 0", "bootstrap n0", [0, 0], rel=0)
    expect(f"bootstrap 2000 {SEED} 0.95 1 0.25", "bootstrap n1", [0.25, 0.25], rel=0)

    # Metric summaries (SPEC 6.6): Wilson for 0/1 values, else the seeded bootstrap.
    binary = list(rng.integers(0, 2, 45).astype(float))
    low, high = proportion_confint(int(sum(binary)), len(binary), alpha=0.05, method="wilson")
    expect(f"metric 1 2000 {SEED} {values_text(binary)}", "metric binary",
           [np.mean(binary), len(binary), low, high, 1], rel=1e-12)
    for values, is_binary in [(list(rng.uniform(0, 1, 30)), 0), (list(rng.uniform(0, 1, 30)), 1),
                              (binary[:20], 0)]:
        a = np.array(values)
        idx = resample_indices(len(a), 2000, SEED)
        low, high = bootstrap_percentiles(a[idx].mean(axis=1), 0.95)
        expect(f"metric {is_binary} 2000 {SEED} {values_text(values)}",
               f"metric bootstrap binary={is_binary}", [a.mean(), len(a), low, high, 0], rel=1e-12)

    # Exact McNemar.
    mcnemar_cases = [(b, c) for b in range(0, 26) for c in range(0, 26)]
    mcnemar_cases += [(0, 100), (0, 1074), (0, 1100), (1, 60), (40, 70), (400, 480), (1000, 1100),
                      (2719, 2269), (5000, 5000), (5000, 5001), (49000, 51000), (49900, 50100),
                      (499000, 501000), (100, 100000), (3000000, 3004000), (10, 1000000)]
    mcnemar_cases += [tuple(int(x) for x in rng.integers(0, 20000, 2)) for _ in range(60)]
    for n in [1000, 10**4, 10**5, 10**6, 10**7, 10**8]:  # large tables, p from 0.3 to 1e-30
        for z in [1, 2, 3, 5, 8, 11]:
            b = int(round(n / 2 - z * math.sqrt(n) / 2))
            mcnemar_cases.append((b, n - b))
    for b, c in mcnemar_cases:
        want = mcnemar(np.array([[5, b], [c, 5]]), exact=True).pvalue
        # scipy's binom.cdf (Boost's incomplete beta) itself drifts by up to 2e-11 relative once
        # b + c passes a million, and by 1e-12 in tails below 1e-100; there the 45-digit sum below
        # is the sharper reference.
        rel = 1e-12 if b + c <= 10**6 and want > 1e-100 else 1e-10
        expect(f"mcnemar {b} {c}", f"McNemar(b={b}, c={c})", [want], rel=rel, abs_tol=1e-300)
    for b, c in [(7453, 11980), (5709, 9758), (2719, 2269), (40, 70), (0, 1100), (4992094, 5007906),
                 (49985000, 50015000), (49945000, 50055000), (497000, 503000)]:
        want = float(min(1, 2 * binomial_half_cdf_decimal(min(b, c), b + c)))
        # Below 1e-100 the exponent (hundreds) carries a rounding of about 1e-16 of its size.
        expect(f"mcnemar {b} {c}", f"McNemar(b={b}, c={c}) vs 45-digit sum", [want],
               rel=1e-13 if want > 1e-100 else 1e-12)

    # Wilcoxon signed-rank.
    wilcoxon_cases = []
    # The installed scipy's docstring example (Wilcoxon 1945, corn heights): exact p 0.041259765625.
    wilcoxon_cases.append(("docstring", [6, 8, 14, 16, 23, 24, 28, 29, 41, -48, 49, 56, 60, -67, 75],
                           {}))
    for n in [1, 2, 3, 5, 8, 12, 20, 30, 49, 50]:  # exact: distinct, no zeros
        d = list(rng.normal(0.3, 1, n))
        wilcoxon_cases.append((f"exact n{n}", d, {}))
    wilcoxon_cases.append(("exact centre n4", [1.0, -2.0, 3.0, -4.0], {}))  # R+ = 4 = centre
    wilcoxon_cases.append(("exact all positive n10", list(np.arange(1, 11) * 0.1), {}))
    for n in [51, 80, 200, 200, 500]:  # normal approximation by size
        wilcoxon_cases.append((f"approx n{n}", list(rng.normal(0.1, 1, n)), {}))
    for n in [10, 30, 200]:  # zeros and ties (a token-F1-like difference)
        d = list(np.round(rng.normal(0, 0.3, n) * 4) / 4)
        wilcoxon_cases.append((f"zeros+ties n{n}", d, {}))
    wilcoxon_cases.append(("one zero n12", [0.0] + list(rng.normal(0, 1, 11)), {}))
    wilcoxon_cases.append(("0/1 flips n200", list(rng.choice([-1.0, 0.0, 0.0, 1.0, 1.0], 200)), {}))
    # Ties without zeros, n <= 50: plumb deliberately takes the normal approximation here, where
    # scipy 1.10.1's default reads the no-ties exact table at a truncated rank sum (see
    # metrics/paired_tests.h), so the reference is method="approx".
    for n in [8, 25, 50]:
        d = list(rng.choice([-2.0, -1.0, 0.5, 1.0, 1.5], n))
        wilcoxon_cases.append((f"ties, no zeros n{n}", d, {"method": "approx"}))
    for name, d, options in wilcoxon_cases:
        want = scipy.stats.wilcoxon(d, **options).pvalue
        expect(f"wilcoxon {values_text(d)}", f"Wilcoxon {name}", [want], rel=1e-9)
    expect("wilcoxon 4 0 0 0 0", "Wilcoxon all zero", [1.0], rel=0)
    expect("wilcoxon 0", "Wilcoxon empty", [1.0], rel=0)

    # Holm.
    holm_cases = [[0.01, 0.04, 0.03, 0.005], [0.5], [0.2, 0.2, 0.2], [1.0, 0.0, 0.5],
                  list(rng.uniform(0, 0.1, 12)), list(rng.uniform(0, 1, 30)),
                  list(10 ** rng.uniform(-8, 0, 50))]
    for p in holm_cases:
        want = multipletests(p, method="holm")[1]
        expect(f"holm {values_text(p)}", f"Holm m{len(p)}", want, rel=1e-12)
    expect("holm 0", "Holm empty", [], rel=0)

    # Paired bootstrap of the mean difference, from the same resamples.
    for n, resamples, seed, confidence in [(30, 10000, SEED, 0.95), (12, 3000, 3, 0.9), (2, 500, 1, 0.95)]:
        base = rng.uniform(0, 1, n)
        cand = np.clip(base + rng.normal(0.05, 0.2, n), 0, 1)
        d = cand - base
        idx = resample_indices(n, resamples, seed)
        low, high = bootstrap_percentiles(d[idx].mean(axis=1), confidence)
        expect(f"delta {resamples} {seed} {fmt(confidence)} {n} "
               + " ".join(fmt(v) for v in base) + " " + " ".join(fmt(v) for v in cand),
               f"paired delta n{n} B{resamples}", [d.mean(), low, high], rel=1e-12, abs_tol=1e-14)

    # Paired bootstrap of a latency quantile ratio, from the same resamples.
    for n, p, resamples, seed in [(25, 50, 2000, SEED), (25, 95, 2000, SEED), (40, 95, 1000, 11),
                                  (9, 90, 1000, 5), (1, 50, 100, 1)]:
        base = np.round(rng.lognormal(5, 0.5, n), 1)  # rounded, so some latencies tie
        cand = np.round(base * rng.uniform(0.8, 1.4, n), 1)
        idx = resample_indices(n, resamples, seed)
        ratios = (np.percentile(cand[idx], p, axis=1, method="linear")
                  / np.percentile(base[idx], p, axis=1, method="linear"))
        low, high = bootstrap_percentiles(ratios, 0.95)
        ratio = np.percentile(cand, p, method="linear") / np.percentile(base, p, method="linear")
        expect(f"ratio {fmt(p)} {resamples} {seed} 0.95 {n} "
               + " ".join(fmt(v) for v in base) + " " + " ".join(fmt(v) for v in cand),
               f"ratio p{p} n{n} B{resamples}", [ratio, low, high], rel=1e-12)

    # Minimum detectable effect: (z_{1-a/2} + z_power) * sd / sqrt(n), with statsmodels' one-sample
    # normal power solved at one-sided alpha/2 as a second opinion; the 0/1 floor from the smallest
    # all-one-direction table that statsmodels' exact McNemar calls significant.
    for d, is_binary, alpha, power in [(list(rng.normal(0, 0.2, 60)), 0, 0.05, 0.8),
                                       (list(rng.normal(0.1, 1, 500)), 0, 0.01, 0.9),
                                       (list(rng.choice([-1.0, 0.0, 1.0], 300, p=[0.1, 0.8, 0.1])), 1, 0.05, 0.8),
                                       ([0.0] * 40 + [1.0], 1, 0.05, 0.8)]:
        a = np.array(d)
        sd = a.std(ddof=1)
        want = (scipy.stats.norm.ppf(1 - alpha / 2) + scipy.stats.norm.ppf(power)) * sd / math.sqrt(len(a))
        solved = NormalIndPower().solve_power(nobs1=len(a), alpha=alpha / 2, power=power, ratio=0,
                                              alternative="larger") * sd
        if not math.isclose(want, solved, rel_tol=1e-5):  # the solver's own tolerance
            failures.append(f"MDE formula {want!r} disagrees with NormalIndPower {solved!r}")
        if is_binary:
            k = next(k for k in range(1, 64)
                     if mcnemar(np.array([[0, 0], [k, 0]]), exact=True).pvalue <= alpha)
            want = max(want, k / len(a))
        expect(f"mde {is_binary} {fmt(alpha)} {fmt(power)} {values_text(d)}",
               f"MDE n{len(a)} binary={is_binary}", [want], rel=1e-12)

    results = run_driver(driver, commands)
    for (name, want, rel, abs_tol), got in zip(expectations, results):
        if len(got) != len(want):
            failures.append(f"{name}: plumb gave {len(got)} values, reference {len(want)}")
            continue
        for i, (g, w) in enumerate(zip(got, want)):
            check(f"{name} [{i}]", g, w, rel, abs_tol)

    # The scipy default this build departs from, shown rather than assumed: with ties and no zeros
    # at n <= 50, scipy 1.10.1's auto method differs from its own normal approximation.
    d = [1.0, 1.0, -2.0, 3.0, 3.0, 3.0, 4.0, 5.0]
    print("note: ties without zeros, n=8: scipy default p", scipy.stats.wilcoxon(d).pvalue,
          "method='approx' p", scipy.stats.wilcoxon(d, method="approx").pvalue,
          "(plumb follows the latter)")

    for failure in failures:
        print("FAIL", failure)
    print(f"{checks} values checked over {len(commands)} commands, {len(failures)} disagreements")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
