// The engine's output must not depend on the machine (DESIGN.md "Determinism"): the C library
// picks FMA or non-FMA versions of its elementary functions at run time, so this test runs
// itself again in a child process told to select the versions of a CPU without FMA and AVX2
// (GLIBC_TUNABLES=glibc.cpu.hwcaps=-FMA,-AVX2) and requires the same hash of the whole result
// (series, beats, transitions) for a resting, an exercising and a failing subject. Our own
// AVX dispatch is not affected by the tunable; its paths have their own bit-identity tests.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdint>
#include <cstdio>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "circulation/engine_helpers.hpp"

using namespace stethogen;
using namespace stethogen::gen;

namespace {

// FNV-1a, 64 bits (Fowler, Noll & Vo): a checksum of the bytes, not a cryptographic hash.
struct Fnv {
  std::uint64_t h = 0xcbf29ce484222325ULL;
  void bytes(const void* p, std::size_t n) {
    for (std::size_t i = 0; i < n; ++i) h = (h ^ static_cast<const unsigned char*>(p)[i]) * 0x100000001b3ULL;
  }
  template <class T> void value(const T& v) { bytes(&v, sizeof v); }
  void series(const std::vector<double>& v) { bytes(v.data(), v.size() * sizeof(double)); }
};

std::string engine_hashes() {
  const std::vector<SubjectSpec> subjects = {test::subject(State::rest, 0.0, 4.0),
                                             test::subject(State::exercise, 0.6, 4.0),
                                             test::subject(State::global_failure, 0.7, 4.0)};
  std::ostringstream out;
  for (const SubjectSpec& s : subjects) {
    const CirculationResult r = run_engine(s).result;
    Fnv f;
    const HemodynamicSeries& z = r.series;
    for (const auto* v : {&z.p_lv, &z.p_rv, &z.p_la, &z.p_ra, &z.p_ao, &z.p_pa, &z.p_thorax, &z.v_lv, &z.v_rv,
                          &z.v_la, &z.v_ra, &z.q_mitral, &z.q_tricuspid, &z.q_aortic, &z.q_pulmonic,
                          &z.leaflet_mitral, &z.leaflet_tricuspid, &z.leaflet_aortic, &z.leaflet_pulmonic,
                          &z.resp_phase})
      f.series(*v);
    for (const BeatHemodynamics& b : r.beats) f.value(b);
    for (const ValveTransition& t : r.transitions) {
      f.value(t.valve);
      f.value(t.opening);
      f.value(t.time_s);
      f.value(t.beat);
    }
    out << std::hex << f.h << ' ' << std::dec << r.transitions.size() << '\n';
  }
  return out.str();
}

}  // namespace

// Hidden: the child process's half of the test below.
TEST_CASE("engine hashes for the machine-independence check", "[.engine_hash_child]") {
  std::cout << "engine-hashes-begin\n" << engine_hashes() << "engine-hashes-end\n";
}

TEST_CASE("engine output is the same with the C library's non-FMA functions", "[engine][determinism]") {
  char self[4096];
  const ssize_t n = readlink("/proc/self/exe", self, sizeof self - 1);
  REQUIRE(n > 0);
  self[n] = '\0';
  const std::string command = std::string("GLIBC_TUNABLES=glibc.cpu.hwcaps=-FMA,-AVX2 '") + self +
                              "' '[.engine_hash_child]' 2>&1";
  FILE* pipe = popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  std::string child;
  char buffer[4096];
  while (std::fgets(buffer, sizeof buffer, pipe)) child += buffer;
  REQUIRE(pclose(pipe) == 0);
  const auto begin = child.find("engine-hashes-begin\n"), end = child.find("engine-hashes-end");
  REQUIRE(begin != std::string::npos);
  REQUIRE(end != std::string::npos);
  const std::string child_hashes = child.substr(begin + 20, end - begin - 20);
  CHECK(child_hashes == engine_hashes());
}
