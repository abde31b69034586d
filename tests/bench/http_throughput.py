#!/usr/bin/env python3
"""Throughput of `plumb run` over the HTTP adapter.

The issue's target: with a server that answers after 50 ms and `jobs: 16`, 400 cases finish
within 10% of 400 x 50 ms / 16 = 1.25 s, i.e. in at most 1.375 s. The server is the test
fixture build/fixtures/fault-server (mode /delay, one thread per connection, so 16 requests are
served at once). The figure is the wall-clock time of the whole `plumb run` process, suite
loading and run.json included; a run against the same server with no delay is printed beside it
as the fixed cost. Prints figures and asserts nothing (the machine is shared and noisy; compare
medians across changes).

Usage: tests/bench/http_throughput.py [--build build] [--cases 400] [--jobs 16] [--delay-ms 50]
                                      [--repeats 3]
"""
import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time


def start_server(build):
    server = subprocess.Popen([os.path.join(build, "fixtures", "fault-server")],
                              stdout=subprocess.PIPE, text=True)
    line = server.stdout.readline()
    marker = "listening on 127.0.0.1:"
    if not line.startswith(marker):
        server.kill()
        sys.exit(f"fault-server did not start: {line!r}")
    return server, int(line[len(marker):])


def write_suite(directory, cases, url, jobs):
    cases_path = os.path.join(directory, "cases.jsonl")
    with open(cases_path, "w") as f:
        for i in range(cases):
            q = f"question {i}"
            f.write(json.dumps({"id": f"c{i}", "question": q, "answers": [q]}) + "\n")
    suite = os.path.join(directory, "bench.yaml")
    with open(suite, "w") as f:
        f.write("plumb: 1\nname: http-bench\ninclude: [cases.jsonl]\npipelines:\n")
        f.write(f"  service:\n    url: \"{url}\"\n    timeout: 30s\n    jobs: {jobs}\n")
        f.write("cases: []\n")
    return suite


def timed_run(plumb, suite, out):
    start = time.perf_counter()
    done = subprocess.run([plumb, "run", suite, "--out", out, "--json"], capture_output=True,
                          text=True)
    seconds = time.perf_counter() - start
    if done.returncode != 0:
        sys.exit(f"plumb run exited {done.returncode}:\n{done.stderr}")
    summary = json.loads(done.stdout)
    return seconds, summary


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--build", default="build")
    parser.add_argument("--cases", type=int, default=400)
    parser.add_argument("--jobs", type=int, default=16)
    parser.add_argument("--delay-ms", type=int, default=50)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    plumb = os.path.join(args.build, "plumb")
    server, port = start_server(args.build)
    try:
        with tempfile.TemporaryDirectory() as tmp:
            delayed = write_suite(os.path.join(tmp), args.cases,
                                  f"http://127.0.0.1:{port}/delay?ms={args.delay_ms}", args.jobs)
            instant_dir = os.path.join(tmp, "instant")
            os.mkdir(instant_dir)
            instant = write_suite(instant_dir, args.cases, f"http://127.0.0.1:{port}/echo",
                                  args.jobs)
            runs, fixed = [], []
            for r in range(args.repeats):
                seconds, summary = timed_run(plumb, delayed, os.path.join(tmp, f"out{r}"))
                errored = summary.get("aggregates", {}).get("errored")
                if errored:
                    sys.exit(f"{errored} cases errored; the figure would mean nothing")
                runs.append(seconds)
                seconds, _ = timed_run(plumb, instant, os.path.join(tmp, f"instant{r}"))
                fixed.append(seconds)
    finally:
        server.kill()
        server.wait()

    ideal = args.cases * args.delay_ms / 1000 / args.jobs
    measured = statistics.median(runs)
    print(f"http_throughput: {args.cases} cases, jobs {args.jobs}, server delay {args.delay_ms} ms")
    print(f"  ideal {ideal:.3f} s (cases x delay / jobs), target <= {ideal * 1.1:.3f} s (+10%)")
    print(f"  measured (median of {args.repeats}): {measured:.3f} s "
          f"= {measured / ideal:.3f} x ideal   runs: " + ", ".join(f"{s:.3f}" for s in runs))
    print(f"  same suite, no server delay: {statistics.median(fixed):.3f} s (fixed cost)")
    print(f"  {'within' if measured <= ideal * 1.1 else 'OUTSIDE'} the target")


if __name__ == "__main__":
    main()
