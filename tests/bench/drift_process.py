#!/usr/bin/python3
"""Wall time and peak memory of the whole `plumb drift` process on two 100,000-case runs.

Prints figures beside the target of issue 15 (at most 2 s wall and 300 MB peak for 100,000
paired cases with B = 10,000 on the project's machine) and asserts nothing: the machine is shared,
so it prints the median, the spread and the load average (compare medians across changes).

The two run directories are made the way a user makes them: a generated suite (JSONL cases with
gold answers, a pattern, one gold span given by offsets into a generated corpus, one or two of
eight tags) and two files of recorded replies, scored by `plumb score`. The model, invented and
deterministic for a seed (Python's random.Random):
  - case i asks when sailing i leaves; its gold answer is a time, its gold span the sentence
    that states it in document i % 20;
  - base: the reply states the right time with probability 0.8 (in one of three phrasings, so
    token_f1 varies), a wrong one otherwise; it cites its own sentence with probability 0.85,
    the next sentence otherwise; it lists three retrieved spans; latency uniform in 150-550 ms;
  - candidate: the base reply, except that a right reply turns wrong with probability 0.02, a
    wrong one right with probability 0.05, 30% are rephrased (token_f1 moves, the time stays),
    5% cite the other sentence, and latency is the base's times a uniform 0.9-1.2.
Each `plumb drift BASE CAND` is timed from outside (os.wait4's rusage of that child alone: wall
from a monotonic clock, CPU time, peak resident set size), stdout discarded, after one warm-up
run.

Usage: tests/bench/drift_process.py [--build build] [--cases 100000] [--runs 5] [--seed 7]
                                    [--keep DIR]
"""
import argparse
import json
import os
import random
import statistics
import subprocess
import sys
import tempfile
import time

PORTS = ["Veddermouth", "Pellinmarsh Pier", "Quarnish Slip", "Gullhaven", "Tarrow Ness"]
TAGS = ["boarding", "fares", "vehicles", "safety", "timetable", "accessibility", "freight",
        "numeric"]
DOCS = 20
TARGET_WALL_S = 2.0
TARGET_PEAK_MB = 300.0


def clock(minutes):
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def sentence(i):
    return (f"Sailing {i} leaves {PORTS[i % len(PORTS)]} at {clock(300 + (i * 35) % 1020)} "
            f"from berth {1 + (i * 7) % 9}.")


def make_corpus(directory, cases):
    """Writes docs/d<k>.md; returns case -> (doc, start, end) of its sentence."""
    docs = os.path.join(directory, "docs")
    os.makedirs(docs)
    spans = {}
    texts = {k: f"# Sailings, part {k}\n\n" for k in range(DOCS)}
    for i in range(cases):
        k = i % DOCS
        start = len(texts[k])
        texts[k] += sentence(i)
        spans[i] = (f"d{k}.md", start, len(texts[k]))
        texts[k] += "\n"
    for k, text in texts.items():
        with open(os.path.join(docs, f"d{k}.md"), "w", encoding="ascii") as f:
            f.write(text)
    return spans


def make_suite(directory, cases, spans):
    with open(os.path.join(directory, "cases.jsonl"), "w") as f:
        for i in range(cases):
            doc, start, end = spans[i]
            tags = [TAGS[i % 8]] + ([TAGS[(i // 3 + 5) % 8]] if i % 3 == 0 else [])
            time_text = clock(300 + (i * 35) % 1020)
            f.write(json.dumps({
                "id": f"sailing-{i:06d}",
                "question": f"When does sailing {i} leave {PORTS[i % len(PORTS)]}?",
                "answers": [time_text],
                "patterns": ["\\b" + time_text + "\\b"],
                "sources": [{"doc": doc, "start": start, "end": end}],
                "tags": sorted(set(tags))}) + "\n")
    suite = os.path.join(directory, "suite.yaml")
    with open(suite, "w") as f:
        f.write("plumb: 1\nname: drift-bench\ncorpus: docs\ninclude: [cases.jsonl]\n"
                "retrieval_k: [1, 3]\ncases: []\n")
    return suite


def reply(i, right, phrasing, cite_next, spans, cases, latency):
    time_text = clock(300 + (i * 35) % 1020) if right else clock(300 + (i * 35 + 505) % 1020)
    answer = [time_text,
              f"Sailing {i} leaves at {time_text}.",
              f"It leaves {PORTS[i % len(PORTS)]} at {time_text} from its usual berth."][phrasing]
    own = spans[i]
    other = spans[(i + DOCS) % cases]
    cited = other if cite_next else own
    retrieved = [own, other, spans[(i + 2 * DOCS) % cases]]
    if cite_next:
        retrieved = [retrieved[1], retrieved[0], retrieved[2]]
    return {"id": f"sailing-{i:06d}", "answer": answer,
            "citations": [{"doc": cited[0], "start": cited[1], "end": cited[2]}],
            "retrieved": [{"doc": d, "start": s, "end": e} for d, s, e in retrieved],
            "latency_ms": round(latency, 1)}


def make_predictions(directory, cases, spans, seed):
    rng = random.Random(seed)
    base_path = os.path.join(directory, "base.jsonl")
    cand_path = os.path.join(directory, "cand.jsonl")
    with open(base_path, "w") as fb, open(cand_path, "w") as fc:
        for i in range(cases):
            right = rng.random() < 0.8
            phrasing = rng.randrange(3)
            cite_next = rng.random() >= 0.85
            latency = rng.uniform(150, 550)
            fb.write(json.dumps(reply(i, right, phrasing, cite_next, spans, cases, latency)) + "\n")
            u = rng.random()
            cand_right = (not right and u < 0.05) or (right and u >= 0.02)
            cand_phrasing = rng.randrange(3) if rng.random() < 0.3 else phrasing
            cand_cite = (not cite_next) if rng.random() < 0.05 else cite_next
            cand_latency = latency * rng.uniform(0.9, 1.2)
            fc.write(json.dumps(reply(i, cand_right, cand_phrasing, cand_cite, spans, cases,
                                      cand_latency)) + "\n")
    return base_path, cand_path


def timed(cmd):
    """Wall seconds, peak RSS in MB, CPU seconds (user + system; of this child alone), the exit
    code and what it wrote on stderr."""
    start = time.monotonic()
    child = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    wall = time.monotonic() - start
    child.returncode = os.waitstatus_to_exitcode(status)
    err = child.stderr.read().decode(errors="replace")
    child.stderr.close()
    return wall, usage.ru_maxrss / 1024.0, usage.ru_utime + usage.ru_stime, child.returncode, err


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--build", default="build")
    parser.add_argument("--cases", type=int, default=100000)
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--seed", type=int, default=7)
    parser.add_argument("--keep", help="write the suite and runs here and keep them")
    args = parser.parse_args()
    plumb = os.path.abspath(os.path.join(args.build, "plumb"))

    with tempfile.TemporaryDirectory() as tmp:
        work = args.keep or tmp
        os.makedirs(work, exist_ok=True)
        spans = make_corpus(work, args.cases)
        suite = make_suite(work, args.cases, spans)
        base_pred, cand_pred = make_predictions(work, args.cases, spans, args.seed)
        runs = {}
        for name, pred in (("base", base_pred), ("cand", cand_pred)):
            runs[name] = os.path.join(work, f"run-{name}")
            done = subprocess.run([plumb, "score", suite, pred, "--out", runs[name]],
                                  stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
            if done.returncode not in (0, 1):
                sys.exit(f"drift_process: plumb score exited {done.returncode}: {done.stderr}")
        journal_mb = os.path.getsize(os.path.join(runs["base"], "cases.jsonl")) / 1e6
        record_mb = os.path.getsize(os.path.join(runs["base"], "run.json")) / 1e6

        cmd = [plumb, "drift", runs["base"], runs["cand"]]
        warm = timed(cmd)
        if warm[3] not in (0, 1):
            sys.exit(f"drift_process: plumb drift exited {warm[3]}: {warm[4]}")
        walls, peaks, cpus = [], [], []
        for _ in range(args.runs):
            wall, peak, cpu, code, _ = timed(cmd)
            walls.append(wall)
            peaks.append(peak)
            cpus.append(cpu)
        load = os.getloadavg()
        print(f"drift_process: {args.cases} paired cases, B = 10000 (the default), seed "
              f"{args.seed}; each run: cases.jsonl {journal_mb:.1f} MB, run.json "
              f"{record_mb:.1f} MB; {args.runs} timed runs after one warm-up; exit code {code}")
        print(f"command: {' '.join(cmd)}")
        print(f"load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f} on {os.cpu_count()} cores")
        print(f"{'':<24}{'median':>10}{'min':>10}{'max':>10}{'target':>10}")
        print(f"{'wall (s)':<24}{statistics.median(walls):>10.2f}{min(walls):>10.2f}"
              f"{max(walls):>10.2f}{'<= ' + format(TARGET_WALL_S, '.1f'):>10}")
        print(f"{'CPU, user + sys (s)':<24}{statistics.median(cpus):>10.2f}{min(cpus):>10.2f}"
              f"{max(cpus):>10.2f}{'':>10}")
        print(f"{'peak RSS (MB)':<24}{statistics.median(peaks):>10.0f}{min(peaks):>10.0f}"
              f"{max(peaks):>10.0f}{'<= ' + format(TARGET_PEAK_MB, '.0f'):>10}")


if __name__ == "__main__":
    main()
