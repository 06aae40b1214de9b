#include "scoring/segment_score.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::scoring {
namespace {

// Index into kTransitions of the step from label a to label b, or -1.
int transition_of(std::uint8_t a, std::uint8_t b) {
  if (a >= 1 && a <= 4 && b == (a % 4) + 1) return a - 1;
  return -1;
}

// First sample at or after time t (tolerating decimal rounding of k / rate).
std::int64_t sample_at(double t_s, int rate_hz) {
  return static_cast<std::int64_t>(std::ceil(t_s * rate_hz - 1e-6));
}

}  // namespace

double accuracy(const Confusion& c) {
  std::uint64_t right = 0, total = 0;
  for (int t = 1; t <= 4; ++t) {
    right += c[t][t];
    for (int d = 0; d <= 4; ++d) total += c[t][d];
  }
  return total == 0 ? std::numeric_limits<double>::quiet_NaN() : static_cast<double>(right) / total;
}

SegmentScore score_segments(const TruthSource& truth, const Detections& det, double tolerance_s) {
  if (det.format != DetectionFormat::segments)
    throw InputError(fmt::format("{}: holds event detections, not a segmentation", det.file));
  SegmentScore score;
  score.tolerance_s = tolerance_s;
  const auto& records = truth.records();
  score.records = records.size();
  std::set<std::string> site_set;
  for (const SegmentDetection& s : det.segments) site_set.insert(records[s.record].sites[s.site]);
  if (site_set.empty())
    throw InputError(fmt::format("{}: no segment rows: nothing says which sites to score", det.file));
  score.sites.assign(site_set.begin(), site_set.end());

  std::vector<std::size_t> first(records.size() + 1, det.segments.size());
  for (std::size_t i = det.segments.size(); i-- > 0;) first[det.segments[i].record] = i;
  for (std::size_t r = records.size(); r-- > 0;) first[r] = std::min(first[r], first[r + 1]);

  for (std::size_t r = 0; r < records.size(); ++r) {
    const RecordInfo& info = records[r];
    if (first[r] == first[r + 1]) score.missing_records.push_back(info.record_id);
    RecordTruth rt = truth.load(r, true);
    std::vector<GroupKey> groups = record_groups(info);
    for (const std::string& site_name : score.sites) {
      auto site_it = std::find(info.sites.begin(), info.sites.end(), site_name);
      if (site_it == info.sites.end()) continue;
      auto site = static_cast<std::size_t>(site_it - info.sites.begin());
      const std::uint8_t* states = rt.states.row(site);
      const std::size_t n = rt.states.n_samples;

      // Detected labels per sample, and detected boundaries per transition.
      std::vector<std::uint8_t> detected(n, 0);
      std::array<std::vector<double>, 4> detected_boundaries;
      const SegmentDetection* prev = nullptr;
      for (std::size_t i = first[r]; i < first[r + 1]; ++i) {
        const SegmentDetection& s = det.segments[i];
        if (static_cast<std::size_t>(s.site) != site) continue;
        auto k0 = static_cast<std::size_t>(std::clamp<std::int64_t>(sample_at(s.start_s, info.sample_rate_hz), 0, n));
        auto k1 = static_cast<std::size_t>(std::clamp<std::int64_t>(sample_at(s.end_s, info.sample_rate_hz), 0, n));
        std::fill(detected.begin() + k0, detected.begin() + k1, static_cast<std::uint8_t>(s.state));
        if (prev) {
          int t = transition_of(static_cast<std::uint8_t>(prev->state), static_cast<std::uint8_t>(s.state));
          if (t >= 0) detected_boundaries[t].push_back(0.5 * (prev->end_s + s.start_s));
        }
        prev = &s;
      }

      Confusion c{};
      for (std::size_t k = 0; k < n; ++k) ++c[std::min<std::uint8_t>(states[k], 4)][detected[k]];
      for (const GroupKey& g : groups) {
        Confusion& total = score.groups[g];
        for (int a = 0; a < 5; ++a)
          for (int b = 0; b < 5; ++b) total[a][b] += c[a][b];
      }
      Confusion& by_site = score.groups[site_group(site_name)];
      for (int a = 0; a < 5; ++a)
        for (int b = 0; b < 5; ++b) by_site[a][b] += c[a][b];

      for (std::size_t k = 1; k < n; ++k) {
        int t = transition_of(states[k - 1], states[k]);
        if (t < 0) continue;
        double true_s = static_cast<double>(k) / info.sample_rate_hz;
        const auto& found = detected_boundaries[t];  // ascending: segments are in time order
        if (found.empty()) {
          ++score.boundaries[t].unmatched;
          continue;
        }
        auto it = std::lower_bound(found.begin(), found.end(), true_s);
        double best = std::numeric_limits<double>::infinity();
        if (it != found.end()) best = *it - true_s;
        if (it != found.begin() && std::abs(*(it - 1) - true_s) < std::abs(best)) best = *(it - 1) - true_s;
        score.boundaries[t].errors_s.push_back(best);
      }
    }
  }
  return score;
}

}  // namespace stethogen::scoring
