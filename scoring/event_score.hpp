// Scoring event detections against the truth's /events: per record and channel (sound kind
// at one site, or at heart level), a one-to-one matching within the tolerance
// (scoring/matching.hpp), summed over the groups of scoring/breakdown.hpp.
#pragma once

#include <map>
#include <optional>
#include <string>
#include <vector>

#include "core/types.hpp"
#include "scoring/breakdown.hpp"
#include "scoring/detections.hpp"
#include "scoring/metrics.hpp"
#include "scoring/truth.hpp"

namespace stethogen::scoring {

// Which instant of a true sound a detection is compared with.
enum class Reference : std::uint8_t { centre, onset, peak };
std::optional<Reference> parse_reference(std::string_view s);
std::string_view name(Reference r);

// Default window: +-60 ms around the centre of S1/S2, the criterion of heart-sound segmentation
// evaluations (Schmidt et al. 2010, Physiol Meas 31:513; Springer et al. 2016, IEEE Trans
// Biomed Eng 63:822; from memory). ANSI/AAMI EC57 uses 150 ms for beats; both are in the sweep.
inline constexpr double kDefaultToleranceS = 0.060;
inline const std::vector<double> kSweepToleranceS = {0.040, 0.060, 0.100, 0.150};

struct EventScoreOptions {
  double tolerance_s = kDefaultToleranceS;
  Reference reference = Reference::centre;
  std::vector<double> sweep_s;      // empty: no sweep
  std::vector<EventKind> kinds;     // scored even without a detection row; plus those in the file
};

// A kind at one site ("" = heart level).
struct Channel {
  EventKind kind = EventKind::S1;
  std::string site;
  auto operator<=>(const Channel&) const = default;
};

struct RecordChannelResult {
  std::string record_id;
  Channel channel;
  std::size_t tp = 0, fp = 0, fn = 0;
};

struct EventScore {
  double tolerance_s = 0;
  Reference reference = Reference::centre;
  std::vector<Channel> channels;
  std::map<GroupKey, std::map<EventKind, Tally>> groups;          // at tolerance_s
  std::map<double, std::map<EventKind, Tally>> sweep;             // overall, no timing errors
  std::vector<RecordChannelResult> per_record;
  std::vector<std::string> missing_records;  // no detection row at all: everything missed
  std::size_t records = 0;
  std::size_t truth_outside_record = 0;      // true sounds whose reference lies outside [0, duration]
};

// The reference instant of a true event.
double reference_time(const Event& e, Reference r);

EventScore score_events(const TruthSource& truth, const Detections& detections, const EventScoreOptions& options);

}  // namespace stethogen::scoring
