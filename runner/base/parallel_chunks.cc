#include "runner/base/parallel_chunks.h"

#include <sched.h>

#include <algorithm>
#include <thread>
#include <vector>

namespace plumb {

int WorkerCount() {
  static const int count = [] {
    cpu_set_t set;
    CPU_ZERO(&set);
    int cpus = sched_getaffinity(0, sizeof set, &set) == 0 ? CPU_COUNT(&set) : 1;
    return std::clamp(cpus, 1, 8);
  }();
  return count;
}

size_t ForEachChunk(size_t count, size_t min_chunk,
                    const std::function<void(size_t chunk, size_t begin, size_t end)>& work) {
  if (count == 0) return 0;
  const size_t most = count / std::max<size_t>(min_chunk, 1);
  const size_t chunks = std::clamp<size_t>(most, 1, static_cast<size_t>(WorkerCount()));
  auto bounds = [&](size_t chunk) { return count * chunk / chunks; };
  std::vector<std::thread> threads;
  threads.reserve(chunks - 1);
  for (size_t chunk = 1; chunk < chunks; ++chunk) {
    threads.emplace_back(work, chunk, bounds(chunk), bounds(chunk + 1));
  }
  work(0, 0, bounds(1));
  for (std::thread& thread : threads) thread.join();
  return chunks;
}

}  // namespace plumb
