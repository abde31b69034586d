#!/usr/bin/env python3
"""Throughput of `plumb run` over streamed replies (issue 21).

The issue's target: a streaming loopback service with 50 ms per reply, 400 cases and --jobs 16
finish within 10% of 400 x 50 ms / 16 = 1.25 s, i.e. in at most 1.375 s. The service is the
test fixture build/fixtures/stream-service with `--format sse --first-ms 10 --last-ms 50`: each
reply is a stream of server-sent events whose first word leaves 10 ms and whose last word leaves
50 ms after the request arrived (then the usage event and [DONE]), served by a pool of 64
threads, so 16 streams run at once. The figure is the wall-clock time of the whole `plumb run`
process, suite loading and run.json included; a run against the same service with the words at
0 ms is printed beside it as the fixed cost. Prints figures and asserts nothing (the machine is
shared and noisy; compare medians across changes).

Usage: tests/bench/stream_throughput.py [--build build] [--cases 400] [--jobs 16]
                                        [--reply-ms 50] [--repeats 3]
"""
import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time


def start_service(build, first_ms, last_ms):
    service = subprocess.Popen(
        [os.path.join(build, "fixtures", "stream-service"), "--format", "sse", "--first-ms",
         str(first_ms), "--last-ms", str(last_ms), "--threads", "64"],
        stdout=subprocess.PIPE, text=True)
    line = service.stdout.readline()
    marker = "listening on 127.0.0.1:"
    if not line.startswith(marker):
        service.kill()
        sys.exit(f"stream-service did not start: {line!r}")
    return service, int(line[len(marker):])


def write_suite(directory, cases, port, jobs):
    os.makedirs(directory, exist_ok=True)
    cases_path = os.path.join(directory, "cases.jsonl")
    with open(cases_path, "w") as f:
        for i in range(cases):
            q = f"question {i}"
            f.write(json.dumps({"id": f"c{i}", "question": q, "answers": [q]}) + "\n")
    suite = os.path.join(directory, "bench.yaml")
    with open(suite, "w") as f:
        f.write("plumb: 1\nname: stream-bench\ninclude: [cases.jsonl]\npipelines:\n")
        f.write(f"  service:\n    url: \"http://127.0.0.1:{port}/v1/chat/completions\"\n")
        f.write(f"    stream: sse\n    timeout: 30s\n    jobs: {jobs}\n")
        f.write("cases: []\n")
    return suite


def timed_run(plumb, suite, out, jobs):
    start = time.perf_counter()
    done = subprocess.run([plumb, "run", suite, "--out", out, "--jobs", str(jobs), "--json"],
                          capture_output=True, text=True)
    seconds = time.perf_counter() - start
    if done.returncode != 0:
        sys.exit(f"plumb run exited {done.returncode}:\n{done.stderr}")
    return seconds, json.loads(done.stdout)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--build", default="build")
    parser.add_argument("--cases", type=int, default=400)
    parser.add_argument("--jobs", type=int, default=16)
    parser.add_argument("--reply-ms", type=int, default=50)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    plumb = os.path.join(args.build, "plumb")
    paced, paced_port = start_service(args.build, min(10, args.reply_ms), args.reply_ms)
    instant, instant_port = start_service(args.build, 0, 0)
    runs, fixed, ttft = [], [], []
    try:
        with tempfile.TemporaryDirectory() as tmp:
            suite = write_suite(os.path.join(tmp, "paced"), args.cases, paced_port, args.jobs)
            zero = write_suite(os.path.join(tmp, "instant"), args.cases, instant_port, args.jobs)
            for r in range(args.repeats):
                seconds, record = timed_run(plumb, suite, os.path.join(tmp, f"out{r}"), args.jobs)
                aggregates = record.get("aggregates", {})
                if aggregates.get("errored"):
                    sys.exit(f"{aggregates['errored']} cases errored; the figure would mean nothing")
                if aggregates.get("ttft_ms", {}).get("n") != args.cases:
                    sys.exit("not every reply recorded a time to first token")
                runs.append(seconds)
                ttft.append(aggregates["ttft_ms"]["p50"])
                seconds, _ = timed_run(plumb, zero, os.path.join(tmp, f"zero{r}"), args.jobs)
                fixed.append(seconds)
    finally:
        for service in (paced, instant):
            service.kill()
            service.wait()

    ideal = args.cases * args.reply_ms / 1000 / args.jobs
    measured = statistics.median(runs)
    print(f"stream_throughput: {args.cases} cases, jobs {args.jobs}, "
          f"{args.reply_ms} ms per streamed reply (sse)")
    print(f"  ideal {ideal:.3f} s (cases x reply / jobs), target <= {ideal * 1.1:.3f} s (+10%)")
    print(f"  measured (median of {args.repeats}): {measured:.3f} s "
          f"= {measured / ideal:.3f} x ideal   runs: " + ", ".join(f"{s:.3f}" for s in runs))
    print(f"  time to first token p50 (first word at {min(10, args.reply_ms)} ms): "
          + ", ".join(f"{t:.1f} ms" for t in ttft))
    print(f"  same suite, words at 0 ms: {statistics.median(fixed):.3f} s (fixed cost)")
    print(f"  {'within' if measured <= ideal * 1.1 else 'OUTSIDE'} the target")


if __name__ == "__main__":
    main()
