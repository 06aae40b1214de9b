// libFuzzer target: the detections-file parser (scoring/detections.hpp) on arbitrary bytes,
// strict and lenient, then the event or segment scorer on what it accepted, against a small
// truth held in memory. Bad input must be an InputError; anything else is a finding.
#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "core/record.hpp"
#include "scoring/detections.hpp"
#include "scoring/event_score.hpp"
#include "scoring/segment_score.hpp"
#include "scoring/truth.hpp"

namespace {

using namespace stethogen;

// Two 2 s records at 1 kHz, two sites, one S1 and one S2 per second, four-state labels.
Record make_record(const std::string& id) {
  Record r;
  r.subject.record_id = id;
  r.subject.population = "fuzz";
  r.sample_rate_hz = 1000;
  r.sites = {Site::aortic, Site::mitral};
  r.pcg = SiteArray<float>(2, 2000);
  r.states = SiteArray<std::uint8_t>(2, 2000, static_cast<std::uint8_t>(Label::diastole));
  for (int beat = 0; beat < 2; ++beat) {
    for (std::int32_t site = -1; site < 2; ++site) {
      const double s1 = 0.1 + beat, s2 = 0.45 + beat;
      auto add = [&](EventKind kind, double onset_s) {
        Event e;
        e.beat = beat;
        e.kind = kind;
        e.site = site;
        e.onset_s = onset_s;
        e.peak_s = onset_s + 0.02;
        e.offset_s = onset_s + 0.08;
        e.onset_index = static_cast<std::int64_t>(onset_s * 1000);
        e.peak_index = e.onset_index + 20;
        e.offset_index = e.onset_index + 80;
        r.events.push_back(e);
      };
      add(EventKind::S1, s1);
      add(EventKind::S2, s2);
    }
    for (std::size_t site = 0; site < 2; ++site) {
      for (int k = 100; k < 180; ++k) r.states.at(site, beat * 1000 + k) = static_cast<std::uint8_t>(Label::s1);
      for (int k = 180; k < 450; ++k) r.states.at(site, beat * 1000 + k) = static_cast<std::uint8_t>(Label::systole);
      for (int k = 450; k < 530; ++k) r.states.at(site, beat * 1000 + k) = static_cast<std::uint8_t>(Label::s2);
    }
  }
  return r;
}

const scoring::MemoryTruth& truth() {
  static const scoring::MemoryTruth t({make_record("r000000"), make_record("r000001")}, "fuzz-truth");
  return t;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  for (bool lenient : {false, true}) {
    try {
      std::istringstream in(text);
      const scoring::Detections det = scoring::parse_detections(in, "fuzz.csv", truth().records(), lenient);
      if (det.format == scoring::DetectionFormat::events) {
        scoring::EventScoreOptions options;
        options.sweep_s = scoring::kSweepToleranceS;
        (void)scoring::score_events(truth(), det, options);
      } else {
        (void)scoring::score_segments(truth(), det, scoring::kDefaultToleranceS);
      }
    } catch (const InputError&) {
      // the expected way to refuse bad input
    }
  }
  return 0;
}
