#ifndef PLUMB_METRICS_NUMBER_MATCH_H_
#define PLUMB_METRICS_NUMBER_MATCH_H_

/// The number_match metric of SPEC §6.2: the numbers written in a raw answer, and whether one of
/// them lies within a case's `number: {value, tolerance}`. Used by the scorer for cases with a
/// numeric gold. Pure functions, thread-safe.
///
/// What ExtractNumbers reads, left to right, as plain decimal values:
/// - Digits: ASCII and any other Unicode decimal digits (general category Nd, e.g. fullwidth
///   "１０", Arabic-Indic), a run of them is one integer part.
/// - Decimals: '.' between digits ("3.5"); a leading point when nothing alphanumeric precedes it
///   (".5" is 0.5). A '.' not followed by a digit is punctuation: "It takes 10." is 10.
/// - Thousands separators: an integer part of 1 to 3 digits followed by groups of exactly three
///   digits, all with the same separator, which is one of ',', ' ', U+00A0 NBSP, U+202F narrow
///   NBSP or U+2009 thin space: "1,200", "1 200 000", "1,200.50" (1200.5).
/// - Signs: '+', '-' or U+2212 MINUS SIGN glued to the number and not preceded by a letter or
///   digit: "-3", "(−4)", "x=-2". Units and currency glued on either side are ignored: "10min",
///   "€25", "25%" give 10, 25, 25. Digits after letters are read too ("A320" gives 320).
/// - English number words zero to twenty as whole words, any case ("Ten", "twelve"), and the
///   hyphenated twenty-one to twenty-nine; "often" or "tenth" contain none.
/// Ambiguities, resolved so:
/// - "1,5" and "3,25" are 1 and 5, 3 and 25: a comma is never a decimal mark, and a comma group
///   of other than three digits ends the number ("1,2345" is 1 and 2345).
/// - '.' is always a decimal point: "1.200" is 1.2 (continental thousands dots are not read),
///   and Indian grouping is not read either: "1,23,456" is 1 and 23456.
/// - "1 200,50" is 1200 and 50; a space-separated list of 3-digit numbers after a short one
///   ("rooms 10 101 102") is read as one grouped number (10101102).
/// - "10-12" (a hyphen after a digit) is the range 10 and 12, not 10 and -12; "UTC-5" is 5.
/// - "1.2.3" is 1.2 and 3; "1e5" is 1 and 5 (no exponents); "twenty one" (no hyphen) is 20, 1.
/// - A number too large for a double is skipped.

#include <string_view>
#include <vector>

namespace plumb::metrics {

/// The numbers in `text` (UTF-8; invalid bytes read as U+FFFD), in order of appearance.
std::vector<double> ExtractNumbers(std::string_view text);

/// True when some number of ExtractNumbers(answer) lies within `tolerance` of `value`,
/// inclusive: |x - value| <= tolerance + eps, where eps = 8 * DBL_EPSILON * max(1, |x|, |value|,
/// tolerance) absorbs decimal-to-binary rounding (0.4 is within 0.1 of 0.3). A negative
/// tolerance counts as 0; a NaN value or tolerance never matches.
bool NumberMatches(std::string_view answer, double value, double tolerance);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_NUMBER_MATCH_H_
