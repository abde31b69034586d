#!/usr/bin/env python3
"""Differential check: plumb's long-answer metrics vs. a Python transcription of their definitions.

Part 1 transcribes each definition, stdlib only, on top of SQuAD's normalize_answer (taken from
squad_normalize_reference.py, itself a transcription of evaluate-v2.0.py, from memory):
  token_recall   max over gold answers of |Counter(gold) & Counter(answer)| / |gold|
                 (the recall of evaluate-v2.0.py's compute_f1; scoring verbose answers by it is
                 common practice)
  covers_gold    1 when some gold answer's token list is a contiguous run of the answer's tokens
  knowledge_f1   compute_f1 between the answer and the gold spans' text joined by spaces: the
                 "Knowledge F1" of Shuster et al. (2021), "Retrieval Augmentation Reduces
                 Hallucination in Conversation" (from memory)
  cited_support  the share of the answer's tokens found in the cited spans' text
with the abstention rule of SPEC section 6.2 for the first two. Part 2 generates seeded cases,
runs long_answer_driver on them and compares every value (exactly: the same operations on the
same integers). It prints the seed (replay with --seed) and exits 1 on any mismatch.
"""

import argparse
import collections
import os
import random
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from squad_normalize_reference import normalize_answer  # noqa: E402


def tokens(text):
    return normalize_answer(text).split() if text else []


def f1(pred, gold):
    if not pred or not gold:
        return float(pred == gold)
    same = sum((collections.Counter(gold) & collections.Counter(pred)).values())
    if same == 0:
        return 0.0
    precision = 1.0 * same / len(pred)
    recall = 1.0 * same / len(gold)
    return (2 * precision * recall) / (precision + recall)


def recall(answer, gold):
    same = sum((collections.Counter(gold) & collections.Counter(answer)).values())
    return same / len(gold)


def covers(answer, gold):
    n = len(gold)
    return any(answer[i:i + n] == gold for i in range(len(answer) - n + 1))


def reference(answer, golds, knowledge, cited):
    toks = tokens(answer) if answer is not None else []
    gold_lists = [g for g in (tokens(x) for x in golds) if g]
    if not gold_lists:
        token_recall = covers_gold = 1.0 if not toks else 0.0
    elif not toks:
        token_recall = covers_gold = 0.0
    else:
        token_recall = max(recall(toks, g) for g in gold_lists)
        covers_gold = 1.0 if any(covers(toks, g) for g in gold_lists) else 0.0
    knowledge_f1 = None
    if knowledge:
        know = tokens(' '.join(knowledge))
        knowledge_f1 = f1(toks, know) if know else None
    support = None
    cited_toks = set(tokens(' '.join(cited)))
    if toks and cited_toks:
        support = sum(1 for t in toks if t in cited_toks) / len(toks)
    return token_recall, covers_gold, knowledge_f1, support


WORDS = ['the', 'a', 'an', 'The', 'ferry', 'boarding', 'closes', 'ten', 'minutes', 'before',
         'departure', 'deck', '7:40', '10', 'once', 'renewed', 'loan', 'desk', 'is', 'not',
         'Gate', 'B2', 'café', 'Ωmega', 'ΟΔΟΣ', 'naïve', 'vehicles', 'cars', 'at', 'of']
GLUE = [' ', ' ', ' ', ', ', '. ', '! ', ' - ', '\n', '; ', "'s "]


def sentence(rng, lo=0, hi=14):
    parts = []
    for _ in range(rng.randint(lo, hi)):
        parts.append(rng.choice(WORDS))
        parts.append(rng.choice(GLUE))
    return ''.join(parts).strip()


def generate(rng):
    golds = [sentence(rng, 1, 4) for _ in range(rng.choice([0, 1, 1, 2, 3]))]
    shape = rng.random()
    if shape < 0.1:
        answer = None
    elif shape < 0.6 and golds:
        # A sentence around a gold answer, so covers_gold and recall take both values.
        answer = sentence(rng, 0, 5) + ' ' + rng.choice(golds) + ' ' + sentence(rng, 0, 5)
    elif shape < 0.65:
        answer = rng.choice(['', '...', 'the', ' '])
    else:
        answer = sentence(rng)
    knowledge = [sentence(rng, 0, 12) for _ in range(rng.choice([0, 1, 1, 2]))]
    cited = [sentence(rng, 0, 12) for _ in range(rng.choice([0, 0, 1, 2]))]
    if knowledge and answer and rng.random() < 0.3:
        cited.append(knowledge[0])
    return answer, golds, knowledge, cited


def hexfield(text):
    data = text.encode('utf-8')
    return data.hex() if data else '-'


def request(answer, golds, knowledge, cited):
    fields = ['L', '~' if answer is None else hexfield(answer)]
    for texts in (golds, knowledge, cited):
        fields.append(str(len(texts)))
        fields += [hexfield(t) for t in texts]
    return ' '.join(fields)


def parse(field):
    return None if field == '-' else float(field)


def main():
    parser = argparse.ArgumentParser(description=__doc__.split('\n')[0])
    parser.add_argument('--driver', required=True, help='path of long_answer_driver')
    parser.add_argument('--seed', type=int, help='replay a run (default: a fresh random seed)')
    parser.add_argument('--cases', type=int, default=5000, help='generated cases')
    args = parser.parse_args()
    seed = args.seed if args.seed is not None else int.from_bytes(os.urandom(4), 'big')
    print('long_answer_reference: seed %d (replay with --seed %d)' % (seed, seed))
    rng = random.Random(seed)
    cases = [generate(rng) for _ in range(args.cases)]
    # Hand-picked edges: empty gold list, gold of articles only, cited text of punctuation only.
    cases += [(None, [], [], []), ('', [], ['x'], ['...']), ('once', ['once'], ['once'], ['once']),
              ('the', ['the'], ['the'], ['the']), ('a b', ['b a'], [''], ['a'])]
    stdin = '\n'.join(request(*c) for c in cases) + '\n'
    run = subprocess.run([args.driver], input=stdin.encode('utf-8'), capture_output=True)
    if run.returncode != 0:
        print(run.stderr.decode(errors='replace'))
        return 1
    lines = run.stdout.decode().splitlines()
    if len(lines) != len(cases):
        print('driver answered %d lines for %d cases' % (len(lines), len(cases)))
        return 1
    names = ('token_recall', 'covers_gold', 'knowledge_f1', 'cited_support')
    mismatches = 0
    counts = collections.Counter()
    for case, line in zip(cases, lines):
        got = tuple(parse(f) for f in line.split(' '))
        want = reference(*case)
        for name, g, w in zip(names, got, want):
            if w is not None:
                counts[name] += 1
            if g != w:
                mismatches += 1
                if mismatches <= 10:
                    print('MISMATCH %s: plumb %r, reference %r for %r' % (name, g, w, case))
    print('long_answer_reference: %d cases; defined values compared: %s; %d mismatches'
          % (len(cases), ', '.join('%s %d' % (n, counts[n]) for n in names), mismatches))
    return 1 if mismatches else 0


if __name__ == '__main__':
    sys.exit(main())
