#include "runner/suite/case_id_index.h"

#include <functional>
#include <stdexcept>

#include "runner/suite/suite.h"

namespace plumb {
namespace {

uint32_t HashOf(std::string_view id) {
  const size_t h = std::hash<std::string_view>()(id);
  return static_cast<uint32_t>(h ^ (h >> 32));
}

}  // namespace

void CaseIdIndex::Reserve(size_t cases) {
  size_t slots = 16;
  while (slots < 2 * cases) slots *= 2;  // at most half full
  if (slots > slots_.size()) Rehash(slots);
}

void CaseIdIndex::Rehash(size_t slots) {
  std::vector<uint64_t> old = std::move(slots_);
  slots_.assign(slots, 0);
  const size_t mask = slots - 1;
  for (uint64_t entry : old) {
    if (entry == 0) continue;
    size_t at = (entry >> 32) & mask;
    while (slots_[at] != 0) at = (at + 1) & mask;
    slots_[at] = entry;
  }
}

size_t CaseIdIndex::Probe(const std::vector<Case>& cases, std::string_view id, uint32_t hash,
                          size_t* slot) const {
  const size_t mask = slots_.size() - 1;
  for (size_t at = hash & mask;; at = (at + 1) & mask) {
    const uint64_t entry = slots_[at];
    if (entry == 0) {
      *slot = at;
      return kAbsent;
    }
    const size_t other = static_cast<uint32_t>(entry) - 1;
    if ((entry >> 32) == hash && cases[other].id == id) return other;
  }
}

size_t CaseIdIndex::Insert(const std::vector<Case>& cases, size_t index) {
  if (index >= UINT32_MAX) throw std::length_error("more than 2^32 - 1 cases");
  if (2 * (size_ + 1) > slots_.size()) Rehash(slots_.empty() ? 16 : 2 * slots_.size());
  const uint32_t hash = HashOf(cases[index].id);
  size_t slot = 0;
  const size_t first = Probe(cases, cases[index].id, hash, &slot);
  if (first != kAbsent) return first;
  slots_[slot] = (uint64_t{hash} << 32) | (index + 1);
  ++size_;
  return kAbsent;
}

size_t CaseIdIndex::Find(const std::vector<Case>& cases, std::string_view id) const {
  if (slots_.empty()) return kAbsent;
  size_t slot = 0;
  return Probe(cases, id, HashOf(id), &slot);
}

}  // namespace plumb
