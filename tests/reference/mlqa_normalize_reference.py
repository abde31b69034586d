#!/usr/bin/env python3
"""Differential check of plumb's `mlqa` normalization profile (SPEC 6.1).

Compares NormalizeMlqaTokens (through mlqa_normalize_driver) with a stdlib-only Python
transcription of the normalization in the MLQA evaluation script, mlqa_evaluation_v1.py
(Lewis et al. 2020, "MLQA: Evaluating Cross-lingual Extractive Question Answering").

The transcription is FROM MEMORY, not copied from the published file; the section
"Transcription" below is exactly what was transcribed. Places where memory may be wrong:
  - mixed_segmentation's CJK class, recalled as [\u4e00-\u9fa5] (the CMRC 2018 script's);
  - the Arabic pattern, recalled as the odd '\sال^|ال' (its first branch can never match);
  - the Vietnamese article literals, assumed to be stored precomposed (NFC) in the script;
  - the order lower -> remove_punc -> remove_articles -> white_space_fix.

Two checks run, and each prints "N passed, M failed":
  1. Character classes: for every code point assigned in Python's Unicode database, plumb's
     IsPythonWhitespace, IsPythonWordChar (re's \\w), IsPunctuation and LowerCase agree with
     str.isspace(), re.match(r'\\w'), unicodedata.category()[0] == 'P' and str.lower().
  2. Tokens: --count generated strings per language (en es de vi ar hi zh), seeded, each compared
     with normalize_answer(s, lang).split().

Python 3.11 ships Unicode 14.0 and ICU 72 Unicode 15.0: the generator draws only code points
assigned in Python's database, so nothing assigned in Unicode 15 reaches either side, and check 1
skips code points unassigned in Unicode 14. About 3% of inputs carry ill-formed UTF-8 bytes, which
Python decodes with errors="replace" (plumb must decode them the same way, SPEC 6.1 header).

Usage: mlqa_normalize_reference.py --driver PATH [--seed N] [--count N]
Without --seed a fresh seed is drawn; it is printed either way, so any failure can be replayed.
"""

import argparse
import os
import random
import re
import string
import subprocess
import sys
import unicodedata

# ---------------------------------------------------------------------------------------------
# Transcription (from memory) of mlqa_evaluation_v1.py's normalization. Kept as the script has
# it, quirks included; only the f1_score/exact_match wrappers are reduced to the token split.
# ---------------------------------------------------------------------------------------------

PUNCT = {chr(i) for i in range(sys.maxunicode)
         if unicodedata.category(chr(i)).startswith('P')}.union(string.punctuation)
WHITESPACE_LANGS = ['en', 'es', 'hi', 'vi', 'de', 'ar']
MIXED_SEGMENTATION_LANGS = ['zh']


def whitespace_tokenize(text):
    return text.split()


def mixed_segmentation(text):
    segs_out = []
    temp_str = ""
    for char in text:
        if re.search(r'[\u4e00-\u9fa5]', char) or char in PUNCT:
            if temp_str != "":
                ss = whitespace_tokenize(temp_str)
                segs_out.extend(ss)
                temp_str = ""
            segs_out.append(char)
        else:
            temp_str += char

    if temp_str != "":
        ss = whitespace_tokenize(temp_str)
        segs_out.extend(ss)

    return segs_out


def normalize_answer(s, lang):
    """Lower text and remove punctuation, articles and extra whitespace."""

    def remove_articles(text, lang):
        if lang == 'en':
            return re.sub(r'\b(a|an|the)\b', ' ', text)
        elif lang == 'es':
            return re.sub(r'\b(un|una|unos|unas|el|la|los|las)\b', ' ', text)
        elif lang == 'hi':
            return text  # Hindi does not have formal articles
        elif lang == 'vi':
            return re.sub(r'\b(của|là|cái|chiếc|những)\b', ' ', text)
        elif lang == 'de':
            return re.sub(r'\b(ein|eine|einen|einem|eines|einer|der|die|das|den|dem|des)\b',
                          ' ', text)
        elif lang == 'ar':
            return re.sub(r'\sال^|ال', ' ', text)
        elif lang == 'zh':
            return text  # Chinese does not have formal articles
        else:
            raise Exception('Unknown Language {}'.format(lang))

    def white_space_fix(text, lang):
        if lang in WHITESPACE_LANGS:
            tokens = whitespace_tokenize(text)
        elif lang in MIXED_SEGMENTATION_LANGS:
            tokens = mixed_segmentation(text)
        else:
            raise Exception('Unknown Language {}'.format(lang))
        return ' '.join([t for t in tokens if t.strip() != ''])

    def remove_punc(text):
        return ''.join(ch for ch in text if ch not in PUNCT)

    def lower(text):
        return text.lower()

    return white_space_fix(remove_articles(remove_punc(lower(s)), lang), lang)


def mlqa_tokens(s, lang):
    # f1_score: normalize_answer(prediction, lang).split()
    return normalize_answer(s, lang).split()

# ---------------------------------------------------------------------------------------------
# Inputs
# ---------------------------------------------------------------------------------------------

LANGS = ['en', 'es', 'de', 'vi', 'ar', 'hi', 'zh']

ALL_CODE_POINTS = [c for c in range(0x110000) if not 0xD800 <= c <= 0xDFFF]
ASSIGNED_14 = [c for c in ALL_CODE_POINTS if unicodedata.category(chr(c)) != 'Cn']
ASSIGNED_NOT_PRIVATE = [chr(c) for c in ASSIGNED_14 if unicodedata.category(chr(c)) != 'Co']
PUNCT_BY_CATEGORY = {}
for _c in ASSIGNED_14:
    _cat = unicodedata.category(chr(_c))
    if _cat.startswith('P'):
        PUNCT_BY_CATEGORY.setdefault(_cat, []).append(chr(_c))
WHITESPACE = [chr(c) for c in ASSIGNED_14 if chr(c).isspace()]
COMBINING = ([chr(c) for c in range(0x300, 0x370)] +
             ['\u0483', '\u0488', '\u0591', '\u05bf', '\u064b', '\u064e', '\u0652', '\u0670',
              '\u093c', '\u0941', '\u094d', '\u0903', '\u20dd', '\u3099', '\u309a', '\ufe0f',
              '\U000e0100'])
NOT_WHITESPACE = ['\u200b', '\u180e', '\ufeff', '\u2060', '\u00ad', '\u200d', '\x00', '\x7f',
                  '\x08']

WORDS = {
    'en': ['a', 'an', 'the', 'A', 'An', 'THE', 'The', 'ferry', 'Boarding', 'ten', 'minutes',
           'another', 'theatre', 'anthem', 'then', 'Them', 'a1', 'the_end', 'an2', '_a'],
    'es': ['un', 'una', 'unos', 'unas', 'el', 'la', 'los', 'las', 'Un', 'UNA', 'El', 'LA', 'Los',
           'niño', 'mañana', 'lancha', 'España', 'Él', 'lá', 'elefante', 'lasaña'],
    'de': ['ein', 'eine', 'einen', 'einem', 'eines', 'einer', 'der', 'die', 'das', 'den', 'dem',
           'des', 'Der', 'DIE', 'Das', 'EIN', 'Fährhafen', 'Straße', 'STRASSE', 'ẞ', 'Überfahrt',
           'Deutschland', 'ﬁnden', 'Denkmal', 'désir'],
    'vi': ['của', 'là', 'cái', 'chiếc', 'những', 'CỦA', 'Là', 'Cái', 'CHIẾC', 'Những', 'tàu',
           'phà', 'giờ', 'Việt', 'Nam', 'đường', 'khởi', 'hành', 'mười', 'phút', 'cua', 'la'],
    'ar': ['ال', 'البحر', 'الكتاب', 'سفينة', 'ميناء', 'والسفن', 'مال', 'الله', '١٠', 'دقائق',
           'الْبَحْر', 'قبل', 'المغادرة', 'الال', 'ﻻ', 'ﷲ'],
    'hi': ['नौका', 'दस', 'मिनट', 'पहले', 'हिन्दी', 'प्रस्थान', '१०', 'क़', 'ॐ'],
    'zh': ['渡轮', '每天', '早上', '七点', '开船', '第3号', '\u9fff', '\u9fa5', '\u9fa6', '〇',
           '\u3400', '\U00020000', 'Ｆｅｒｒｙ', '１０', 'ABC', '10', 'フェリー', 'ひらがな',
           '乘坐', '分钟', '\u4e00', '\u4dff', '\uf900', '\u2f00'],
}
GENERAL = ['ΟΔΟΣ', 'ΣΑΣ', 'Σ', 'ς', 'σ', 'ΑΣ\'Α', 'ΑΣ.', 'Α\u00adΣ', 'ΑΣ\u0301', 'Α:Σ',
           'İstanbul', 'İ', 'ǅ', 'ǈ', '\u212a', '\u2126', '\u212b', 'ﬀ', 'ŉ', 'ΐ', 'ᾼ', 'Ꭰ',
           '𐐀', '𞤀', 'Ა',
           'ǰ', 'ẞ', 'ß', 'Ⅻ', 'ⅻ', '½', '²', '〸', '万', '٣', '५', '௰', '𐄇', '①', '⑴', '⒈',
           '$', '+', '<', '=', '>', '^', '`', '|', '~', '€', '©', '™', '°', '🚢', '👍🏽', '_',
           'ÉTÉ', 'été', 'L\'été', 'Saint-Malo', 'don’t', '3.5', '10:30', '\u0345', 'ͅ',
           '\U0001d400', '\U0001f130', 'ǲ', 'Ǳ', 'ꭰ', 'ᏸ', 'ﬅ']
INVALID_UTF8 = [b'\xff', b'\xfe', b'\xc3', b'\xe2\x82', b'\xed\xa0\x80', b'\xf4\x90\x80\x80',
                b'\xc0\xaf', b'\xe0\x80\xaf', b'\x80', b'\xbf\xbf', b'\xf0\x9f\x9a']


def random_punctuation(rng):
    if rng.random() < 0.3:
        return rng.choice(string.punctuation)
    category = rng.choice(['Pc', 'Pd', 'Ps', 'Pe', 'Pi', 'Pf', 'Po'])
    return rng.choice(PUNCT_BY_CATEGORY[category])


def random_piece(rng, lang):
    roll = rng.random()
    if roll < 0.35:
        piece = rng.choice(WORDS[lang])
    elif roll < 0.45:
        piece = rng.choice(WORDS[rng.choice(LANGS)])
    elif roll < 0.60:
        piece = rng.choice(GENERAL)
    elif roll < 0.75:
        piece = ''.join(rng.choice(ASSIGNED_NOT_PRIVATE) for _ in range(rng.randint(1, 4)))
    elif roll < 0.85:
        piece = ''.join(random_punctuation(rng) for _ in range(rng.randint(1, 3)))
    elif roll < 0.92:
        piece = ''.join(chr(rng.randint(0x4e00, 0x9fff)) for _ in range(rng.randint(1, 4)))
    else:
        piece = ''.join(rng.choice(string.ascii_letters + string.digits)
                        for _ in range(rng.randint(1, 6)))
    if rng.random() < 0.15:
        piece = rng.choice([str.upper, str.title, str.lower])(piece)
    if rng.random() < 0.15:
        piece = unicodedata.normalize(rng.choice(['NFD', 'NFKD', 'NFC']), piece)
    if rng.random() < 0.08:
        where = rng.randint(0, len(piece))
        piece = piece[:where] + rng.choice(COMBINING) + piece[where:]
    return piece


def random_separator(rng):
    roll = rng.random()
    if roll < 0.5:
        return ' '
    if roll < 0.62:
        return ''.join(rng.choice(WHITESPACE) for _ in range(rng.randint(1, 3)))
    if roll < 0.72:
        return ''
    if roll < 0.90:
        return random_punctuation(rng)
    if roll < 0.95:
        return rng.choice(NOT_WHITESPACE)
    return rng.choice(COMBINING)


def random_input(rng, lang):
    """One input as UTF-8 bytes (occasionally ill-formed)."""
    parts = []
    broken = rng.random() < 0.03
    for i in range(rng.randint(0, 10)):
        if i > 0:
            parts.append(random_separator(rng).encode('utf-8'))
        parts.append(random_piece(rng, lang).encode('utf-8'))
        if broken and rng.random() < 0.3:
            parts.append(rng.choice(INVALID_UTF8))
    if broken and rng.random() < 0.5:
        parts.append(rng.choice(INVALID_UTF8))
    return b''.join(parts)

# ---------------------------------------------------------------------------------------------
# Checks
# ---------------------------------------------------------------------------------------------

WORD_RE = re.compile(r'\w')


def hex_or_dash(data):
    return data.hex() if data else '-'


def run_driver(driver, requests):
    result = subprocess.run([driver], input=''.join(requests).encode('ascii'),
                            stdout=subprocess.PIPE, check=True)
    return result.stdout.decode('ascii').split('\n')[:-1]


def check_character_classes(driver):
    lines = run_driver(driver, ['C 0 10FFFF\n'])
    got = dict(zip(ALL_CODE_POINTS, lines))
    passed = failed = 0
    for c in ASSIGNED_14:
        ch = chr(c)
        flags = ''.join('1' if x else '0' for x in (
            ch.isspace(), WORD_RE.match(ch) is not None, unicodedata.category(ch)[0] == 'P'))
        expected = flags + ' ' + hex_or_dash(ch.lower().encode('utf-8'))
        if got.get(c) == expected:
            passed += 1
        else:
            failed += 1
            if failed <= 20:
                print('  U+%04X %s: python %r, plumb %r' % (c, unicodedata.name(ch, '?'),
                                                          expected, got.get(c)))
    print('character classes: %d passed, %d failed' % (passed, failed))
    return failed == 0


def check_tokens(driver, seed, count):
    rng = random.Random(seed)
    cases = []
    for lang in LANGS:
        for _ in range(count):
            cases.append((lang, random_input(rng, lang)))
    lines = run_driver(driver, ['N %s %s\n' % (lang, hex_or_dash(data)) for lang, data in cases])
    if len(lines) != len(cases):
        print('driver answered %d of %d requests' % (len(lines), len(cases)))
        return False
    passed = failed = 0
    per_lang = {lang: [0, 0] for lang in LANGS}
    for (lang, data), line in zip(cases, lines):
        expected = mlqa_tokens(data.decode('utf-8', errors='replace'), lang)
        got = [bytes.fromhex(t).decode('utf-8') if t != '-' else '' for t in line.split(' ')
               if t != '']
        if got == expected:
            passed += 1
            per_lang[lang][0] += 1
        else:
            failed += 1
            per_lang[lang][1] += 1
            if failed <= 20:
                print('  %s %r:\n    python %r\n    plumb  %r' % (lang, data, expected, got))
    for lang in LANGS:
        print('  %s: %d passed, %d failed' % (lang, per_lang[lang][0], per_lang[lang][1]))
    print('tokens: %d passed, %d failed' % (passed, failed))
    return failed == 0


def main():
    parser = argparse.ArgumentParser(description=__doc__.split('\n')[0])
    parser.add_argument('--driver', required=True, help='path to mlqa_normalize_driver')
    parser.add_argument('--seed', type=int, default=None, help='replay this seed')
    parser.add_argument('--count', type=int, default=5000, help='strings per language')
    args = parser.parse_args()
    seed = args.seed if args.seed is not None else int.from_bytes(os.urandom(4), 'big')
    print('seed: %d (replay with --seed %d)' % (seed, seed))
    print('python %s, unicodedata %s' % (sys.version.split()[0], unicodedata.unidata_version))
    ok = check_character_classes(args.driver)
    ok = check_tokens(args.driver, seed, args.count) and ok
    return 0 if ok else 1


if __name__ == '__main__':
    sys.exit(main())
