#ifndef PLUMB_RUNNER_RUN_METRIC_VALUES_H_
#define PLUMB_RUNNER_RUN_METRIC_VALUES_H_

/// MetricValues maps metric ids ("exact_match", "recall@5", ...) to one case's values, in id
/// order, with the std::map operations the scorer and the reports use. A case defines a handful
/// of metrics, so it is a sorted vector: a lookup is a short scan, and scoring or copying a
/// case costs one allocation instead of one per metric.

#include <algorithm>
#include <initializer_list>
#include <map>
#include <stdexcept>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace plumb {

class MetricValues {
 public:
  using value_type = std::pair<std::string, double>;
  using iterator = std::vector<value_type>::iterator;
  using const_iterator = std::vector<value_type>::const_iterator;

  MetricValues() = default;
  MetricValues(std::initializer_list<value_type> values) {  // NOLINT: {{"f1", 1}} reads as a map
    for (const value_type& v : values) (*this)[v.first] = v.second;
  }
  MetricValues(const std::map<std::string, double>& values)  // NOLINT: a map converts as is
      : entries_(values.begin(), values.end()) {}

  /// The value for `metric`, inserted as 0 (in order) when absent.
  double& operator[](std::string_view metric) {
    auto it = LowerBound(metric);
    if (it == entries_.end() || it->first != metric) {
      it = entries_.insert(it, value_type(std::string(metric), 0.0));
    }
    return it->second;
  }
  const_iterator find(std::string_view metric) const {
    auto it = std::lower_bound(entries_.begin(), entries_.end(), metric, Less);
    return it != entries_.end() && it->first == metric ? it : entries_.end();
  }
  size_t count(std::string_view metric) const { return find(metric) != end() ? 1 : 0; }
  /// Throws std::out_of_range when absent, as std::map::at does.
  double at(std::string_view metric) const {
    auto it = find(metric);
    if (it == end()) throw std::out_of_range("no value for metric " + std::string(metric));
    return it->second;
  }

  /// Removes `metric`; returns how many were removed (0 or 1), as std::map::erase does.
  size_t erase(std::string_view metric) {
    auto it = LowerBound(metric);
    if (it == entries_.end() || it->first != metric) return 0;
    entries_.erase(it);
    return 1;
  }

  const_iterator begin() const { return entries_.begin(); }
  const_iterator end() const { return entries_.end(); }
  size_t size() const { return entries_.size(); }
  bool empty() const { return entries_.empty(); }
  void reserve(size_t n) { entries_.reserve(n); }
  bool operator==(const MetricValues& other) const { return entries_ == other.entries_; }

 private:
  static bool Less(const value_type& entry, std::string_view metric) {
    return entry.first < metric;
  }
  iterator LowerBound(std::string_view metric) {
    return std::lower_bound(entries_.begin(), entries_.end(), metric, Less);
  }

  std::vector<value_type> entries_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_METRIC_VALUES_H_
