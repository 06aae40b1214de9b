// Sources, transmission and truth give the same values whichever libm variants the CPU selects.
#include <catch2/catch.hpp>

#include <complex>

#include "cross_cpu_check.hpp"
#include "generator/sources/heart_sounds.hpp"
#include "generator/transmission/render.hpp"
#include "generator/transmission/sensor.hpp"
#include "generator/truth/hemodynamic_traces.hpp"
#include "generator/truth/record_truth.hpp"
#include "synthetic_circulation.hpp"

using namespace stethogen;
using namespace stethogen::gen;

namespace {

void add_plan(cross_cpu::Digest& d, const TransmissionPlan& plan) {
  d.value(plan.filter_tail_s);
  for (const SitePath& p : plan.sites) {
    for (double w : p.weight) d.value(w);
    for (double t : p.delay_s) d.value(t);
    d.value(p.filter.gain);
    for (const Biquad& b : p.filter.sections) d.value(b.b0), d.value(b.b1), d.value(b.b2), d.value(b.a1), d.value(b.a2);
  }
}

// The double-precision waveform of each component (closed form and block rendering) before
// the single-precision site signals round most of a last-bit difference away.
void add_waveforms(cross_cpu::Digest& d, const std::vector<SoundComponent>& components, int rate_hz) {
  for (const SoundComponent& c : components) {
    const auto n = static_cast<std::size_t>(0.3 * rate_hz);
    std::vector<std::complex<double>> block(n);
    c.render(c.start_s, rate_hz, n, 1.0, block.data());
    d.values(block);
    for (std::size_t i = 0; i < n; i += 7) d.value(c.analytic(c.start_s + static_cast<double>(i) / rate_hz));
  }
}

// A fixed circulation (not the engine's), its sounds with the variation of several records,
// rendered at the four sites through every sensor and two chest walls at two rates, the output
// stage, truth and traces. libm's variants differ in under 0.1 % of results, so many values go in.
std::string generator_stages_digest() {
  cross_cpu::Digest d;
  const CirculationResult circ = test::synthetic_circulation({});
  for (std::uint64_t record = 0; record < 6; ++record)
    for (int rate_hz : {1000, 4000}) {
      SubjectSpec subject;
      subject.dataset_seed = 11;
      subject.record_index = record;
      subject.params.source_variation = 0.1;
      subject.sample_rate_hz = rate_hz;
      subject.sites.assign(kAllSites.begin(), kAllSites.end());
      const auto components = heart_sound_sources(circ, draw_source_variation(subject));
      const auto groups = group_components(components);
      add_waveforms(d, components, rate_hz);
      for (const SoundComponent& c : components) {
        d.value(c.start_s), d.value(c.amplitude), d.value(c.tau_s), d.value(c.f_start_hz), d.value(c.f_end_hz);
        d.value(c.chirp_tau_s);
      }
      const std::size_t n = 2 * static_cast<std::size_t>(rate_hz);
      for (Sensor sensor : kAllSensors)
        for (double wall_mm : {12.0, 35.0}) {
          subject.sensor = sensor;
          subject.params.chest_wall_mm = wall_mm;
          const TransmissionPlan plan = plan_transmission(subject);
          add_plan(d, plan);
          Rendering r = render_sites(components, groups, plan, n);
          d.values(r.clean.data);
          const Truth truth = build_truth({circ, components, groups, r, rate_hz, n});
          for (const Event& e : truth.events) {
            d.value(e.kind), d.value(e.site), d.value(e.beat), d.value(e.onset_s), d.value(e.peak_s);
            d.value(e.offset_s), d.value(e.onset_index), d.value(e.peak_index), d.value(e.offset_index);
          }
          for (const BeatRow& b : truth.beats)
            d.value(b.s1_amplitude), d.value(b.s2_amplitude), d.value(b.a2p2_split_ms);
          d.values(truth.states.data);
          for (const Artifact& a : apply_output_stage(r.clean, 9.0, SampleFormat::int16, rate_hz))
            d.value(a.onset_s), d.value(a.offset_s), d.value(a.level_db);
          d.values(r.clean.data);
        }
    }
  // Filter designs over a grid of chest walls (pre-warp, peaking sections, tail length).
  SubjectSpec subject;
  subject.sites.assign(kAllSites.begin(), kAllSites.end());
  for (int rate_hz : {1000, 2000, 4000, 8000})
    for (Sensor sensor : kAllSensors)
      for (double wall_mm = 8.0; wall_mm <= 60.0; wall_mm += 0.5) {
        subject.sample_rate_hz = rate_hz, subject.sensor = sensor, subject.params.chest_wall_mm = wall_mm;
        add_plan(d, plan_transmission(subject));
      }
  d.values(hemodynamic_traces(circ).data.data);
  return d.hex();
}

}  // namespace

TEST_CASE("cross-CPU child: generator stages digest", "[.cross_cpu]") {
  cross_cpu::print_digest(generator_stages_digest());
}

TEST_CASE("sources, rendering and truth are the same with libm's FMA and AVX2 variants masked", "[determinism]") {
  cross_cpu::require_same_when_masked(generator_stages_digest(), "cross-CPU child: generator stages digest");
}
