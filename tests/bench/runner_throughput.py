#!/usr/bin/env python3
"""Throughput and memory of `plumb run` and `plumb score` on generated suites.

Prints figures, asserts nothing (the machine is shared and noisy; compare medians across
changes). Targets from the runner issue:
  - run: a persistent pipeline that answers at once passes >= 10,000 cases/s with --jobs 2,
    journal included;
  - score: well over 10x faster than a Python implementation of the published SQuAD evaluation
    (normalize_answer + f1/EM, transcribed in SQUAD_EVAL_PROGRAM below, from memory), timed on
    SQuAD-shaped short answers, on the demo pipeline's reply shape and on the longer replies of
    a generating pipeline (DEVELOPERS.md says how the target is read);
  - memory grows with the number of cases, not with reply sizes (peak RSS with 1 KiB vs 256 KiB
    answers).

Usage: tests/bench/runner_throughput.py [--build build] [--cases 20000] [--repeats 3]
"""
import argparse
import collections
import json
import os
import re
import resource
import statistics
import string
import subprocess
import sys
import tempfile
import time

WORDS = ("ferry boarding closes ten minutes before departure the a an vehicle deck fare "
         "return ticket island pier harbour crossing weather cancelled refund").split()


# Three answer shapes: SQuAD's (gold answers of 4 words, replies of 4); the bundled demo
# pipeline's on suites/ferry.yaml (gold answers of 3 words, replies of 15: its replies have a
# median of 15 words and the suite's gold answers a median of 2 and a mean of 3.6, measured on
# the demo run); and a generating pipeline's (gold answers of 12 words, replies of 30). Invented
# word salad, for timing only.
SHAPES = {"short": (4, 4), "demo": (3, 15), "generated": (12, 30)}


def case_words(i, n):
    return [WORDS[(i * 7 + k) % len(WORDS)] for k in range(n)]


def make_suite(directory, cases, pipeline_cmd, shape="short"):
    gold_words = SHAPES[shape][0]
    cases_path = os.path.join(directory, f"cases-{shape}.jsonl")
    with open(cases_path, "w") as f:
        for i in range(cases):
            words = case_words(i, gold_words + 8)
            f.write(json.dumps({"id": f"c{i}", "question": " ".join(words[:8]),
                                "answers": [" ".join(words[:gold_words]),
                                            " ".join(words[2:2 + gold_words])],
                                "tags": [f"t{i % 5}"]}) + "\n")
    suite_path = os.path.join(directory, f"bench-{shape}.yaml")
    with open(suite_path, "w") as f:
        f.write(f"plumb: 1\nname: bench\ninclude: [cases-{shape}.jsonl]\npipelines:\n  echo:\n")
        f.write("    command: [" + ", ".join(json.dumps(c) for c in pipeline_cmd) + "]\n")
        f.write("    mode: persistent\n    timeout: 30s\ncases: []\n")
    return suite_path


def make_predictions(directory, cases, answer_bytes, shape="short"):
    reply_words = SHAPES[shape][1]
    path = os.path.join(directory, f"pred-{shape}-{answer_bytes}.jsonl")
    with open(path, "w") as f:
        for i in range(cases):
            words = case_words(i, reply_words + 1)
            answer = " ".join(words[1:1 + reply_words])
            if answer_bytes > len(answer):
                answer += " " + "x" * (answer_bytes - len(answer) - 1)
            f.write(json.dumps({"id": f"c{i}", "answer": answer}) + "\n")
    return path


def timed(cmd):
    start = time.perf_counter()
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    subprocess.run(cmd, check=False, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    after = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return time.perf_counter() - start, max(before, after)


def peak_rss_kib(cmd):
    # A fresh interpreter per measurement, so ru_maxrss is this command's alone.
    probe = ("import resource,subprocess,sys;"
             "subprocess.run(sys.argv[1:],stdout=subprocess.DEVNULL,stderr=subprocess.DEVNULL);"
             "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")
    out = subprocess.run([sys.executable, "-c", probe] + cmd, capture_output=True, text=True)
    return int(out.stdout.strip())


# The published SQuAD v1.1 evaluation's normalize_answer, f1_score and exact_match
# (Rajpurkar et al. 2016), transcribed from memory, as a whole program: read the dataset and the
# predictions, score, print. Run as its own process so both sides are timed the same way.
SQUAD_EVAL_PROGRAM = r"""
import collections, json, re, string, sys

def normalize_answer(s):
    def remove_articles(text):
        return re.sub(r'\b(a|an|the)\b', ' ', text)
    def white_space_fix(text):
        return ' '.join(text.split())
    def remove_punc(text):
        exclude = set(string.punctuation)
        return ''.join(ch for ch in text if ch not in exclude)
    return white_space_fix(remove_articles(remove_punc(s.lower())))

def f1_score(prediction, ground_truth):
    p = normalize_answer(prediction).split()
    g = normalize_answer(ground_truth).split()
    common = collections.Counter(p) & collections.Counter(g)
    num_same = sum(common.values())
    if num_same == 0:
        return 0
    precision = 1.0 * num_same / len(p)
    recall = 1.0 * num_same / len(g)
    return (2 * precision * recall) / (precision + recall)

def exact_match_score(prediction, ground_truth):
    return normalize_answer(prediction) == normalize_answer(ground_truth)

cases = [json.loads(line) for line in open(sys.argv[1])]
preds = {}
for line in open(sys.argv[2]):
    obj = json.loads(line)
    preds[obj["id"]] = obj["answer"]
em = f1 = 0.0
for case in cases:
    pred = preds.get(case["id"], "")
    em += max(exact_match_score(pred, a) for a in case["answers"])
    f1 += max(f1_score(pred, a) for a in case["answers"])
print(json.dumps({"exact_match": 100.0 * em / len(cases), "f1": 100.0 * f1 / len(cases)}))
"""


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--build", default="build")
    parser.add_argument("--cases", type=int, default=20000)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    plumb = os.path.abspath(os.path.join(args.build, "plumb"))
    echo = os.path.abspath(os.path.join(args.build, "fixtures", "echo-pipeline"))
    with tempfile.TemporaryDirectory() as tmp:
        suite = make_suite(tmp, args.cases, [echo])
        out = os.path.join(tmp, "out")
        walls = [timed([plumb, "run", suite, "--jobs", "2", "--out", out, "--overwrite"])[0]
                 for _ in range(args.repeats)]
        lines = sum(1 for _ in open(os.path.join(out, "cases.jsonl")))
        median = statistics.median(walls)
        print(f"run   {args.cases} cases, echo pipeline, --jobs 2: median {median:.2f}s "
              f"({args.cases / median:,.0f} cases/s, whole process incl. suite load), "
              f"journal lines {lines}; runs {', '.join(f'{w:.2f}' for w in walls)}")

        program = os.path.join(tmp, "squad_eval.py")
        with open(program, "w") as f:
            f.write(SQUAD_EVAL_PROGRAM)
        for shape in SHAPES:
            shape_suite = make_suite(tmp, args.cases, [echo], shape)
            pred = make_predictions(tmp, args.cases, 0, shape)
            # A fresh output directory each round, as in CI: replacing an earlier run's files
            # makes the file system free their blocks inside the timed call (about 6 ms for a
            # 5 MB file on this project's VM), which is not plumb's work.
            rounds = iter(range(10**6))
            plumb_cmd = lambda: [plumb, "score", shape_suite, pred, "--out",
                                 os.path.join(tmp, f"s-{shape}-{next(rounds)}")]
            python_cmd = ["/usr/bin/python3", program,
                          os.path.join(tmp, f"cases-{shape}.jsonl"), pred]
            # In alternation, one of each per round, so a change in the machine's speed (it is
            # shared) touches both sides of a ratio alike; the ratio is taken round by round.
            timed(plumb_cmd())
            timed(python_cmd)  # warm-up: file cache, interpreter
            plumb_walls, python_walls = [], []
            for _ in range(args.repeats):
                plumb_walls.append(timed(plumb_cmd())[0])
                python_walls.append(timed(python_cmd)[0])
            ratios = sorted(p / q for p, q in zip(python_walls, plumb_walls))
            gold, reply = SHAPES[shape]
            print(f"score {args.cases} cases, {shape} answers (gold {gold} words, replies {reply}), "
                  f"{args.repeats} rounds in alternation: plumb median "
                  f"{statistics.median(plumb_walls):.3f}s (load + validate suite, score, journal, "
                  f"run.json, 95% intervals per metric and tag), Python SQuAD evaluation median "
                  f"{statistics.median(python_walls):.3f}s (EM/F1 only); Python/plumb per round: "
                  f"median {statistics.median(ratios):.1f}x, range {ratios[0]:.1f}x to "
                  f"{ratios[-1]:.1f}x")

        small = peak_rss_kib([plumb, "score", suite, make_predictions(tmp, args.cases, 1024),
                              "--out", os.path.join(tmp, "s1")])
        big = peak_rss_kib([plumb, "score", suite, make_predictions(tmp, args.cases // 4, 262144),
                            "--out", os.path.join(tmp, "s2")])
        print(f"memory: plumb score peak RSS {small / 1024:.1f} MiB with 1 KiB answers x "
              f"{args.cases}, {big / 1024:.1f} MiB with 256 KiB answers x {args.cases // 4}")


if __name__ == "__main__":
    main()
