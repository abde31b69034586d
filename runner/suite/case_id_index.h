#ifndef PLUMB_RUNNER_SUITE_CASE_ID_INDEX_H_
#define PLUMB_RUNNER_SUITE_CASE_ID_INDEX_H_

/// Case ids to their place in a suite's list of cases: an open-addressing table of list
/// indices, hashed on the id and compared against the list itself. No id is copied and nothing
/// is allocated per case, so the loader's duplicate-id check and plumb score's lookup of each
/// reply's case cost a hash and, mostly, one comparison. The list may grow (and move) between
/// calls; a case's index must not change once added. Not thread-safe for Insert; Find may be
/// called from several threads at once.

#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

namespace plumb {

struct Case;

class CaseIdIndex {
 public:
  static constexpr size_t kAbsent = SIZE_MAX;

  /// Room for `cases` ids in all without growing the table.
  void Reserve(size_t cases);
  /// Adds cases[index] under its id, unless a case added earlier has that id: then returns that
  /// case's index and adds nothing; otherwise kAbsent.
  size_t Insert(const std::vector<Case>& cases, size_t index);
  /// The index of the case with `id`, or kAbsent.
  size_t Find(const std::vector<Case>& cases, std::string_view id) const;
  size_t size() const { return size_; }

 private:
  // A slot holds the id's hash in its high 32 bits and 1 + the case's index in its low 32 (so
  // most mismatches are told apart without reading the id); 0 is an empty slot.
  void Rehash(size_t slots);
  /// The index of the case with `id` (whose hash is `hash`), or kAbsent with *slot the empty
  /// slot where it would go.
  size_t Probe(const std::vector<Case>& cases, std::string_view id, uint32_t hash,
               size_t* slot) const;

  std::vector<uint64_t> slots_;
  size_t size_ = 0;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_CASE_ID_INDEX_H_
