// The engine's output must not depend on the machine (DESIGN.md "Determinism"): the C library
// picks FMA or non-FMA versions of its elementary functions at run time, so this test runs
// itself again in a child process told to select the versions of a CPU without FMA and AVX2
// (GLIBC_TUNABLES=glibc.cpu.hwcaps=-FMA,-AVX2) and requires the same hash of the whole result
// (series, beats, transitions) for a resting, an exercising and a failing subject. Our own
// AVX dispatch is not affected by the tunable; its paths have their own bit-identity tests.
#include <catch2/catch.hpp>

#include <string>
#include <vector>

#include "circulation/engine_helpers.hpp"
#include "cross_cpu_check.hpp"

using namespace stethogen;
using namespace stethogen::gen;

namespace {

std::string engine_digest() {
  const std::vector<SubjectSpec> subjects = {test::subject(State::rest, 0.0, 4.0),
                                             test::subject(State::exercise, 0.6, 4.0),
                                             test::subject(State::global_failure, 0.7, 4.0)};
  cross_cpu::Digest d;
  for (const SubjectSpec& s : subjects) {
    const CirculationResult r = run_engine(s).result;
    const HemodynamicSeries& z = r.series;
    for (const auto* v : {&z.p_lv, &z.p_rv, &z.p_la, &z.p_ra, &z.p_ao, &z.p_pa, &z.p_thorax, &z.v_lv, &z.v_rv,
                          &z.v_la, &z.v_ra, &z.q_mitral, &z.q_tricuspid, &z.q_aortic, &z.q_pulmonic,
                          &z.leaflet_mitral, &z.leaflet_tricuspid, &z.leaflet_aortic, &z.leaflet_pulmonic,
                          &z.resp_phase})
      d.values(*v);
    for (const BeatHemodynamics& b : r.beats) d.value(b);
    d.value(r.transitions.size());
    for (const ValveTransition& t : r.transitions) {
      d.value(t.valve);
      d.value(t.opening);
      d.value(t.time_s);
      d.value(t.beat);
    }
  }
  return d.hex();
}

}  // namespace

TEST_CASE("cross-CPU child: engine digest", "[.cross_cpu]") { cross_cpu::print_digest(engine_digest()); }

TEST_CASE("engine output is the same with the C library's non-FMA functions", "[engine][determinism]") {
  cross_cpu::require_same_when_masked(engine_digest(), "cross-CPU child: engine digest");
}
