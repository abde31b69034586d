#ifndef PLUMB_RUNNER_SUITE_SUITE_H_
#define PLUMB_RUNNER_SUITE_SUITE_H_

/// The in-memory form of a suite file (SPEC §4) and its pipelines (§5), as the suite loader
/// produces it: every path resolved, every quote located, every `${VAR}` expanded. Later stages
/// (scheduler, scoring, reports) read a Suite and never the YAML.

#include <cstdint>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "metrics/normalize.h"
#include "metrics/offset_units.h"
#include "runner/suite/case_id_index.h"
#include "runner/suite/diagnostic.h"

namespace plumb {

/// One gold source span. After loading, `start`/`end` are always set: code-point offsets,
/// half-open, into the document's UTF-8 text, whether the suite gave offsets or a quote.
struct GoldSpan {
  std::string doc;                   // path relative to the corpus dir, "/" separators
  std::optional<std::string> quote;  // as written in the suite, when given
  int64_t start = 0;
  int64_t end = 0;
  std::string text;  // the document's text in [start, end) at load time
  SourcePos pos;     // where the span is written in the suite
  /// False only for a quote not found in its document that LoadOptions::keep_unlocated_quotes
  /// let through (`plumb check --since` reports it as stale); start = end = 0, text empty.
  bool located = true;
};

struct NumberGold {
  double value = 0;
  double tolerance = 0;
  std::string unit;  // informational; not used for matching
};

struct Case {
  std::string id;
  std::string question;
  std::vector<std::string> answers;   // empty: the pipeline must abstain
  std::vector<std::string> patterns;  // RE2 syntax, validated by the loader
  std::optional<NumberGold> number;
  std::vector<GoldSpan> sources;
  std::vector<std::string> tags;
  /// Passed to the pipeline untouched. Null when the case gives none (most do): the request
  /// then carries {} (CaseInput), and loading a large suite allocates nothing for it.
  nlohmann::json input;
  SourcePos pos;  // where the case starts (a turn's: where the turn starts)
  /// A turn of a multi-turn session (a suite case with `turns:`, issue 22): the session's id
  /// and the turn's 1-based number; `id` is then "SESSION#TURN". Empty and 0 for a plain case.
  /// A session's turns are consecutive in Suite::cases, in turn order.
  std::string session;
  int turn = 0;
  /// `after:` (issue 23): the index in Suite::updates of the corpus update this case's gold
  /// holds after, or -1 for a case asked of the corpus as the suite names it. Its sources are
  /// located in the corpus as it stands after that update.
  int after = -1;
  /// `stale_answers:`: what the corpus said before the update; an answer that still says it is
  /// stale. Only on a case with `after`.
  std::vector<std::string> stale_answers;
  /// Hash of everything that defines the case's gold (question, answers, patterns, number,
  /// sources with their text, tags). Drift pairs cases whose gold_hash is equal.
  std::string gold_hash;
};

/// The case's `input` as the request carries it: the case's object, or {} when it gave none.
const nlohmann::json& CaseInput(const Case& c);

/// The id of a session's turn: "SESSION#TURN" (turn 1-based). '#' is not allowed in a case id,
/// so a turn id never collides with a case id and names its session unambiguously.
std::string TurnId(const std::string& session, int turn);

/// Splits a turn id "SESSION#TURN" into its session and turn; false (outputs untouched) for an
/// id that is not a turn's. Reports and drift read sessions from ids with it, so a run
/// directory needs no other record of them.
bool SplitTurnId(const std::string& id, std::string* session, int* turn);

/// A string from the pipeline config after `${VAR}` expansion, with its redacted form: the
/// template with every expansion replaced by "***". Output files only ever see `redacted`.
struct ExpandedString {
  std::string value;
  std::string redacted;
};

/// One node of an HTTP pipeline's `request:` block as the loader checked it: the JSON to send,
/// with the case's values inserted where the block says `!case FIELD` (a whole value, with its
/// JSON type) or `!text [...]` (a string joined from literal pieces and case fields). The HTTP
/// adapter renders it per case and repeat (runner/pipeline/request_template.h).
/// The fields of a grader's request (see GraderConfig) that `!case` may also name, in the
/// request block of a pipeline used as a grader: grade, rubric, gold, answer, gold_sources and
/// cited (id, question and repeat are the graded case's, as for any request).
bool IsGraderRequestField(const std::string& field);

struct RequestPart {
  enum class Kind { kValue, kCaseField, kText, kObject, kArray };
  Kind kind = Kind::kValue;
  nlohmann::json value;            // kValue: the literal, as written (`!env` already expanded)
  std::string field;               // kCaseField: id, question, repeat, input or input.KEY[.KEY]
  std::vector<RequestPart> items;  // kText: pieces (kValue strings, kCaseField); kArray; kObject
  std::vector<std::string> keys;   // kObject: member names, parallel to `items`
};

/// A pipeline's `reply:` block: where each value the runner scores lives in the reply. Every
/// string is an RFC 6901 JSON Pointer into the reply, empty when the block does not name it
/// (the reply protocol's own place is used then). runner/pipeline/reply_mapping.h compiles it.
struct ReplyFields {
  std::string answer;
  std::string abstained;     // a boolean; true is an abstention
  std::string refusal;       // a string; present and non-empty is an abstention
  std::string abstain_when;  // RE2 pattern (not a pointer): an answer it matches abstains
  std::string input_tokens;
  std::string output_tokens;
  std::string latency_ms;  // the service's own timing, recorded beside plumb's
  /// A list of sources: `at` points at it; doc, start, end and quote name each item's members
  /// (a name, or a pointer from '/' into the item). Empty names keep the protocol's names.
  struct SourceList {
    std::string at;
    std::string doc, start, end, quote;
  };
  std::optional<SourceList> citations;
  std::optional<SourceList> retrieved;
  bool given = false;  // the pipeline has a `reply:` block
};

/// A pipeline's `refresh:` (issue 23): how plumb tells it that the corpus changed, once per
/// corpus update, before the cases asked after it. Either an argv command (run without a
/// shell, in the pipeline's cwd and env; it must exit 0) or an HTTP request (it must answer
/// 2xx). `{corpus}` in an argument, the url or a string of the request becomes the updated
/// corpus's directory, `{update}` the update's id.
struct RefreshConfig {
  std::vector<ExpandedString> command;
  std::optional<ExpandedString> url;
  std::string method = "POST";
  std::map<std::string, ExpandedString> headers;
  std::optional<RequestPart> request;  // absent: {"corpus": DIR, "update": ID}
};

enum class PipelineKind { kSubprocess, kHttp };
/// `stream:` of an HTTP pipeline (issue 21): the reply arrives as server-sent events (`sse`) or as
/// one JSON object per line (`lines`), read as they arrive; kNone: one body.
enum class StreamFormat { kNone, kSse, kLines };

/// `price:` (issue 21): what a pipeline's tokens cost, `input` and `output` per `per` tokens.
struct TokenPrice {
  double input = 0;
  double output = 0;
  double per = 1e6;      // `per: 1M`
  std::string currency;  // as written ("EUR"); may be empty
};
enum class SubprocessMode { kPersistent, kPerCase };

struct PipelineConfig {
  std::string name;
  PipelineKind kind = PipelineKind::kSubprocess;
  SourcePos pos;

  // Subprocess adapter (§5).
  std::vector<ExpandedString> command;  // argv; executed without a shell
  SubprocessMode mode = SubprocessMode::kPersistent;
  std::optional<ExpandedString> cwd;
  std::map<std::string, ExpandedString> env;  // added to the inherited environment
  /// `ready: line` (persistent mode): each worker writes {"ready": true, ...} before it reads a
  /// request, and plumb waits for that line before it sends one (issue 21).
  bool ready_line = false;

  // HTTP adapter (§5); filled by the loader, driven by the HTTP adapter.
  std::optional<ExpandedString> url;
  std::string method = "POST";
  std::map<std::string, ExpandedString> headers;
  /// `request:`; absent: the request of §5, {"id", "question", "input", "repeat"}. A GET sends
  /// the block's top-level members as query parameters instead of a body.
  std::optional<RequestPart> request;
  /// `url: !text [...]`: the url's pieces (kValue text with `${VAR}` expanded, kCaseField
  /// values percent-encoded per request); empty when the url is one plain string (`url`).
  std::vector<RequestPart> url_pieces;
  int retries = 3;
  double rate_per_second = 0;  // 0: unlimited
  bool insecure = false;       // `insecure: true`: skip TLS certificate verification
  /// `ready_url:`: polled with GET until it answers 2xx before the first request is sent.
  std::optional<ExpandedString> ready_url;
  /// `stream:`: read the reply as events; the answer is joined from reply.answer in each event.
  StreamFormat stream = StreamFormat::kNone;

  // Both adapters.
  std::optional<RefreshConfig> refresh;         // `refresh:`
  int64_t refresh_timeout_ms = 30 * 60 * 1000;  // `refresh_timeout:`
  ReplyFields reply;  // `reply:`; where the values plumb scores are in the reply
  int64_t timeout_ms = 30000;
  /// How long a worker (ready line) or the service (ready_url) may take to become ready.
  int64_t startup_timeout_ms = 10 * 60 * 1000;
  int jobs = 0;  // 0: take --jobs (or 1)
  int64_t max_response_bytes = 16 * 1024 * 1024;
  /// Unit of the offsets in the reply's citations and retrieved items (`offsets:`); the runner
  /// converts them to code points before scoring.
  metrics::OffsetUnit offsets = metrics::OffsetUnit::kCodePoints;
  /// `price:`; absent: the run reports tokens but no cost.
  std::optional<TokenPrice> price;

  /// Every secret value that `${VAR}` expansion produced, for redaction of excerpts.
  std::vector<std::string> secrets;
  /// The config as written, with expansions redacted; recorded in run.json.
  nlohmann::json redacted_config;
};

/// The suite's `floors:` and `ceilings:` together: whether a limit is a floor or a ceiling
/// follows from its metric id (error_rate and latency_*_ms are ceilings; see IsCeilingMetric).
/// How a grader's reply maps to the grade, a number in [0, 1].
enum class GradeScale {
  kPassFail,  // "verdict": pass/fail, or a score of 0 or 1
  kUnit,      // a score in [0, 1]
  kOneToFive  // a score in [1, 5], mapped to (score - 1) / 4
};

/// One entry of `graders:`: a pipeline of the suite that grades each answer; the grade is the
/// per-case metric "grade.NAME".
struct GraderConfig {
  std::string name;
  std::string pipeline;  // a name from pipelines:
  std::string rubric;    // the rubric file's text ("" without `rubric:`)
  std::string rubric_path;
  GradeScale scale = GradeScale::kPassFail;
  int repeat = 1;                 // calls per answer; the grade is their mean
  bool same_as_pipeline = false;  // `same_as_pipeline: allowed`
  /// RE2 pattern whose first group, found in a reply that is not a JSON grade, is the verdict
  /// or the score.
  std::string verdict_pattern;
  /// The human labels file (`labels:`, resolved against the suite's directory; "" when not
  /// named) that `plumb calibrate` reads when no --labels is given.
  std::string labels_path;
  /// The calibration a grade needs before it may gate (thresholds, case_pass, correct_from,
  /// drift --gate): at least this many labelled answers, and kappa's lower 95% bound at least
  /// min_kappa.
  int64_t min_labels = 50;
  double min_kappa = 0.6;
  SourcePos pos;
};

/// One entry of `updates:` (issue 23): files that replace or add corpus documents (same
/// relative paths under `docs_dir`) and documents the update removes. Updates apply in file
/// order, each on top of the ones before it.
struct CorpusUpdate {
  std::string id;
  /// The update's documents directory, resolved against the suite file's directory and inside
  /// it; empty when the update only removes documents.
  std::string docs_dir;
  std::vector<std::string> docs;    // doc ids of the files under docs_dir, sorted
  std::vector<std::string> remove;  // doc ids removed, as written
  SourcePos pos;
};

struct Thresholds {
  std::map<std::string, double> metrics;                      // metric id -> limit
  std::map<std::string, std::map<std::string, double>> tags;  // tag -> metric id -> limit
};

struct Suite {
  std::string path;  // the suite file as given on the command line
  int format_version = 1;
  std::string name;
  std::optional<std::string> corpus_dir;  // absolute or relative to the working directory
  metrics::NormalizationProfile normalize = metrics::NormalizationProfile::kSquad;
  std::string lang = "en";
  std::vector<int> retrieval_k = {1, 5};
  std::map<std::string, double> case_pass = {{"correct", 1.0}};
  /// The per-case metrics whose max (over those a case defines) is `correct` (`correct_from:`).
  std::vector<std::string> correct_from = {"exact_match", "pattern_match", "number_match"};
  double min_overlap = 0;        // citation overlap fraction (§6.3)
  double max_error_rate = 0.05;  // exit 3 above this fraction of errored cases (§8)
  Thresholds thresholds;
  std::vector<GraderConfig> graders;      // in file order
  std::vector<PipelineConfig> pipelines;  // in file order; the first is the default
  std::vector<CorpusUpdate> updates;      // `updates:`, in file order (the order they apply)
  std::vector<Case> cases;                // in file order, includes concatenated in place
  /// Every case's id to its index in `cases`; the loader builds it (a suite with a repeated id
  /// does not load).
  CaseIdIndex case_ids;
  /// Hash of the suite's content (all files read, in order); recorded in run.json.
  std::string suite_hash;
  /// Every file the suite read (the suite, includes, --pipelines file), for hashing and errors.
  std::vector<std::string> files;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_SUITE_H_
