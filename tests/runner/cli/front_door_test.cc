// plumb's command line as a new user meets it (issue 20, "the front door"): parser errors that
// start with "plumb:" and suggest the nearest command or option, ranges in plain words, "-" as
// standard output for report files, `plumb help CMD`, metavariables, an example and the exit
// codes in every command's help, -o/-j, --color and TERM=dumb, and completion scripts and a man
// page generated from the same option tables. Every check runs the real plumb executable.

#include <catch2/catch.hpp>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using plumb_test::MakeTempDir;
using plumb_test::Plumb;
using plumb_test::ReadFile;
using plumb_test::Result;
namespace fs = std::filesystem;

namespace {

const std::string kRuns = PLUMB_SOURCE_DIR "/fixtures/runs/";

std::string ScoredRun(const std::string& dir) {
  const Result r =
      Plumb({"score", kRuns + "suite.yaml", kRuns + "base.jsonl", "-o", dir + "/run"}, dir);
  REQUIRE(fs::exists(dir + "/run/run.json"));
  (void)r;
  return dir + "/run";
}

bool HasEscape(const std::string& text) { return text.find('\033') != std::string::npos; }

}  // namespace

TEST_CASE("A misspelt command or option names the nearest one") {
  const std::string dir = MakeTempDir();
  Result r = Plumb({"rn"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err ==
        "plumb: 'rn' is not a plumb command; did you mean 'run'? (plumb --help "
        "describes them)\n");

  r = Plumb({"--verison"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb: unknown option '--verison'; did you mean '--version'?\n");

  r = Plumb({"run", "--jbos", "2", "suite.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb run: unknown option '--jbos'; did you mean '--jobs'?\n");

  r = Plumb({"drift", "a", "b", "--gaet", "correct"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb drift: unknown option '--gaet'; did you mean '--gate'?\n");

  r = Plumb({}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.rfind("plumb: a command is required, one of: run, score, ", 0) == 0);
}

TEST_CASE("Ranges, missing and extra arguments are said in plain words") {
  const std::string dir = MakeTempDir();
  Result r = Plumb({"run", "--jobs", "0", "suite.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb run: --jobs must be at least 1 (got 0)\n");
  CHECK(r.err.size() < 100);  // not CLI11's 300-digit range

  r = Plumb({"run", "-j", "many", "suite.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb run: --jobs must be a whole number (got 'many')\n");

  r = Plumb({"run"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb run: SUITE is required; plumb help run shows the usage\n");

  r = Plumb({"run", "a.yaml", "b.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err ==
        "plumb run: unexpected argument 'b.yaml'; plumb help run shows what the "
        "command takes\n");

  r = Plumb({"--color", "sometimes", "check", "x.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err == "plumb check: --color must be auto, always or never (got 'sometimes')\n");
}

TEST_CASE(
    "plumb help CMD prints the command's help with metavariables, an example and exit codes") {
  const std::string dir = MakeTempDir();
  const Result help = Plumb({"help", "run"}, dir);
  CHECK(help.code == 0);
  const Result flag = Plumb({"run", "--help"}, dir);
  CHECK(flag.code == 0);
  CHECK(help.out == flag.out);
  for (const char* expected :
       {"Usage: plumb run [OPTIONS] SUITE", "-o,--out DIR", "-j,--jobs N", "--html FILE",
        "--baseline RUN_DIR", "--shard I/N", "--label KEY=VALUE", "Example:\n  plumb run ",
        "Exit codes:\n  0 ", "  130 "}) {
    INFO(expected);
    CHECK(help.out.find(expected) != std::string::npos);
  }
  CHECK(help.out.find("TEXT") == std::string::npos);
  CHECK(help.out.find("SUITE SUITE") == std::string::npos);

  for (const char* command : {"score", "check", "drift", "report", "merge"}) {
    INFO(command);
    const Result r = Plumb({"help", command}, dir);
    CHECK(r.code == 0);
    CHECK(r.out.find(std::string("Example:\n  plumb ") + command) != std::string::npos);
    CHECK(r.out.find("Exit codes:") != std::string::npos);
  }
  const Result unknown = Plumb({"help", "rnu"}, dir);
  CHECK(unknown.code == 2);
  CHECK(unknown.err.find("did you mean 'run'?") != std::string::npos);
}

TEST_CASE("A report file named - goes to standard output, and the summary to stderr") {
  const std::string dir = MakeTempDir();
  const std::string run = ScoredRun(dir);
  const Result markdown = Plumb({"report", run, "--markdown", "-"}, dir);
  CHECK(markdown.out.rfind("### plumb: ", 0) == 0);
  CHECK(markdown.out.find("cases") != std::string::npos);
  CHECK(!fs::exists(dir + "/-"));
  CHECK(markdown.err.find("recorded run ") != std::string::npos);  // the summary moved here

  const Result junit = Plumb({"report", run, "--junit", "-"}, dir);
  CHECK(junit.out.rfind("<?xml", 0) == 0);

  const Result both = Plumb({"report", run, "--junit", "-", "--json"}, dir);
  CHECK(both.code == 2);
  CHECK(both.err.find("only one of --json, --html -, --junit - and --markdown - can write to "
                      "standard output") != std::string::npos);
}

TEST_CASE("A report into a folder that does not exist yet creates the folder") {
  const std::string dir = MakeTempDir();
  const std::string run = ScoredRun(dir);
  // (plumb runs in the test's working directory, so the path is absolute.)
  Plumb({"report", run, "--html", dir + "/new/deeper/report.html"}, dir);
  CHECK(fs::exists(dir + "/new/deeper/report.html"));
}

TEST_CASE(
    "colour: --color always and never override the terminal test, and TERM=dumb is honoured") {
  const std::string dir = MakeTempDir();
  const std::string run = ScoredRun(dir);
  // stdout is a file here, so auto means no colour; always forces it, also after the command.
  CHECK(!HasEscape(Plumb({"report", run}, dir).out));
  CHECK(HasEscape(Plumb({"--color", "always", "report", run}, dir).out));
  CHECK(HasEscape(Plumb({"report", run, "--color", "always"}, dir).out));
  CHECK(!HasEscape(Plumb({"report", run, "--color", "never"}, dir).out));
}

TEST_CASE("Completion scripts and the man page come from the option tables") {
  const std::string dir = MakeTempDir();
  const Result bash = Plumb({"completion", "bash"}, dir);
  REQUIRE(bash.code == 0);
  for (const char* expected : {"complete -o filenames -F _plumb plumb", "--baseline", "--jobs",
                               "run|score|", "compgen -d"}) {
    INFO(expected);
    CHECK(bash.out.find(expected) != std::string::npos);
  }
  plumb_test::WriteFile(dir + "/plumb.bash", bash.out);
  // bash parses the script (bash -n), and completes `plumb ru` to run and `plumb run --bas`
  // to --baseline when the function is called as readline would call it.
  const std::string script =
      "source plumb.bash; COMP_WORDS=(plumb ru); COMP_CWORD=1; _plumb; echo \"${COMPREPLY[*]}\"; "
      "COMP_WORDS=(plumb run --bas); COMP_CWORD=2; _plumb; echo \"${COMPREPLY[*]}\"";
  CHECK(std::system(("cd " + dir + " && bash -n plumb.bash").c_str()) == 0);
  CHECK(std::system(("cd " + dir + " && bash -c '" + script + "' > completed.txt").c_str()) == 0);
  CHECK(ReadFile(dir + "/completed.txt") == "run\n--baseline\n");

  const Result zsh = Plumb({"completion", "zsh"}, dir);
  CHECK(zsh.out.rfind("#compdef plumb\n", 0) == 0);
  CHECK(zsh.out.find("'--baseline[Compare with this run directory") != std::string::npos);

  const Result man = Plumb({"man-page"}, dir);
  CHECK(man.out.rfind(".TH PLUMB 1 ", 0) == 0);
  for (const char* expected :
       {".SH COMMANDS", ".SS \"plumb run [OPTIONS] SUITE\"",
        "\\fB\\-o\\fR, \\fB\\-\\-out\\fR \\fIDIR\\fR", ".SH EXIT STATUS", ".SH CAUTION"}) {
    INFO(expected);
    CHECK(man.out.find(expected) != std::string::npos);
  }
  // groff reads it without a warning (-ww: all warnings).
  plumb_test::WriteFile(dir + "/plumb.1", man.out);
  CHECK(std::system(
            ("cd " + dir + " && groff -man -Tutf8 -ww -P-cbou plumb.1 > plumb.txt 2> warn.txt")
                .c_str()) == 0);
  CHECK(ReadFile(dir + "/warn.txt").empty());
  CHECK(ReadFile(dir + "/plumb.txt").find("plumb run [OPTIONS] SUITE") != std::string::npos);
}
