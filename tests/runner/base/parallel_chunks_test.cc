// ForEachChunk's contract (runner/base/parallel_chunks.h): the chunks cover [0, count) exactly
// once, in order, none smaller than min_chunk, chunk 0 on the calling thread.

#include "runner/base/parallel_chunks.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <mutex>
#include <thread>
#include <vector>

namespace plumb {
namespace {

TEST_CASE("chunks cover every index once, in order, and respect the smallest chunk") {
  for (size_t count :
       {size_t{0}, size_t{1}, size_t{999}, size_t{1000}, size_t{2001}, size_t{12345}}) {
    std::vector<int> hits(count, 0);
    std::mutex mutex;
    std::vector<std::pair<size_t, size_t>> ranges(8, {0, 0});
    std::thread::id first_thread;
    const size_t used = ForEachChunk(count, 1000, [&](size_t chunk, size_t begin, size_t end) {
      for (size_t i = begin; i < end; ++i) ++hits[i];  // disjoint ranges: no lock needed
      std::lock_guard<std::mutex> lock(mutex);
      ranges[chunk] = {begin, end};
      if (chunk == 0) first_thread = std::this_thread::get_id();
    });
    INFO("count " << count);
    CHECK(used <= static_cast<size_t>(WorkerCount()));
    if (count == 0) {
      CHECK(used == 0);
      continue;
    }
    CHECK(used == std::min<size_t>(std::max<size_t>(count / 1000, 1), WorkerCount()));
    CHECK(first_thread == std::this_thread::get_id());
    CHECK(std::count(hits.begin(), hits.end(), 1) == static_cast<long>(count));
    size_t next = 0;
    for (size_t chunk = 0; chunk < used; ++chunk) {
      CHECK(ranges[chunk].first == next);
      CHECK((used == 1 || ranges[chunk].second - ranges[chunk].first >= 1000));
      next = ranges[chunk].second;
    }
    CHECK(next == count);
  }
}

TEST_CASE("the worker count is the affinity mask's CPUs, from 1 to 8") {
  CHECK(WorkerCount() >= 1);
  CHECK(WorkerCount() <= 8);
}

}  // namespace
}  // namespace plumb
