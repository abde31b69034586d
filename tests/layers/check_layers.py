#!/usr/bin/python3
"""Fails when a source file includes a header from a layer above its own.

The layers, lowest first: metrics/ (a pure library: it may include nothing from runner/), then
runner/base < suite < pipeline < run < compare < report < cli. A file may include headers of its
own layer and of layers below it (DEVELOPERS.md, "Architecture"). Tests, fixtures and benchmarks
are not layers: they may include any header.

Usage: check_layers.py ROOT      checks the tree at ROOT; prints each upward include, exits 1
       check_layers.py --self-test ROOT
                                 copies the tree's sources, plants an upward include in a
                                 runner/base file and in a metrics file, and exits 0 only when
                                 the check catches both (so the check itself is known to work).
"""
import os
import re
import shutil
import sys
import tempfile

RUNNER_LAYERS = ["base", "suite", "pipeline", "run", "compare", "report", "cli"]
INCLUDE = re.compile(r'^\s*#\s*include\s*"([^"]+)"')


def rank(path):
    """Returns the layer rank of a repository-relative path, or None when it is not layered."""
    parts = path.split("/")
    if parts[0] == "metrics":
        return 0
    if parts[0] == "runner":
        if len(parts) < 3 or parts[1] not in RUNNER_LAYERS:
            return -1  # a runner file outside every layer folder: reported on its own
        return 1 + RUNNER_LAYERS.index(parts[1])
    return None


def layer_name(path):
    parts = path.split("/")
    return "metrics/" if parts[0] == "metrics" else "runner/%s/" % parts[1]


def check(root):
    problems = []
    for top in ("metrics", "runner"):
        for directory, _, files in os.walk(os.path.join(root, top)):
            for name in sorted(files):
                if not name.endswith((".h", ".cc")):
                    continue
                full = os.path.join(directory, name)
                path = os.path.relpath(full, root).replace(os.sep, "/")
                own = rank(path)
                if own == -1:
                    problems.append("%s: a runner source outside the layer folders (%s); move "
                                    "it into one of them" % (path, ", ".join(RUNNER_LAYERS)))
                    continue
                with open(full, encoding="utf-8") as source:
                    for number, line in enumerate(source, 1):
                        match = INCLUDE.match(line)
                        if not match:
                            continue
                        target = match.group(1)
                        theirs = rank(target)
                        if theirs is None or theirs <= own:
                            continue
                        problems.append(
                            "%s:%d: includes %s, from %s, a layer above %s; move the code it "
                            "needs down a layer, or this file up" %
                            (path, number, target, layer_name(target), layer_name(path)))
    return problems


def self_test(root):
    with tempfile.TemporaryDirectory() as scratch:
        for top in ("metrics", "runner"):
            shutil.copytree(os.path.join(root, top), os.path.join(scratch, top))
        if check(scratch):
            print("self-test: the unmodified tree already fails; run the check first")
            return 1
        plants = [("runner/base/status.h", '#include "runner/cli/run_command.h"\n'),
                  ("metrics/interval.h", '#include "runner/base/status.h"\n')]
        for path, line in plants:
            with open(os.path.join(scratch, path), "a", encoding="utf-8") as f:
                f.write(line)
        found = check(scratch)
        for path, _ in plants:
            if not any(p.startswith(path + ":") for p in found):
                print("self-test: the planted upward include in %s was not caught" % path)
                return 1
        print("self-test: both planted upward includes caught:")
        for p in found:
            print("  " + p)
    return 0


def main(argv):
    if len(argv) == 3 and argv[1] == "--self-test":
        return self_test(argv[2])
    if len(argv) != 2:
        print(__doc__)
        return 2
    problems = check(argv[1])
    for p in problems:
        print(p)
    if problems:
        print("%d upward include(s): each layer may include only from its own and lower layers "
              "(metrics/ < runner/%s)" % (len(problems), " < runner/".join(RUNNER_LAYERS)))
        return 1
    print("layers: every include points down or sideways")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
