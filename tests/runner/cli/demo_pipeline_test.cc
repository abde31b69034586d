// The demo pipeline (fixtures/demo-pipeline) run as a real process over its three protocols:
// JSON lines kept alive (persistent), one line then EOF (per-case), and HTTP on loopback. The
// corpora are written here at test time, so every offset and score below is worked out by hand
// from the text in this file.

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <poll.h>
#include <signal.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace {

namespace fs = std::filesystem;
using nlohmann::json;

const char* const kBinary = PLUMB_BINARY_DIR "/fixtures/demo-pipeline";

// A directory under the system temp dir, removed with everything in it when the test ends.
class TempCorpus {
 public:
  TempCorpus() {
    std::string pattern = (fs::temp_directory_path() / "demo-pipeline-test-XXXXXX").string();
    REQUIRE(mkdtemp(pattern.data()) != nullptr);
    dir_ = pattern;
  }
  ~TempCorpus() {
    std::error_code ec;
    fs::remove_all(dir_, ec);
  }
  TempCorpus(const TempCorpus&) = delete;
  TempCorpus& operator=(const TempCorpus&) = delete;

  void Write(const std::string& id, const std::string& text) const {
    const fs::path path = dir_ / id;
    fs::create_directories(path.parent_path());
    std::ofstream(path, std::ios::binary) << text;
  }
  std::string dir() const { return dir_.string(); }

 private:
  fs::path dir_;
};

// The demo pipeline as a child process with its stdin, stdout and stderr on pipes.
class PipelineProcess {
 public:
  explicit PipelineProcess(const std::vector<std::string>& args) {
    int in[2], out[2], err[2];
    REQUIRE(pipe(in) == 0);
    REQUIRE(pipe(out) == 0);
    REQUIRE(pipe(err) == 0);
    pid_ = fork();
    REQUIRE(pid_ >= 0);
    if (pid_ == 0) {
      dup2(in[0], 0);
      dup2(out[1], 1);
      dup2(err[1], 2);
      for (int fd : {in[0], in[1], out[0], out[1], err[0], err[1]}) close(fd);
      std::vector<char*> argv;
      argv.push_back(const_cast<char*>(kBinary));
      for (const std::string& arg : args) argv.push_back(const_cast<char*>(arg.c_str()));
      argv.push_back(nullptr);
      execv(kBinary, argv.data());
      _exit(127);
    }
    close(in[0]);
    close(out[1]);
    close(err[1]);
    stdin_ = in[1];
    stdout_ = out[0];
    stderr_ = err[0];
  }
  ~PipelineProcess() {
    CloseStdin();
    if (pid_ > 0 && !reaped_) {
      kill(pid_, SIGKILL);
      waitpid(pid_, nullptr, 0);
    }
    close(stdout_);
    close(stderr_);
  }
  PipelineProcess(const PipelineProcess&) = delete;
  PipelineProcess& operator=(const PipelineProcess&) = delete;

  void WriteLine(const std::string& line) {
    const std::string data = line + "\n";
    REQUIRE(write(stdin_, data.data(), data.size()) == static_cast<ssize_t>(data.size()));
  }
  void CloseStdin() {
    if (stdin_ >= 0) close(stdin_);
    stdin_ = -1;
  }
  // One line from the child's stdout or stderr; "" at EOF. The 20 s bound only keeps a broken
  // build from hanging the suite; it is not a speed check.
  std::string ReadLine() { return ReadLineFrom(stdout_); }
  std::string ReadStderrLine() { return ReadLineFrom(stderr_); }
  std::string ReadAll() {
    std::string all;
    for (std::string line = ReadLine(); !line.empty(); line = ReadLine()) all += line + "\n";
    return all;
  }
  // Exit status, or -1 when the child did not exit normally.
  int Wait() {
    int status = 0;
    REQUIRE(waitpid(pid_, &status, 0) == pid_);
    reaped_ = true;
    return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  }
  void Signal(int signal_number) { kill(pid_, signal_number); }

 private:
  static std::string ReadLineFrom(int fd) {
    std::string line;
    char c = 0;
    while (true) {
      pollfd ready{fd, POLLIN, 0};
      if (poll(&ready, 1, 20000) != 1) FAIL("no output from demo-pipeline within 20 s");
      if (read(fd, &c, 1) != 1) return line;
      if (c == '\n') return line;
      line.push_back(c);
    }
  }

  pid_t pid_ = -1;
  bool reaped_ = false;
  int stdin_ = -1;
  int stdout_ = -1;
  int stderr_ = -1;
};

json Request(const std::string& id, const std::string& question, int repeat = 0) {
  return {{"id", id}, {"question", question}, {"input", json::object()}, {"repeat", repeat}};
}

// Sends one request over a fresh pipeline process in per-case mode and returns the response.
json AskOnce(const std::vector<std::string>& args, const json& request) {
  PipelineProcess process(args);
  process.WriteLine(request.dump());
  process.CloseStdin();
  const std::string output = process.ReadAll();
  REQUIRE(process.Wait() == 0);
  REQUIRE(std::count(output.begin(), output.end(), '\n') == 1);
  return json::parse(output);
}

// The handbook corpus. Offsets are counted by hand in code points; the comments show the
// counts.
//
// boarding.md
//   "# Boarding"                                       [0, 10), '\n' at 10, blank line at 11
//   "Boarding closes 10 minutes before departure."     [12, 56)  8+1+6+1+2+1+7+1+6+1+10 = 44
//   " Vehicles must queue in lane 3."                  [56, 87)  1+8+1+4+1+5+1+2+1+4+1+2 = 31
//   chunk 1 = heading + paragraph                      [0, 87)
//   "## Fares"                                         [89, 97), blank line at 98
//   "An adult single costs 12 euros."                  [99, 130) 2+1+5+1+6+1+5+1+2+1+6 = 31
//   " Children under 5 travel free."                   [130, 160)
//   chunk 2                                            [89, 160)
// fr/securite.md: "é" and "à" are two bytes each in UTF-8, one code point each.
//   "# Sécurité à bord"                                [0, 17) = 20 bytes, blank line at 18
//   "Les gilets de sauvetage sont sous les sièges."    [19, 64)  3+1+6+1+2+1+9+1+4+1+4+1+3+1+7
//                                                      = 45 (bytes 22 to 68)
//   " Le départ a lieu à 7 h 30."                      [64, 91)
// ja/anzen.md: every character below is 3 bytes in UTF-8, one code point.
//   "# 安全"                                            [0, 4), blank line at 5
//   "救命胴衣は座席の下にあります。"                    [6, 21)  15 characters (bytes 10 to 55)
//   "出港は午前7時30分です。"                           [21, 34)
// timetable.md
//   "# Timetable"                                      [0, 11), blank line at 12
//   "The first departure is at 07:15."                 [13, 45)  3+1+5+1+9+1+2+1+2+1+6 = 32
//   "The last departure leaves at 22:30 from pier 2."  [46, 93)  a space at 45, then
//                                                      3+1+4+1+9+1+6+1+2+1+5+1+4+1+4+1+2 = 47
void WriteHandbook(const TempCorpus& corpus) {
  corpus.Write("boarding.md",
               "# Boarding\n\nBoarding closes 10 minutes before departure. Vehicles must queue in "
               "lane 3.\n\n## Fares\n\nAn adult single costs 12 euros. Children under 5 travel "
               "free.\n");
  corpus.Write("fr/securite.md",
               "# Sécurité à bord\n\nLes gilets de sauvetage sont sous les sièges. Le départ a "
               "lieu à 7 h 30.\n");
  corpus.Write("ja/anzen.md", "# 安全\n\n救命胴衣は座席の下にあります。出港は午前7時30分です。\n");
  corpus.Write("timetable.md",
               "# Timetable\n\nThe first departure is at 07:15. The last departure leaves at "
               "22:30 from pier 2.\n");
}

void CheckSpan(const json& item, const std::string& doc, int64_t start, int64_t end) {
  CHECK(item.at("doc") == doc);
  CHECK(item.at("start") == start);
  CHECK(item.at("end") == end);
}

}  // namespace

TEST_CASE("an answer in one sentence cites that sentence by code-point offsets") {
  TempCorpus corpus;
  WriteHandbook(corpus);
  const std::vector<std::string> args = {"--docs", corpus.dir(), "--top-k", "3"};

  SECTION("a French sentence after non-ASCII text (code points 19-64, bytes 22-68)") {
    const json response = AskOnce(args, Request("gilets", "Où sont les gilets de sauvetage ?"));
    CHECK(response.at("id") == "gilets");
    CHECK(response.at("abstained") == false);
    CHECK(response.at("answer") == "Les gilets de sauvetage sont sous les sièges.");
    REQUIRE(response.at("citations").size() == 1);
    CheckSpan(response["citations"][0], "fr/securite.md", 19, 64);
    REQUIRE(response.at("retrieved").size() >= 1);
    CheckSpan(response["retrieved"][0], "fr/securite.md", 0, 91);
  }

  SECTION("a Japanese question finds Japanese text through character bigrams") {
    const json response = AskOnce(args, Request("kyumei", "救命胴衣はどこですか？"));
    CHECK(response.at("answer") == "救命胴衣は座席の下にあります。");
    REQUIRE(response.at("citations").size() == 1);
    CheckSpan(response["citations"][0], "ja/anzen.md", 6, 21);
  }

  SECTION("a how-many question answers the number and its unit, citing the whole sentence") {
    // The documented rule: the first number of the best clause plus the next non-stopword word.
    const json response =
        AskOnce(args, Request("cutoff", "How many minutes before departure does boarding close?"));
    CHECK(response.at("answer") == "10 minutes");
    REQUIRE(response.at("citations").size() == 1);
    CheckSpan(response["citations"][0], "boarding.md", 12, 56);
    // "departure" is also in the timetable chunk, which ranks below the boarding chunk: the
    // boarding chunk matches boarding, minutes, before and departure; the timetable only the
    // last.
    const json& retrieved = response.at("retrieved");
    REQUIRE(retrieved.size() == 2);
    CheckSpan(retrieved[0], "boarding.md", 0, 87);
    CheckSpan(retrieved[1], "timetable.md", 0, 93);
    CHECK(retrieved[0].at("score").get<double>() > retrieved[1].at("score").get<double>());
  }

  SECTION("a what-time question stops the span before a stopword") {
    const json response = AskOnce(args, Request("last", "What time is the last departure?"));
    CHECK(response.at("answer") == "22:30");
    REQUIRE(response.at("citations").size() == 1);
    CheckSpan(response["citations"][0], "timetable.md", 46, 93);
  }
}

TEST_CASE("a question the corpus cannot answer abstains") {
  TempCorpus corpus;
  WriteHandbook(corpus);
  // No term of the question ("swimming", "pool", "upper", "deck") occurs in the corpus.
  const json response = AskOnce({"--docs", corpus.dir(), "--top-k", "3"},
                                Request("pool", "Is there a swimming pool on the upper deck?", 2));
  CHECK(response.at("id") == "pool");
  CHECK(response.at("repeat") == 2);
  CHECK(response.at("answer").is_null());
  CHECK(response.at("abstained") == true);
  CHECK(response.at("citations").empty());
  CHECK(response.at("retrieved").empty());
  CHECK(response.at("usage").at("output_tokens") == 0);
}

TEST_CASE("BM25 scores match a hand-worked two-document example") {
  // Okapi BM25 as in Robertson & Zaragoza 2009, "The Probabilistic Relevance Framework: BM25
  // and Beyond", k1 = 1.2 and b = 0.75 (common practice), idf = ln(1 + (N - n + 0.5)/(n + 0.5)).
  //
  // a.md "Boarding closes ten minutes before departure. Late boarding is refused."
  //      terms: boarding closes ten minutes before departure late boarding refused ("is" is a
  //      stopword): |a| = 9, tf(boarding) = 2, tf(departure) = 1.
  // b.md "Dogs travel free on every departure."
  //      terms: dogs travel free every departure ("on" is a stopword): |b| = 5.
  // N = 2 chunks, avgdl = (9 + 5) / 2 = 7.
  // Query "boarding departure":
  //   idf(boarding)  = ln(1 + (2 - 1 + 0.5) / (1 + 0.5)) = ln 2   = 0.693147...
  //   idf(departure) = ln(1 + (2 - 2 + 0.5) / (2 + 0.5)) = ln 1.2 = 0.182321...
  //   K(a) = 1.2 * (0.25 + 0.75 * 9 / 7) = 1.457142...
  //   K(b) = 1.2 * (0.25 + 0.75 * 5 / 7) = 0.942857...
  //   score(a) = ln 2 * 2 * 2.2 / (2 + K(a)) + ln 1.2 * 2.2 / (1 + K(a)) = 1.045428...
  //   score(b) = ln 1.2 * 2.2 / (1 + K(b))                                = 0.206452...
  TempCorpus corpus;
  corpus.Write("a.md", "Boarding closes ten minutes before departure. Late boarding is refused.\n");
  corpus.Write("b.md", "Dogs travel free on every departure.\n");
  const double k_a = 1.2 * (0.25 + 0.75 * 9.0 / 7.0);
  const double k_b = 1.2 * (0.25 + 0.75 * 5.0 / 7.0);
  const double score_a = std::log(2.0) * 2 * 2.2 / (2 + k_a) + std::log(1.2) * 2.2 / (1 + k_a);
  const double score_b = std::log(1.2) * 2.2 / (1 + k_b);
  CHECK(score_a == Approx(1.045428).margin(1e-6));  // the rounded figures above
  CHECK(score_b == Approx(0.206452).margin(1e-6));

  const json response = AskOnce({"--docs", corpus.dir(), "--top-k", "2", "--min-score", "0"},
                                Request("bm25", "boarding departure"));
  const json& retrieved = response.at("retrieved");
  REQUIRE(retrieved.size() == 2);
  CheckSpan(retrieved[0], "a.md", 0, 71);  // the whole one-paragraph file, newline trimmed
  CheckSpan(retrieved[1], "b.md", 0, 36);
  CHECK(std::abs(retrieved[0].at("score").get<double>() - score_a) < 1e-9);
  CHECK(std::abs(retrieved[1].at("score").get<double>() - score_b) < 1e-9);

  // Both query terms are in a's first sentence, which is the answer (not a quantity question).
  CHECK(response.at("answer") == "Boarding closes ten minutes before departure.");
  CheckSpan(response.at("citations").at(0), "a.md", 0, 45);

  // Usage counts tokens with stopwords kept: the question has 2; a.md has 10 (with "is"),
  // b.md has 6 (with "on"); the answer sentence has 6.
  CHECK(response.at("usage").at("input_tokens") == 2 + 10 + 6);
  CHECK(response.at("usage").at("output_tokens") == 6);

  SECTION("top-k 1 reads only the best chunk") {
    const json top1 = AskOnce({"--docs", corpus.dir(), "--top-k", "1", "--min-score", "0"},
                              Request("bm25", "boarding departure"));
    REQUIRE(top1.at("retrieved").size() == 1);
    CheckSpan(top1["retrieved"][0], "a.md", 0, 71);
    CHECK(top1.at("usage").at("input_tokens") == 2 + 10);
  }

  SECTION("preload scores every chunk and reads the whole corpus") {
    const json preload = AskOnce({"--docs", corpus.dir(), "--preload", "--min-score", "0"},
                                 Request("bm25", "boarding departure"));
    REQUIRE(preload.at("retrieved").size() == 2);
    CHECK(std::abs(preload["retrieved"][0].at("score").get<double>() - score_a) < 1e-9);
    CHECK(std::abs(preload["retrieved"][1].at("score").get<double>() - score_b) < 1e-9);
    CHECK(preload.at("usage").at("input_tokens") == 2 + 10 + 6);
  }

  SECTION("the default --min-score abstains on this weak match") {
    // Best sentence score = idf overlap (ln 2 + ln 1.2 = 0.875) + score(a) (1.045) = 1.92 < 4.
    const json weak =
        AskOnce({"--docs", corpus.dir(), "--top-k", "2"}, Request("bm25", "boarding departure"));
    CHECK(weak.at("abstained") == true);
    CHECK(weak.at("answer").is_null());
    CHECK(weak.at("retrieved").size() == 2);
  }
}

TEST_CASE("persistent mode answers line by line in order and survives a garbage line") {
  TempCorpus corpus;
  WriteHandbook(corpus);
  PipelineProcess process({"--docs", corpus.dir(), "--top-k", "3"});

  // Each response is read before the next request is written: the pipeline must answer (and
  // flush) without waiting for EOF.
  process.WriteLine(Request("one", "How much does an adult single cost?", 0).dump());
  const json first = json::parse(process.ReadLine());
  CHECK(first.at("id") == "one");
  CHECK(first.at("answer") == "12 euros");
  CheckSpan(first.at("citations").at(0), "boarding.md", 99, 130);

  process.WriteLine(Request("two", "Où sont les gilets de sauvetage ?", 1).dump());
  const json second = json::parse(process.ReadLine());
  CHECK(second.at("id") == "two");
  CHECK(second.at("repeat") == 1);

  process.WriteLine(Request("three", "Is there a swimming pool?", 0).dump());
  const json third = json::parse(process.ReadLine());
  CHECK(third.at("id") == "three");
  CHECK(third.at("abstained") == true);

  process.WriteLine("this is not json {");
  const json error = json::parse(process.ReadLine());
  CHECK(error.contains("error"));
  CHECK_FALSE(error.contains("answer"));

  process.WriteLine(Request("four", "What time is the last departure?", 0).dump());
  const json fourth = json::parse(process.ReadLine());
  CHECK(fourth.at("id") == "four");
  CHECK(fourth.at("answer") == "22:30");

  process.CloseStdin();
  CHECK(process.ReadLine().empty());  // nothing else on stdout
  CHECK(process.Wait() == 0);
}

TEST_CASE("HTTP mode on port 0 answers a POST on loopback and stops on SIGTERM") {
  TempCorpus corpus;
  WriteHandbook(corpus);
  PipelineProcess process({"--docs", corpus.dir(), "--top-k", "3", "--serve", "0"});

  const std::string marker = "listening on 127.0.0.1:";
  std::string line;
  do {
    line = process.ReadStderrLine();
    REQUIRE_FALSE(line.empty());
  } while (line.rfind(marker, 0) != 0);
  const int port = std::stoi(line.substr(marker.size()));
  REQUIRE(port > 0);

  // One HTTP/1.1 exchange over a plain socket; returns the whole reply.
  auto exchange = [port](const std::string& request) {
    const int fd = socket(AF_INET, SOCK_STREAM, 0);
    REQUIRE(fd >= 0);
    sockaddr_in address{};
    address.sin_family = AF_INET;
    address.sin_port = htons(static_cast<uint16_t>(port));
    address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    REQUIRE(connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof(address)) == 0);
    REQUIRE(send(fd, request.data(), request.size(), 0) == static_cast<ssize_t>(request.size()));
    std::string reply;
    char buffer[4096];
    while (true) {
      pollfd ready{fd, POLLIN, 0};
      REQUIRE(poll(&ready, 1, 20000) == 1);
      const ssize_t n = recv(fd, buffer, sizeof(buffer), 0);
      if (n <= 0) break;
      reply.append(buffer, n);
    }
    close(fd);
    return reply;
  };

  const std::string body = Request("http", "How much does an adult single cost?").dump();
  const std::string reply = exchange(
      "POST /answer HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\n"
      "Content-Length: " +
      std::to_string(body.size()) + "\r\nConnection: close\r\n\r\n" + body);
  CHECK(reply.rfind("HTTP/1.1 200", 0) == 0);
  CHECK(reply.find("Content-Type: application/json") != std::string::npos);
  const size_t body_start = reply.find("\r\n\r\n");
  REQUIRE(body_start != std::string::npos);
  const json response = json::parse(reply.substr(body_start + 4));
  CHECK(response.at("id") == "http");
  CHECK(response.at("answer") == "12 euros");
  CheckSpan(response.at("citations").at(0), "boarding.md", 99, 130);

  const std::string health =
      exchange("GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n");
  CHECK(health.rfind("HTTP/1.1 200", 0) == 0);

  const std::string bad = exchange(
      "POST /answer HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Length: 3\r\nConnection: "
      "close\r\n\r\nnot");
  CHECK(bad.rfind("HTTP/1.1 400", 0) == 0);

  process.Signal(SIGTERM);
  CHECK(process.Wait() == 0);
}

TEST_CASE("usage errors exit 2 and a missing corpus exits 1 with nothing on stdout") {
  TempCorpus corpus;
  WriteHandbook(corpus);
  {
    PipelineProcess process({"--docs", corpus.dir(), "--top-k", "3", "--preload"});
    CHECK(process.ReadAll().empty());
    CHECK(process.Wait() == 2);
  }
  {
    PipelineProcess process({"--docs", corpus.dir() + "/no-such-dir"});
    CHECK(process.ReadAll().empty());
    CHECK(process.Wait() == 1);
  }
}
