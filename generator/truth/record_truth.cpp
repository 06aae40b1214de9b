#include "generator/truth/record_truth.hpp"

#include <algorithm>
#include <cmath>

#include "generator/truth/heart_level.hpp"
#include "generator/truth/labels.hpp"

namespace stethogen::gen {
namespace {

EventKind valve_event_kind(Valve v, bool opening) {
  switch (v) {
    case Valve::mitral: return opening ? EventKind::mitral_open : EventKind::mitral_close;
    case Valve::tricuspid: return opening ? EventKind::tricuspid_open : EventKind::tricuspid_close;
    case Valve::aortic: return opening ? EventKind::aortic_open : EventKind::aortic_close;
    case Valve::pulmonic: return opening ? EventKind::pulmonic_open : EventKind::pulmonic_close;
  }
  return EventKind::mitral_close;
}

class EventSink {
 public:
  EventSink(double duration_s, int rate_hz, std::int32_t beat_shift)
      : duration_s_(duration_s), rate_hz_(rate_hz), beat_shift_(beat_shift) {}

  void sound(EventKind kind, std::int32_t beat, std::int32_t site, const SoundTiming& t) {
    if (!t.valid() || t.onset_s < 0 || !(t.offset_s < duration_s_)) return;
    push(kind, beat, site, t.onset_s, t.peak_s, t.offset_s);
  }
  void instant(EventKind kind, std::int32_t beat, double time_s) {
    if (!(time_s >= 0 && time_s < duration_s_)) return;
    push(kind, beat, -1, time_s, time_s, time_s);
  }
  std::vector<Event> take() {
    std::stable_sort(events_.begin(), events_.end(), [](const Event& a, const Event& b) {
      return a.onset_s != b.onset_s ? a.onset_s < b.onset_s : a.site < b.site;
    });
    return std::move(events_);
  }

 private:
  void push(EventKind kind, std::int32_t beat, std::int32_t site, double on, double peak, double off) {
    events_.push_back({beat - beat_shift_, kind, site, on, peak, off, sample_index(on, rate_hz_),
                       sample_index(peak, rate_hz_), sample_index(off, rate_hz_)});
  }
  double duration_s_;
  int rate_hz_;
  std::int32_t beat_shift_;
  std::vector<Event> events_;
};

// The first beat whose LV activation is inside the record becomes beat 0.
std::int32_t first_recorded_beat(const CirculationResult& c) {
  for (const BeatHemodynamics& b : c.beats)
    if (b.lv_activation_s >= 0) return b.beat;
  return c.beats.empty() ? 0 : c.beats.back().beat + 1;
}

ValveClosures valve_closures(const CirculationResult& c) {
  ValveClosures out;
  for (const ValveTransition& v : c.transitions) {
    if (v.opening) continue;
    bool av = v.valve == Valve::mitral || v.valve == Valve::tricuspid;
    (av ? out.av_s : out.semilunar_s).push_back(v.time_s);
  }
  return out;
}

}  // namespace

std::int64_t sample_index(double time_s, int sample_rate_hz) {
  return static_cast<std::int64_t>(std::llround(time_s * sample_rate_hz));
}

Truth build_truth(const TruthInputs& in) {
  const CirculationResult& circ = in.circulation;
  const std::size_t n_sites = in.rendering.clean.n_sites;
  const std::int32_t shift = first_recorded_beat(circ);
  EventSink sink(circ.duration_s, in.sample_rate_hz, shift);

  std::vector<SoundTiming> heart(in.components.size());
  for (std::size_t i = 0; i < in.components.size(); ++i) {
    const SoundComponent& c = in.components[i];
    heart[i] = heart_level_timing(c);
    sink.sound(c.kind, c.beat, -1, heart[i]);
    for (std::size_t s = 0; s < n_sites; ++s)
      sink.sound(c.kind, c.beat, static_cast<std::int32_t>(s), in.rendering.component_timing[i][s]);
  }

  // S1 and S2 intervals; their heart-level amplitude and the A2-P2 split go into the beat rows.
  struct BeatSounds {
    double s1_amplitude = NAN, s2_amplitude = NAN, a2_onset = NAN, p2_onset = NAN;
  };
  std::vector<BeatSounds> by_beat(circ.beats.size());
  auto beat_slot = [&](std::int32_t beat) -> BeatSounds* {
    std::int32_t k = beat - (circ.beats.empty() ? 0 : circ.beats.front().beat);
    return k >= 0 && k < static_cast<std::int32_t>(by_beat.size()) ? &by_beat[k] : nullptr;
  };
  for (std::size_t i = 0; i < in.components.size(); ++i) {
    const SoundComponent& c = in.components[i];
    BeatSounds* slot = beat_slot(c.beat);
    if (!slot || !heart[i].valid()) continue;
    if (c.kind == EventKind::A2) slot->a2_onset = heart[i].onset_s;
    if (c.kind == EventKind::P2) slot->p2_onset = heart[i].onset_s;
  }
  std::vector<std::vector<LabelledSound>> site_sounds(n_sites);
  for (std::size_t g = 0; g < in.groups.size(); ++g) {
    const SoundGroup& group = in.groups[g];
    if (group.kind != EventKind::S1 && group.kind != EventKind::S2) continue;
    bool is_s1 = group.kind == EventKind::S1;
    SoundTiming t = heart_level_group_timing(group, in.components);
    sink.sound(group.kind, group.beat, -1, t);
    if (BeatSounds* slot = beat_slot(group.beat); slot && t.valid())
      (is_s1 ? slot->s1_amplitude : slot->s2_amplitude) = t.peak_envelope;
    for (std::size_t s = 0; s < n_sites; ++s) {
      const SoundTiming& st = in.rendering.group_timing[g][s];
      sink.sound(group.kind, group.beat, static_cast<std::int32_t>(s), st);
      if (st.valid()) site_sounds[s].push_back({is_s1, st.onset_s, st.offset_s});
    }
  }
  for (const ValveTransition& v : circ.transitions)
    sink.instant(valve_event_kind(v.valve, v.opening), v.beat, v.time_s);

  Truth out;
  out.events = sink.take();
  for (std::size_t i = 0; i < circ.beats.size(); ++i) {
    const BeatHemodynamics& b = circ.beats[i];
    if (!(b.lv_activation_s >= 0 && b.lv_activation_s < circ.duration_s)) continue;
    const BeatSounds& bs = by_beat[i];
    BeatRow row;
    row.beat = b.beat - shift;
    row.activation_s = b.lv_activation_s;
    row.rr_s = b.rr_s;
    row.resp_phase = b.resp_phase;
    row.inspiration = b.inspiration ? 1 : 0;
    row.lv_stroke_volume_ml = b.lv_stroke_volume_ml;
    row.rv_stroke_volume_ml = b.rv_stroke_volume_ml;
    row.lv_ejection_fraction = b.lv_ejection_fraction;
    row.rv_ejection_fraction = b.rv_ejection_fraction;
    row.lv_dpdt_max_mmhg_s = b.lv_dpdt_max_mmhg_s;
    row.aortic_systolic_mmhg = b.aortic_systolic_mmhg;
    row.aortic_diastolic_mmhg = b.aortic_diastolic_mmhg;
    row.a2p2_split_ms = 1e3 * (bs.p2_onset - bs.a2_onset);
    row.s1_amplitude = bs.s1_amplitude;
    row.s2_amplitude = bs.s2_amplitude;
    out.beats.push_back(row);
  }

  out.states = SiteArray<std::uint8_t>(n_sites, in.n_samples);
  const ValveClosures closures = valve_closures(circ);
  for (std::size_t s = 0; s < n_sites; ++s)
    label_states(std::move(site_sounds[s]), closures, in.sample_rate_hz, out.states.row(s), in.n_samples);
  return out;
}

}  // namespace stethogen::gen
