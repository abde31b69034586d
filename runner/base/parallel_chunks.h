#ifndef PLUMB_RUNNER_BASE_PARALLEL_CHUNKS_H_
#define PLUMB_RUNNER_BASE_PARALLEL_CHUNKS_H_

/// Fork-join over index ranges, for the per-case stages of loading and scoring that have no
/// order between cases (gold hashes, gold normalization, scoring recorded replies). The range
/// [0, count) is cut into at most WorkerCount() contiguous chunks in order; chunk 0 runs on the
/// calling thread, the others on threads started for the call and joined before it returns.
/// `work` must be safe to run concurrently on disjoint ranges and must not throw.

#include <cstddef>
#include <functional>

namespace plumb {

/// The number of CPUs this process may run on (its affinity mask), from 1 to 8.
int WorkerCount();

/// Calls work(chunk, begin, end) for each chunk; a chunk is never smaller than `min_chunk`
/// items (so small inputs stay on one thread, where starting a thread would cost more than it
/// saves). Returns the number of chunks used (0 when `count` is 0: `work` is not called).
size_t ForEachChunk(size_t count, size_t min_chunk,
                    const std::function<void(size_t chunk, size_t begin, size_t end)>& work);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_PARALLEL_CHUNKS_H_
