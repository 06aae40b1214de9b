#include "scoring/event_score.hpp"

#include <algorithm>
#include <set>

#include <fmt/format.h>

#include "core/error.hpp"
#include "scoring/matching.hpp"

namespace stethogen::scoring {

std::optional<Reference> parse_reference(std::string_view s) {
  if (s == "centre" || s == "center") return Reference::centre;
  if (s == "onset") return Reference::onset;
  if (s == "peak") return Reference::peak;
  return std::nullopt;
}

std::string_view name(Reference r) {
  switch (r) {
    case Reference::centre: return "centre";
    case Reference::onset: return "onset";
    case Reference::peak: return "peak";
  }
  return "?";
}

double reference_time(const Event& e, Reference r) {
  switch (r) {
    case Reference::centre: return 0.5 * (e.onset_s + e.offset_s);  // midpoint of onset and offset
    case Reference::onset: return e.onset_s;
    case Reference::peak: return e.peak_s;
  }
  return e.onset_s;
}

namespace {

std::vector<Channel> channels_of(const TruthSource& truth, const Detections& det, const EventScoreOptions& opt) {
  std::set<Channel> channels;
  const auto& records = truth.records();
  for (const EventDetection& d : det.events)
    channels.insert({d.kind, d.site < 0 ? std::string() : records[d.record].sites[d.site]});
  for (EventKind k : opt.kinds) {
    bool present = std::any_of(channels.begin(), channels.end(), [&](const Channel& c) { return c.kind == k; });
    if (!present) channels.insert({k, ""});
  }
  if (channels.empty())
    throw InputError(fmt::format("{}: no detection rows, so nothing says which sounds to score; name them "
                                 "with --kinds (e.g. --kinds S1,S2)", det.file));
  return {channels.begin(), channels.end()};
}

}  // namespace

EventScore score_events(const TruthSource& truth, const Detections& det, const EventScoreOptions& opt) {
  if (det.format != DetectionFormat::events)
    throw InputError(fmt::format("{}: is a segmentation file, not event detections", det.file));
  EventScore score;
  score.tolerance_s = opt.tolerance_s;
  score.reference = opt.reference;
  score.channels = channels_of(truth, det, opt);
  const auto& records = truth.records();
  score.records = records.size();

  // Rows arrive grouped by record; find each record's range once.
  std::vector<std::size_t> first(records.size() + 1, det.events.size());
  for (std::size_t i = det.events.size(); i-- > 0;) first[det.events[i].record] = i;
  for (std::size_t r = records.size(); r-- > 0;) first[r] = std::min(first[r], first[r + 1]);

  for (std::size_t r = 0; r < records.size(); ++r) {
    const RecordInfo& info = records[r];
    auto begin = det.events.begin() + static_cast<std::ptrdiff_t>(first[r]);
    auto end = det.events.begin() + static_cast<std::ptrdiff_t>(first[r + 1]);
    if (begin == end) score.missing_records.push_back(info.record_id);
    RecordTruth rt = truth.load(r, false);
    std::vector<GroupKey> groups = record_groups(info);

    for (const Channel& ch : score.channels) {
      std::int32_t site = -1;
      if (!ch.site.empty()) {
        auto it = std::find(info.sites.begin(), info.sites.end(), ch.site);
        if (it == info.sites.end()) continue;  // the record was not recorded at this site
        site = static_cast<std::int32_t>(it - info.sites.begin());
      }
      std::vector<double> true_s, detected_s;
      for (const Event& e : rt.events) {
        if (e.kind != ch.kind || e.site != site) continue;
        double t = reference_time(e, opt.reference);
        if (t < 0 || t > info.duration_s) {
          ++score.truth_outside_record;
          continue;
        }
        true_s.push_back(t);
      }
      std::sort(true_s.begin(), true_s.end());
      for (auto it = begin; it != end; ++it)
        if (it->kind == ch.kind && it->site == site) detected_s.push_back(it->time_s);

      Tally tally;
      for (const MatchedPair& p : match_events(true_s, detected_s, opt.tolerance_s))
        tally.errors_s.push_back(detected_s[p.detection] - true_s[p.truth]);
      tally.tp = tally.errors_s.size();
      tally.fn = true_s.size() - tally.tp;
      tally.fp = detected_s.size() - tally.tp;
      score.per_record.push_back({info.record_id, ch, tally.tp, tally.fp, tally.fn});
      for (const GroupKey& g : groups) score.groups[g][ch.kind].add(tally);
      score.groups[site_group(ch.site)][ch.kind].add(tally);

      for (double tol : opt.sweep_s) {
        Tally counts;
        counts.tp = match_events(true_s, detected_s, tol).size();
        counts.fn = true_s.size() - counts.tp;
        counts.fp = detected_s.size() - counts.tp;
        score.sweep[tol][ch.kind].add(counts);
      }
    }
  }
  return score;
}

}  // namespace stethogen::scoring
