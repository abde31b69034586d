#ifndef PLUMB_RUNNER_PIPELINE_EXCERPT_H_
#define PLUMB_RUNNER_PIPELINE_EXCERPT_H_

/// Bounded, redacted excerpts of untrusted pipeline output, for the error details of a case
/// (journal, reports). The adapters use them so that neither a huge output nor a pipeline's
/// secret reaches a case record. Cuts fall on UTF-8 boundaries, so an excerpt of valid UTF-8 is
/// valid UTF-8, and redaction looks past the cut: not even a fragment of a secret that straddles
/// it survives.

#include <cstddef>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

/// Returns `text` with every occurrence of each non-empty secret replaced by "***": the secret's
/// own bytes, and every way a JSON encoder can write it inside a string, each code point as
/// itself or escaped (the two-character escapes such as \" \\ \/ \t \n, \u followed by
/// four hex digits in either case, surrogate pairs beyond the BMP), in any mix. Text that is
/// decoded JSON is thus covered as well as the JSON text itself. Occurrences that overlap (two
/// of one secret, or of two secrets) become a single "***", so no fragment of either is left;
/// occurrences that merely touch each get their own "***". A secret that is not UTF-8 is
/// matched as bytes only.
std::string RedactSecrets(std::string text, const std::vector<std::string>& secrets);

/// Redacts every string in a parsed JSON value, object keys included (RedactSecrets on the
/// decoded text): a secret the reply carried escaped is caught once decoded.
void RedactJsonStrings(nlohmann::json* value, const std::vector<std::string>& secrets);

/// The longest prefix of `text` of at most `max_bytes` bytes that does not end inside a UTF-8
/// sequence. Bytes that are not UTF-8 are cut at `max_bytes` exactly.
std::string_view Utf8Prefix(std::string_view text, size_t max_bytes);

/// The longest suffix of `text` of at most `max_bytes` bytes that does not start inside a UTF-8
/// sequence.
std::string_view Utf8Suffix(std::string_view text, size_t max_bytes);

/// At most `max_bytes` from the start of `text`, redacted. A secret that begins inside the
/// excerpt and runs past its end is still found (it is matched against the whole `text`).
std::string HeadExcerpt(std::string_view text, size_t max_bytes,
                        const std::vector<std::string>& secrets);

/// At most `max_bytes` from the end of `text`, redacted, with the same care at the cut.
std::string TailExcerpt(std::string_view text, size_t max_bytes,
                        const std::vector<std::string>& secrets);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_EXCERPT_H_
