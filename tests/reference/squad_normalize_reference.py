#!/usr/bin/env python3
"""Differential check: plumb's `squad` normalization and answer metrics vs. the SQuAD evaluation.

Part 1 is a stdlib-only transcription, from memory, of the official evaluation scripts of
  Rajpurkar, Zhang, Lopyrev, Liang (2016), "SQuAD: 100,000+ Questions for Machine Comprehension
  of Text" (evaluate-v1.1.py), and
  Rajpurkar, Jia, Liang (2018), "Know What You Don't Know: Unanswerable Questions for SQuAD"
  (evaluate-v2.0.py: normalize_answer, get_tokens, compute_exact, compute_f1, get_raw_scores).
Part 2 generates seeded random inputs, runs squad_normalize_driver on them, and compares every
value with Part 1. It prints the seed (replay with --seed) and the first mismatches with their
code points, and exits 1 on any mismatch.

Unicode versions: Debian 12's Python 3.11 ships Unicode 14.0, ICU 72 (behind the C++) ships
15.0. Characters first assigned in Unicode 15 have different properties in the two, so they are
left out: every non-ASCII character generated or probed here is assigned in Python's
unicodedata (category other than Cn), and unassigned code points are never used.
"""

import argparse
import collections
import os
import random
import re
import string
import subprocess
import sys
import unicodedata

# ---------------------------------------------------------------------------------------------
# Part 1: the official definitions (evaluate-v2.0.py, from memory).


def normalize_answer(s):
    """Lower text and remove punctuation, articles and extra whitespace."""

    def remove_articles(text):
        regex = re.compile(r'\b(a|an|the)\b', re.UNICODE)
        return re.sub(regex, ' ', text)

    def white_space_fix(text):
        return ' '.join(text.split())

    def remove_punc(text):
        exclude = set(string.punctuation)
        return ''.join(ch for ch in text if ch not in exclude)

    def lower(text):
        return text.lower()

    return white_space_fix(remove_articles(remove_punc(lower(s))))


def get_tokens(s):
    if not s:
        return []
    return normalize_answer(s).split()


def compute_exact(a_gold, a_pred):
    return int(normalize_answer(a_gold) == normalize_answer(a_pred))


def compute_f1(a_gold, a_pred):
    gold_toks = get_tokens(a_gold)
    pred_toks = get_tokens(a_pred)
    common = collections.Counter(gold_toks) & collections.Counter(pred_toks)
    num_same = sum(common.values())
    if len(gold_toks) == 0 or len(pred_toks) == 0:
        # If either is no-answer, then F1 is 1 if they agree, 0 otherwise
        return int(gold_toks == pred_toks)
    if num_same == 0:
        return 0
    precision = 1.0 * num_same / len(pred_toks)
    recall = 1.0 * num_same / len(gold_toks)
    f1 = (2 * precision * recall) / (precision + recall)
    return f1


def score_question(gold_texts, a_pred):
    """get_raw_scores for one question: (exact, f1), max over the gold answers."""
    gold_answers = [a for a in gold_texts if normalize_answer(a)]
    if not gold_answers:
        # For unanswerable questions, only correct answer is empty string
        gold_answers = ['']
    exact = max(compute_exact(a, a_pred) for a in gold_answers)
    f1 = max(compute_f1(a, a_pred) for a in gold_answers)
    return exact, f1


# evaluate-v1.1.py's f1_score differs only when a token list is empty: num_same == 0 gives 0,
# so two empty answers score 0 there and 1 in v2.0. SPEC §6.2 uses the v2.0 rule.

# ---------------------------------------------------------------------------------------------
# Part 2: generator and comparison.

ASCII_WORDS = [
    'the', 'a', 'an', 'The', 'A', 'An', 'AN', 'THE', 'tHe', 'cat', 'sat', 'down', 'ferry',
    'boarding', 'closes', 'ten', 'minutes', 'before', 'departure', 'theater', 'anna', 'ant',
    'at', 'then', 'a1', '1a', 'the_', '_the', 'an_', '_', '__', '42', '3.5', '1,200', 'x',
    'i', 'I', 'o', 'deck', 'B2', 'ÿ',
]
PUNCTUATION = list(string.punctuation)
ASCII_SPACE = [' ', ' ', ' ', '  ', '\t', '\n', '\v', '\f', '\r', '\x1c', '\x1d', '\x1e', '\x1f']
ASCII_CONTROL = ['\x00', '\x01', '\x07', '\x08', '\x0e', '\x1b', '\x7f']
LETTERS = [
    'é', 'É', 'Ä', 'ß', 'ẞ', 'ø', 'Ł', 'ı', 'İ', 'ǅ', 'ǈ', 'Ω', 'ﬁ', 'ﬀ', '\u212a', '\u212b',
    'Ǆ', 'ŉ', 'Ѐ', 'Ж', 'ж', 'Ԁ', 'Ⴀ', 'Ꭰ', 'ꭰ', 'ᏸ', 'Ⓐ', 'ⓐ', '𐐀', '𞤀', 'ǰ', 'ΐ', 'ᾈ', 'ᾼ',
    'ª', 'º', 'ʰ', 'ᵃ', 'ℌ', 'ℍ', '𝐀', '𝔞', 'Å', 'Ǻ', 'Ⱥ', 'Ɫ', 'ɐ', 'Ԝ', 'ԝ', 'Ꙁ', 'Ꞵ',
]
COMBINING = ['\u0300', '\u0301', '\u0307', '\u0308', '\u0345', '\u0327', '\u20dd', '\u0903',
             '\u093e', '\u1ab0', '\u302a', '\ufe0f', '\u200d', '\u200c', '\u0488']
UNICODE_SPACE = ['\u00a0', '\u0085', '\u2028', '\u2029', '\u3000', '\u1680', '\u2000', '\u2003',
                 '\u2007', '\u2009', '\u200a', '\u202f', '\u205f', '\u200b', '\ufeff', '\u180e',
                 '\u2060', '\u00ad']
GREEK = ['ΟΔΟΣ', 'Σ', 'ΣΑΣ', 'ὈΔΥΣΣΕΎΣ', 'ΑΣ\'', 'ΑΣ\u0301', 'ΑΣ\u0345Β', 'Α\u0345Σ', 'ΆΣΟΣ',
         'σ', 'ς', 'ΣΣ', 'ΑΣ.Α', 'Α.Σ', '\u0345Σ', 'ΛΌΓΟΣ', 'ΑΣ\u00adΑ', 'ΑΣ\u200dΒ', 'αΣ1', 'ᾼΣ']
FULLWIDTH = ['ＴＨＥ', 'Ａ', 'ｔｈｅ', 'ＡＮ', '！', '＂', '＃', '１２', 'ａ', 'ﾀ', 'ｶﾞ']
DIGITS = ['٣', '۴', '४', '๕', '１', '²', '½', 'Ⅻ', 'ⅻ', '①', '〇', '一', '二', '三', '兩',
          '廿', '卅', '萬', '億', '兆', '零', '壹', '仨', '𝟙', '𐄇', '፩', '៣', '߂', '𑁒']
CJK = ['東京', 'の', 'カタカナ', '한국어', '中文', '渡', '船', 'ー', '々', '〆', 'ㄅ', '𠀀', '龍']
EMOJI = ['😀', '👍🏽', '👨\u200d👩\u200d👧', '🇫🇷', '❤️', '#️⃣', '🛳', '⛴', '🙂']
UNICODE_PUNCT = ['—', '–', '“', '”', '‘', '’', '¿', '¡', '«', '»', '…', '・', '。', '、', '·',
                 '§', '¶', '†', '€', '£', '©', '°', '±', '×', '÷', '\u2212', '⁄', '‐', '﹏']
INVALID_BYTES = [b'\xff', b'\xfe', b'\x80', b'\xbf', b'\xc0\xaf', b'\xc1\xbf', b'\xe0\x80\xaf',
                 b'\xed\xa0\x80', b'\xed\xbf\xbf', b'\xe2\x82', b'\xf0\x9f\x98', b'\xf4\x90\x80\x80',
                 b'\xf5\x80', b'\xc2', b'\xe2', b'\xf0\x9f', b'\xe2\x28\xa1', b'\xf8\x88\x80\x80\x80']


def assigned_code_points():
    """Every code point assigned in Python's Unicode (14.0), surrogates and planes 15-16 private
    use left out (the latter have trivial, identical properties in both)."""
    points = []
    for cp in range(0x110000):
        if 0xD800 <= cp <= 0xDFFF or cp >= 0xF0000:
            continue
        if unicodedata.category(chr(cp)) != 'Cn':
            points.append(cp)
    return points


def random_piece(rng, assigned):
    pools = [ASCII_WORDS] * 6 + [PUNCTUATION] * 2 + [ASCII_SPACE] * 2 + [
        ASCII_CONTROL, LETTERS, LETTERS, COMBINING, UNICODE_SPACE, UNICODE_SPACE, GREEK, GREEK,
        FULLWIDTH, DIGITS, CJK, EMOJI, UNICODE_PUNCT, None, None, 'bytes']
    pool = rng.choice(pools)
    if pool is None:
        return chr(rng.choice(assigned)).encode('utf-8')
    if pool == 'bytes':
        return rng.choice(INVALID_BYTES)
    return rng.choice(pool).encode('utf-8')


def random_text(rng, assigned):
    """A byte string: mostly UTF-8 of mixed pieces, sometimes with invalid sequences."""
    shape = rng.random()
    if shape < 0.03:
        return b''
    if shape < 0.07:  # punctuation only, perhaps with spaces
        return ''.join(rng.choice(PUNCTUATION + [' '] + UNICODE_PUNCT[:3])
                       for _ in range(rng.randint(1, 8))).encode('utf-8')
    if shape < 0.09:  # whitespace only
        return ''.join(rng.choice(ASCII_SPACE + UNICODE_SPACE) for _ in range(rng.randint(1, 6))
                       ).encode('utf-8')
    out = b''
    for _ in range(rng.randint(1, 12)):
        out += random_piece(rng, assigned)
        sep = rng.random()
        if sep < 0.55:
            out += b' '
        elif sep < 0.65:
            out += rng.choice(ASCII_SPACE + UNICODE_SPACE).encode('utf-8')
        elif sep < 0.75:
            out += rng.choice(PUNCTUATION).encode('utf-8')
    return out


# Pure-ASCII input takes plumb's one-pass path; these pieces aim at its edges: articles in any
# case at the string's edges and glued by punctuation ("the,a" is "thea", "a.n" the article
# "an"), every ASCII whitespace character (U+001C..U+001F included), the control characters that
# are neither \w nor whitespace, digits, apostrophes, and answers longer than 256 bytes.
ASCII_ARTICLES = ['a', 'an', 'the', 'A', 'AN', 'An', 'aN', 'The', 'THE', 'tHe', 'thE']
ASCII_EDGE_WORDS = ['cat', 'theater', 'anna', 'then', 'ant', 'x', 'I', '1', '42', 'a1', '1a',
                    'the1', '0the', "don't", "o'clock", 'ABC', 'Zz', 'ferry', 'boarding', 'ten',
                    'thy', 'tha', 'THO', 'he', 'th', 'as', 'Am', 'n', 'e', 'aa', 'ann', 'thee']
ASCII_GLUE = [',', '.', "'", '-', '_', ':', '!', '"', '(', ')', '/', '@', '`', '~', '\\', '^']
ASCII_ALL_SPACE = ['\t', '\n', '\v', '\f', '\r', '\x1c', '\x1d', '\x1e', '\x1f', ' ']
ASCII_ALL_CONTROL = [chr(c) for c in list(range(0x00, 0x09)) + list(range(0x0e, 0x1c)) + [0x7f]]


def random_ascii_text(rng):
    """A pure-ASCII string weighted toward the one-pass path's edge cases."""
    def piece():
        r = rng.random()
        if r < 0.35:
            return rng.choice(ASCII_ARTICLES)
        if r < 0.65:
            return rng.choice(ASCII_EDGE_WORDS)
        if r < 0.75:  # an article glued to something by punctuation, e.g. "the,a" or "t'he"
            art = rng.choice(ASCII_ARTICLES)
            cut = rng.randint(0, len(art))
            return art[:cut] + rng.choice(ASCII_GLUE) + art[cut:]
        if r < 0.85:
            return rng.choice(ASCII_GLUE) * rng.randint(1, 2)
        if r < 0.92:
            return rng.choice(ASCII_ALL_CONTROL)
        return chr(rng.randint(0x00, 0x7f))

    def separator():
        r = rng.random()
        if r < 0.45:
            return ' '
        if r < 0.65:
            return ''.join(rng.choice(ASCII_ALL_SPACE) for _ in range(rng.randint(1, 3)))
        if r < 0.8:
            return rng.choice(ASCII_GLUE)
        if r < 0.9:
            return rng.choice(ASCII_ALL_CONTROL)
        return ''

    parts = []
    if rng.random() < 0.3:
        parts.append(rng.choice(ASCII_ARTICLES) + separator())
    for i in range(rng.randint(0, 8)):
        if i:
            parts.append(separator())
        parts.append(piece())
    if rng.random() < 0.3:
        parts.append(separator() + rng.choice(ASCII_ARTICLES))
    text = ''.join(parts)
    if rng.random() < 0.03:  # past the inline buffers: 256 bytes, 129 tokens
        while len(text) < 300:
            text += separator() + piece() + ' a'
    return text.encode('ascii')


def mutate(rng, text, assigned):
    """A related text, so pairs share tokens and F1 takes values strictly between 0 and 1."""
    words = text.split(b' ')
    op = rng.random()
    if op < 0.25 and len(words) > 1:
        del words[rng.randrange(len(words))]
    elif op < 0.5:
        words.insert(rng.randint(0, len(words)), random_piece(rng, assigned))
    elif op < 0.7:
        rng.shuffle(words)
    elif op < 0.8:
        words = words + words[: rng.randint(0, len(words))]
    elif op < 0.9:
        return random_text(rng, assigned)
    return b' '.join(words)


def probes(cp):
    """Strings that expose one character's lowercase mapping, \\w and whitespace membership and
    Final_Sigma classes (cased, case-ignorable) through normalize_answer alone."""
    c = chr(cp)
    return [c, 'a' + c, c + 'the', 'x' + c + 'y', 'A\u03a3' + c, c + '\u03a3', 'A' + c + '\u03a3']


def hexfield(data):
    return data.hex() if data else '-'


def describe(data):
    text = data.decode('utf-8', errors='replace') if isinstance(data, bytes) else data
    points = ' '.join('U+%04X' % ord(ch) for ch in text) or '(empty)'
    if isinstance(data, bytes) and text.encode('utf-8') != data:
        points += ' (bytes %s)' % data.hex()
    return points


def main():
    parser = argparse.ArgumentParser(description=__doc__.split('\n')[0])
    parser.add_argument('--driver', required=True, help='path of squad_normalize_driver')
    parser.add_argument('--seed', type=int, help='replay a run (default: a fresh random seed)')
    parser.add_argument('--strings', type=int, default=6000, help='random strings (>= 5000)')
    parser.add_argument('--pairs', type=int, default=4000, help='random scored questions')
    parser.add_argument('--ascii-strings', type=int, default=20000,
                        help='random pure-ASCII strings aimed at the one-pass path')
    parser.add_argument('--ascii-pairs', type=int, default=4000,
                        help='random scored questions of pure-ASCII text')
    parser.add_argument('--no-probes', action='store_true',
                        help='skip the per-code-point probes of every assigned character')
    args = parser.parse_args()
    seed = args.seed if args.seed is not None else int.from_bytes(os.urandom(4), 'big')
    print('squad_normalize_reference: seed %d (replay with --seed %d)' % (seed, seed))
    rng = random.Random(seed)
    assigned = [cp for cp in assigned_code_points() if cp >= 0x80]

    texts = [random_text(rng, assigned) for _ in range(args.strings)]
    texts += [b'', b' ', b'The Cat!', b'\xc4\xb0', 'ΟΔΟΣ'.encode(), b'a an the', b'...']
    ascii_texts = [random_ascii_text(rng) for _ in range(args.ascii_strings)]
    texts += ascii_texts
    if not args.no_probes:
        for cp in range(0x80):
            texts += [p.encode('utf-8') for p in probes(cp)]
        for cp in assigned:
            texts += [p.encode('utf-8') for p in probes(cp)]

    questions = []
    for _ in range(args.pairs):
        golds = [random_text(rng, assigned) for _ in range(rng.choice([0, 1, 1, 2, 3]))]
        shape = rng.random()
        if shape < 0.1:
            pred = None  # abstention
        elif shape < 0.7 and golds:
            pred = mutate(rng, rng.choice(golds), assigned)
        else:
            pred = random_text(rng, assigned)
        questions.append((pred, golds))

    for _ in range(args.ascii_pairs):
        golds = [random_ascii_text(rng) for _ in range(rng.choice([0, 1, 1, 2, 3]))]
        shape = rng.random()
        if shape < 0.05:
            pred = None
        elif shape < 0.5 and golds:
            pred = rng.choice(golds)
            words = pred.split(b' ')
            rng.shuffle(words)
            pred = b' '.join(words[: rng.randint(1, len(words))])
        elif shape < 0.6 and golds:
            pred = rng.choice(golds).upper()
        else:
            pred = random_ascii_text(rng)
        questions.append((pred, golds))

    lines = ['N ' + hexfield(t) for t in texts]
    for pred, golds in questions:
        fields = ['~' if pred is None else hexfield(pred)] + [hexfield(g) for g in golds]
        lines.append('S ' + ' '.join(fields))
    run = subprocess.run([args.driver], input=('\n'.join(lines) + '\n').encode('ascii'),
                         stdout=subprocess.PIPE, check=False)
    if run.returncode != 0:
        print('squad_normalize_reference: driver exited with %d' % run.returncode)
        return 1
    answers = run.stdout.decode('ascii').split('\n')[:-1]
    if len(answers) != len(lines):
        print('squad_normalize_reference: %d requests, %d answers' % (len(lines), len(answers)))
        return 1

    mismatches = []
    for text, got in zip(texts, answers):
        want = normalize_answer(text.decode('utf-8', errors='replace'))
        got_text = bytes.fromhex(got if got != '-' else '').decode('utf-8', errors='replace')
        if got_text != want:
            mismatches.append('normalize_answer(%s)\n    python: %s\n    plumb:  %s'
                              % (describe(text), describe(want), describe(got_text)))
    for (pred, golds), got in zip(questions, answers[len(texts):]):
        decoded = [g.decode('utf-8', errors='replace') for g in golds]
        a_pred = '' if pred is None else pred.decode('utf-8', errors='replace')
        exact, f1 = score_question(decoded, a_pred)
        got_exact, got_f1 = got.split(' ')
        if int(got_exact) != exact or float(got_f1) != float(f1):
            mismatches.append('score(pred=%s, gold=[%s])\n    python: EM %d F1 %r\n'
                              '    plumb:  EM %s F1 %s'
                              % ('abstain' if pred is None else describe(pred),
                                 ' | '.join(describe(g) for g in golds), exact, f1, got_exact,
                                 got_f1))

    f1_strictly_between = sum(1 for (p, g), got in zip(questions, answers[len(texts):])
                              if 0 < float(got.split(' ')[1]) < 1)
    print('squad_normalize_reference: %d normalize_answer inputs (%d random strings, %d of them '
          'pure ASCII, %d longer than 256 bytes), %d scored questions (%d with 0 < F1 < 1)'
          % (len(texts), args.strings + len(ascii_texts), len(ascii_texts),
             sum(1 for t in ascii_texts if len(t) > 256), len(questions), f1_strictly_between))
    if mismatches:
        print('squad_normalize_reference: %d mismatches; first ones:' % len(mismatches))
        for m in mismatches[:15]:
            print('  ' + m)
        return 1
    print('squad_normalize_reference: all values agree')
    return 0


if __name__ == '__main__':
    sys.exit(main())
