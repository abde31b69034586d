// Shared by the fuzz targets: a broken contract aborts with a sentence, so both libFuzzer and
// the replay driver stop on it and keep the input.
#ifndef PLUMB_TESTS_FUZZ_FUZZ_CHECK_H_
#define PLUMB_TESTS_FUZZ_FUZZ_CHECK_H_

#include <cstdio>
#include <cstdlib>

#define FUZZ_CHECK(condition, what)                                                           \
  do {                                                                                        \
    if (!(condition)) {                                                                       \
      std::fprintf(stderr, "fuzz: contract broken at %s:%d: %s\n", __FILE__, __LINE__, what); \
      std::abort();                                                                           \
    }                                                                                         \
  } while (0)

#endif  // PLUMB_TESTS_FUZZ_FUZZ_CHECK_H_
