#ifndef PLUMB_RUNNER_BASE_KEEP_UNTIL_EXIT_H_
#define PLUMB_RUNNER_BASE_KEEP_UNTIL_EXIT_H_

/// KeepUntilExit takes a large structure a command has finished with (the loaded suite, the
/// outcomes) when the process is about to exit: freeing 20,000 cases one allocation at a time
/// costs more (about 5% of a `plumb score`) than the kernel reclaiming the pages at exit. The
/// objects stay reachable from a global list, so leak checkers (LeakSanitizer in the debug-asan
/// preset) do not report them. For the commands main() calls once per process; a program that
/// calls a command repeatedly would keep every run's structures.

#include <memory>
#include <vector>

namespace plumb {

template <typename T>
void KeepUntilExit(std::unique_ptr<T> object) {
  // Never destroyed: the point is not to run these destructors.
  static auto* kept = new std::vector<std::shared_ptr<void>>();
  kept->push_back(std::shared_ptr<T>(std::move(object)));
}

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_KEEP_UNTIL_EXIT_H_
