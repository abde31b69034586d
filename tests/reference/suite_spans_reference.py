#!/usr/bin/env python3
"""Differential check of the suite loader's quote location and code-point offsets.

Generates a corpus of documents mixing ASCII, accented Latin, CJK, an astral character and
runs of Unicode whitespace (Unicode's White_Space property, read from Debian's unicode-data
PropList.txt), then a suite whose sources are exact quotes, whitespace-altered quotes and
explicit offsets. plumb's loader resolves them (through suite_spans_driver); Python computes
the expected code-point spans with str.find and re, which index strings by code point.
Exit status 0 when every span agrees.
"""

import argparse
import json
import os
import random
import re
import subprocess
import sys
import tempfile


def white_space_chars(proplist="/usr/share/unicode/PropList.txt"):
    chars = []
    with open(proplist, encoding="utf-8") as f:
        for line in f:
            if "; White_Space" not in line:
                continue
            code = line.split(";")[0].strip()
            first, _, last = code.partition("..")
            for c in range(int(first, 16), int(last or first, 16) + 1):
                chars.append(chr(c))
    return chars


def yaml_quote(text):
    """A YAML double-quoted scalar with every non-ASCII or control character escaped."""
    out = ['"']
    for ch in text:
        c = ord(ch)
        if ch == '"' or ch == "\\":
            out.append("\\" + ch)
        elif 0x20 <= c < 0x7F:
            out.append(ch)
        elif c <= 0xFFFF:
            out.append("\\u%04x" % c)
        else:
            out.append("\\U%08x" % c)
    out.append('"')
    return "".join(out)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--driver", required=True)
    parser.add_argument("--seed", type=int, default=None)
    parser.add_argument("--cases", type=int, default=400)
    args = parser.parse_args()
    seed = args.seed if args.seed is not None else random.randrange(1 << 30)
    rng = random.Random(seed)

    spaces = white_space_chars()
    ws_class = "[" + "".join(re.escape(c) for c in spaces) + "]+"
    letters = list("abcdefghijklmnopqrstuvwxyz") + ["é", "ß", "—", "日", "本", "語", "\U0001F6A2"]

    def word():
        return "".join(rng.choice(letters) for _ in range(rng.randint(1, 6)))

    def gap():
        return "".join(rng.choice(spaces if rng.random() < 0.3 else [" "])
                       for _ in range(rng.choice([1, 1, 1, 2, 3])))

    with tempfile.TemporaryDirectory(prefix="plumb-spans-") as tmp:
        os.makedirs(os.path.join(tmp, "docs", "sub"))
        docs = {}
        for i in range(12):
            doc_id = ("sub/" if i % 4 == 0 else "") + "doc%d.md" % i
            words = [word() for _ in range(rng.randint(20, 200))]
            text = words[0] + "".join(gap() + w for w in words[1:]) + "\n"
            docs[doc_id] = text
            with open(os.path.join(tmp, "docs", doc_id), "w", encoding="utf-8", newline="") as f:
                f.write(text)

        expected = []  # per case: list of (doc, start, end)
        collapsed_matches = 0
        yaml_cases = []
        jsonl_cases = []
        for n in range(args.cases):
            doc_id = rng.choice(sorted(docs))
            text = docs[doc_id]
            kind = rng.choice(["exact", "collapsed", "offsets"])
            if kind == "offsets":
                start = rng.randrange(0, len(text) - 1)
                end = rng.randrange(start + 1, len(text) + 1)
                source = {"doc": doc_id, "start": start, "end": end}
                want = (doc_id, start, end)
            else:
                # A run of whole tokens, so a quote never starts or ends inside whitespace.
                spans = [m.span() for m in re.finditer("[^" + ws_class[1:-2] + "]+", text)]
                a = rng.randrange(len(spans))
                b = min(len(spans) - 1, a + rng.randint(0, 5))
                exact = text[spans[a][0]:spans[b][1]]
                if kind == "exact":
                    quote = exact
                else:
                    tokens = re.split(ws_class, exact)
                    quote = rng.choice(["", " ", "\t"]) + " ".join(tokens) + rng.choice(["", "\n"])
                found = text.find(quote)
                if found >= 0:
                    want = (doc_id, found, found + len(quote))
                else:
                    tokens = [t for t in re.split(ws_class, quote) if t]
                    m = re.search(ws_class.join(re.escape(t) for t in tokens), text)
                    assert m is not None
                    collapsed_matches += 1
                    want = (doc_id, m.start(), m.end())
                source = {"doc": doc_id, "quote": quote}
            case = {"id": "c%d" % n, "question": "q?", "answers": ["a"], "sources": [source]}
            expected.append(("c%d" % n, want))
            (jsonl_cases if n % 3 == 0 else yaml_cases).append(case)

        with open(os.path.join(tmp, "gen.jsonl"), "w", encoding="utf-8") as f:
            for case in jsonl_cases:
                f.write(json.dumps(case, ensure_ascii=False) + "\n")
        lines = ["plumb: 1", "name: spans", "corpus: docs", "cases:"]
        for case in yaml_cases:
            s = case["sources"][0]
            if "quote" in s:
                src = "{doc: %s, quote: %s}" % (yaml_quote(s["doc"]), yaml_quote(s["quote"]))
            else:
                src = "{doc: %s, start: %d, end: %d}" % (yaml_quote(s["doc"]), s["start"], s["end"])
            lines.append("  - id: %s\n    question: q?\n    answers: [a]\n    sources: [%s]"
                         % (case["id"], src))
        lines.append("include: [gen.jsonl]")
        suite = os.path.join(tmp, "suite.yaml")
        with open(suite, "w", encoding="utf-8") as f:
            f.write("\n".join(lines) + "\n")

        result = json.loads(subprocess.run([args.driver, suite], check=True,
                                           capture_output=True).stdout)
        if not result["ok"]:
            print("seed %d: the suite did not load:\n%s" % (seed, "\n".join(result["errors"])))
            return 1
        got = {c["id"]: c["sources"] for c in result["cases"]}
        failures = 0
        for case_id, (doc_id, start, end) in expected:
            s = got[case_id][0]
            if (s["doc"], s["start"], s["end"]) != (doc_id, start, end) or \
                    s["text"] != docs[doc_id][start:end]:
                failures += 1
                if failures <= 10:
                    print("seed %d, %s: plumb %s [%d, %d), Python %s [%d, %d)"
                          % (seed, case_id, s["doc"], s["start"], s["end"], doc_id, start, end))
        print("seed %d: %d spans (%d located only whitespace-collapsed), %d disagreements"
              % (seed, len(expected), collapsed_matches, failures))
        return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
