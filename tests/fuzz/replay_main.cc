// Runs a fuzz target without libFuzzer, so every build can exercise it (CTest runs it in CI):
// each seed input under the given paths, then a fixed number of mutations of each, drawn from
// a seeded generator so a run is repeatable. A broken contract aborts inside the target and
// the last input tried is in NAME_fuzz_replay.last-input (in the working directory) to replay.
//
//   NAME_fuzz_replay [--mutations N] [--seed S] PATH...
//
// With clang, the `fuzz` preset builds the same targets against libFuzzer for coverage-guided
// fuzzing (DEVELOPERS.md).
#include <dirent.h>
#include <sys/stat.h>

#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size);

namespace {

// Pieces the formats under test give meaning to: JSON and YAML syntax, escapes, numbers at the
// edges of a double, a byte-order mark, ill-formed and multi-byte UTF-8, suite keys.
const char* const kTokens[] = {"\"",
                               "\\",
                               "\\u",
                               "\\ud800",
                               "\\udc00",
                               "\\u0000",
                               "{",
                               "}",
                               "[",
                               "]",
                               ":",
                               ",",
                               "null",
                               "true",
                               "false",
                               "-0",
                               "1e999",
                               "1e-999",
                               "1.5e308",
                               "12345678901234567890",
                               "\xef\xbb\xbf",
                               "\xc3\xa9",
                               "\xe6\x97\xa5",
                               "\xf0\x9f\x9a\xa2",
                               "\xc3",
                               "\xff",
                               "\xed\xa0\x80",
                               "\n",
                               "\r\n",
                               "\t",
                               " ",
                               "- ",
                               ": ",
                               "&a ",
                               "*a",
                               "<<: *a",
                               "!!str ",
                               "!!binary ",
                               "|\n",
                               ">-\n",
                               "---\n",
                               "...\n",
                               "#",
                               "'",
                               "%YAML 1.2\n",
                               "id",
                               "question",
                               "answers",
                               "cases:",
                               "include:",
                               "sources:",
                               "pipelines:",
                               "floors:",
                               "ceilings:",
                               "${HOME}",
                               "!case question",
                               "!text [",
                               "answer",
                               "citations",
                               "retrieved",
                               "abstained",
                               "usage",
                               "doc",
                               "start",
                               "end",
                               "quote",
                               "repeat",
                               "latency_ms",
                               "plumb: 1\n",
                               "name: x\n",
                               "</script>",
                               "<script>",
                               "]]>",
                               "<!--",
                               "-->",
                               "&lt;",
                               "onerror=",
                               "javascript:",
                               "\x1f"};

struct Random {
  uint64_t state;
  uint64_t Next() {  // xorshift64*
    state ^= state >> 12;
    state ^= state << 25;
    state ^= state >> 27;
    return state * 0x2545F4914F6CDD1DULL;
  }
  size_t Below(size_t n) { return n == 0 ? 0 : static_cast<size_t>(Next() % n); }
};

std::string Mutate(const std::string& input, const std::vector<std::string>& seeds, Random* r) {
  std::string out = input;
  const size_t steps = 1 + r->Below(4);
  for (size_t step = 0; step < steps; ++step) {
    const size_t at = r->Below(out.size() + 1);
    switch (r->Below(6)) {
      case 0:  // flip a bit
        if (!out.empty()) out[std::min(at, out.size() - 1)] ^= static_cast<char>(1 << r->Below(8));
        break;
      case 1:  // insert a token
        out.insert(at, kTokens[r->Below(sizeof kTokens / sizeof *kTokens)]);
        break;
      case 2:  // delete a range
        out.erase(at, 1 + r->Below(16));
        break;
      case 3: {  // repeat a range
        const size_t length = std::min(out.size() - std::min(at, out.size()), 1 + r->Below(32));
        out.insert(at, out.substr(std::min(at, out.size()), length));
        break;
      }
      case 4: {  // splice in a piece of another seed
        const std::string& other = seeds[r->Below(seeds.size())];
        const size_t from = r->Below(other.size() + 1);
        out.insert(at, other.substr(from, 1 + r->Below(64)));
        break;
      }
      default:  // truncate
        out.resize(at);
        break;
    }
  }
  return out;
}

void Collect(const std::string& path, std::vector<std::string>* files) {
  struct stat info {};
  if (stat(path.c_str(), &info) != 0) {
    std::fprintf(stderr, "fuzz replay: cannot read %s\n", path.c_str());
    std::exit(2);
  }
  if (!S_ISDIR(info.st_mode)) {
    files->push_back(path);
    return;
  }
  DIR* dir = opendir(path.c_str());
  std::vector<std::string> names;
  while (dirent* entry = readdir(dir)) {
    if (entry->d_name[0] != '.') names.push_back(entry->d_name);
  }
  closedir(dir);
  std::sort(names.begin(), names.end());  // the same order on every machine
  for (const std::string& name : names) Collect(path + "/" + name, files);
}

std::string ReadAll(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

void Run(const std::string& input, const std::string& keep) {
  // Kept on disk before each call: if the target aborts, this is the input that did it.
  std::ofstream(keep, std::ios::binary | std::ios::trunc) << input;
  LLVMFuzzerTestOneInput(reinterpret_cast<const uint8_t*>(input.data()), input.size());
}

}  // namespace

int main(int argc, char** argv) {
  long mutations = 0;
  uint64_t seed = 20261204;
  std::vector<std::string> files;
  for (int i = 1; i < argc; ++i) {
    if (std::strcmp(argv[i], "--mutations") == 0 && i + 1 < argc) {
      mutations = std::atol(argv[++i]);
    } else if (std::strcmp(argv[i], "--seed") == 0 && i + 1 < argc) {
      seed = std::strtoull(argv[++i], nullptr, 10);
    } else {
      Collect(argv[i], &files);
    }
  }
  if (files.empty()) {
    std::fprintf(stderr, "usage: %s [--mutations N] [--seed S] PATH...\n", argv[0]);
    return 2;
  }
  std::vector<std::string> seeds;
  for (const std::string& file : files) seeds.push_back(ReadAll(file));
  std::string keep = argv[0];
  keep = keep.substr(keep.rfind('/') + 1) + ".last-input";
  Random random{seed | 1};
  for (const std::string& input : seeds) Run(input, keep);
  for (long i = 0; i < mutations; ++i) {
    Run(Mutate(seeds[random.Below(seeds.size())], seeds, &random), keep);
  }
  std::remove(keep.c_str());
  std::fprintf(stderr, "%s: %zu seed inputs and %ld mutations (seed %llu), no contract broken\n",
               argv[0], seeds.size(), mutations, static_cast<unsigned long long>(seed));
  return 0;
}
