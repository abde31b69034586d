#!/usr/bin/env python3
"""Fails when a Catch2 TEST_CASE name would be mangled by CTest discovery.

catch_discover_tests hands each name to CMake as a list item: a ';' splits one test into two
entries that match nothing, and Catch2 then "passes" them with zero assertions. A backslash is
read as an escape. Either way a test silently stops running, so the names must avoid both.
"""
import pathlib
import re
import sys

root = pathlib.Path(sys.argv[1])
bad = []
for path in sorted(root.glob("**/*_test.cc")):
    for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        match = re.search(r'TEST_CASE\(\s*"((?:[^"\\]|\\.)*)"', line)
        if match and (";" in match.group(1) or "\\" in match.group(1)):
            bad.append(f"{path}:{number}: test name contains ';' or '\\': {match.group(1)}")
print("\n".join(bad) if bad else f"test names ok under {root}")
sys.exit(1 if bad else 0)
