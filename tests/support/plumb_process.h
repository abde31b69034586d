// Test support: runs the real plumb executable as a user would, capturing its output and exit
// code, plus small file helpers. Header-only; included by the end-to-end tests.
#ifndef PLUMB_TESTS_SUPPORT_PLUMB_PROCESS_H_
#define PLUMB_TESTS_SUPPORT_PLUMB_PROCESS_H_

#include <fcntl.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

extern char** environ;

namespace plumb_test {

inline const std::string kPlumb = PLUMB_BINARY_DIR "/plumb";
inline const std::string kFixtures = PLUMB_BINARY_DIR "/fixtures/";

inline std::string MakeTempDir() {
  char pattern[] = "/tmp/plumb_run_test_XXXXXX";
  REQUIRE(mkdtemp(pattern) != nullptr);
  return pattern;
}

inline void WriteFile(const std::string& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
}

inline std::string ReadFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

inline std::vector<nlohmann::json> ReadJournal(const std::string& path) {
  std::vector<nlohmann::json> records;
  std::ifstream in(path);
  std::string line;
  while (std::getline(in, line)) records.push_back(nlohmann::json::parse(line));
  return records;
}

struct Process {
  pid_t pid = -1;
  std::string out_path;
  std::string err_path;
};

/// Starts plumb with stdout and stderr in files of `dir`; with `blocked`, plumb starts with
/// those signals blocked (a signal sent then waits until plumb unblocks it).
inline Process Start(const std::vector<std::string>& args, const std::string& dir,
                     const sigset_t* blocked = nullptr) {
  Process p;
  p.out_path = dir + "/stdout.txt";
  p.err_path = dir + "/stderr.txt";
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, 0, "/dev/null", O_RDONLY, 0);
  posix_spawn_file_actions_addopen(&actions, 1, p.out_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC,
                                   0644);
  posix_spawn_file_actions_addopen(&actions, 2, p.err_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC,
                                   0644);
  std::vector<char*> argv;
  argv.push_back(const_cast<char*>(kPlumb.c_str()));
  for (const std::string& a : args) argv.push_back(const_cast<char*>(a.c_str()));
  argv.push_back(nullptr);
  posix_spawnattr_t attributes;
  posix_spawnattr_init(&attributes);
  if (blocked != nullptr) {
    posix_spawnattr_setsigmask(&attributes, blocked);
    posix_spawnattr_setflags(&attributes, POSIX_SPAWN_SETSIGMASK);
  }
  REQUIRE(posix_spawn(&p.pid, kPlumb.c_str(), &actions, &attributes, argv.data(), environ) == 0);
  posix_spawnattr_destroy(&attributes);
  posix_spawn_file_actions_destroy(&actions);
  return p;
}

inline int Wait(const Process& p) {
  int status = 0;
  REQUIRE(waitpid(p.pid, &status, 0) == p.pid);
  REQUIRE(WIFEXITED(status));
  return WEXITSTATUS(status);
}

struct Result {
  int code = -1;
  std::string out;
  std::string err;
};

inline Result Plumb(const std::vector<std::string>& args, const std::string& dir) {
  Process p = Start(args, dir);
  Result r;
  r.code = Wait(p);
  r.out = ReadFile(p.out_path);
  r.err = ReadFile(p.err_path);
  return r;
}

}  // namespace plumb_test

#endif  // PLUMB_TESTS_SUPPORT_PLUMB_PROCESS_H_
