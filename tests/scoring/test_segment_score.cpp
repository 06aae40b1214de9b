#include <catch2/catch.hpp>

#include <sstream>

#include "fixtures.hpp"
#include "scoring/segment_score.hpp"

using namespace stethogen;
using namespace stethogen::scoring;

namespace {

SegmentScore score(const MemoryTruth& truth, const std::string& csv) {
  std::istringstream in(csv);
  return score_segments(truth, parse_detections(in, "seg.csv", truth.records(), false), 0.06);
}

}  // namespace

TEST_CASE("the true states fed back score accuracy 1 and zero boundary error", "[segment_score]") {
  Record r = test::fixture_record({});
  MemoryTruth truth({r});
  SegmentScore s = score(truth, test::states_as_csv(r, 1, 0));
  const Confusion& c = s.groups.at(GroupKey{kAll, 0, "all"});
  REQUIRE(accuracy(c) == 1.0);
  for (int t = 1; t <= 4; ++t)
    for (int d = 0; d <= 4; ++d)
      if (t != d) REQUIRE(c[t][d] == 0);
  for (const BoundaryErrors& b : s.boundaries) {
    REQUIRE(b.unmatched == 0);
    REQUIRE(b.errors_s.size() >= 10);
    REQUIRE(summarize_timing(b.errors_s).mean_abs_ms < 1e-6);
  }
  REQUIRE(s.sites == std::vector<std::string>{"mitral"});
}

TEST_CASE("a segmentation 20 ms late shows a 20 ms boundary bias and the samples it mislabels", "[segment_score]") {
  Record r = test::fixture_record({});
  MemoryTruth truth({r});
  SegmentScore s = score(truth, test::states_as_csv(r, 1, 0.020));
  for (const BoundaryErrors& b : s.boundaries) REQUIRE(summarize_timing(b.errors_s).bias_ms == Approx(20.0).margin(1e-6));
  // Every boundary moves 40 samples at 2 kHz: 4 boundaries per beat mislabel 40 samples each.
  const Confusion& c = s.groups.at(GroupKey{kAll, 0, "all"});
  std::uint64_t wrong = 0, labelled = 0;
  for (int t = 1; t <= 4; ++t)
    for (int d = 0; d <= 4; ++d) {
      labelled += c[t][d];
      if (t != d) wrong += c[t][d];
    }
  std::size_t boundaries = 0;
  for (const BoundaryErrors& b : s.boundaries) boundaries += b.errors_s.size();
  // The first S1 onset (0 -> S1) moves too, though it is no cycle transition.
  REQUIRE(wrong == Approx(40.0 * boundaries).margin(80));
  REQUIRE(accuracy(c) == Approx(1.0 - static_cast<double>(wrong) / labelled));
}
