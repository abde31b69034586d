#!/usr/bin/env python3
"""Fails when a Catch2 TEST_CASE name would be mangled by CTest discovery.

catch_discover_tests hands each name to CMake as a list item: a ';' splits one test into two
entries that match nothing, and Catch2 then "passes" them with zero assertions. A backslash is
read as an escape, and a leading '-' makes the name an option. Either way a test stops running
as written, so the names must avoid all three.
"""
import pathlib
import re
import sys

root = pathlib.Path(sys.argv[1])
bad = []
for path in sorted(root.glob("**/*_test.cc")):
    for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        match = re.search(r'TEST_CASE\(\s*"((?:[^"\\]|\\.)*)"', line)
        name = match.group(1) if match else ""
        if match and (";" in name or "\\" in name or name.startswith("-")):
            bad.append(f"{path}:{number}: test name has ';' or '\\' or a leading '-': {name}")
print("\n".join(bad) if bad else f"test names ok under {root}")
sys.exit(1 if bad else 0)
