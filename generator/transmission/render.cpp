#include "generator/transmission/render.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstring>
#include <map>

namespace stethogen::gen {
namespace {

using Complex = std::complex<double>;

// Group onset/offset span the members'; the peak is the combined envelope's.
SoundTiming combine(const std::vector<SoundTiming>& members, const SoundTiming& combined_peak) {
  SoundTiming out = combined_peak;
  if (!out.valid()) return out;
  out.onset_s = INFINITY;
  out.offset_s = -INFINITY;
  for (const SoundTiming& m : members) {
    if (!m.valid()) continue;
    out.onset_s = std::min(out.onset_s, m.onset_s);
    out.offset_s = std::max(out.offset_s, m.offset_s);
  }
  return out;
}

EventKind group_kind(EventKind component) {
  switch (component) {
    case EventKind::M1:
    case EventKind::T1: return EventKind::S1;
    case EventKind::A2:
    case EventKind::P2: return EventKind::S2;
    default: return component;
  }
}

}  // namespace

std::vector<SoundGroup> group_components(const std::vector<SoundComponent>& components) {
  std::map<std::pair<std::int32_t, int>, std::size_t> slot;
  std::vector<SoundGroup> groups;
  for (std::size_t i = 0; i < components.size(); ++i) {
    EventKind g = group_kind(components[i].kind);
    auto key = std::make_pair(components[i].beat, static_cast<int>(g));
    auto [it, inserted] = slot.try_emplace(key, groups.size());
    if (inserted) groups.push_back({g, components[i].beat, {}});
    groups[it->second].members.push_back(i);
  }
  return groups;
}

namespace {

// One site's segment of a group: samples first .. first + len - 1 of the record grid, every
// member's support [lo, hi) in it, and the buffers the site works in.
struct SiteSegment {
  std::int64_t first = 0;
  std::size_t len = 0, hi_max = 0;
  double t_first_s = 0;
  std::vector<std::pair<std::size_t, std::size_t>> spans;
  std::vector<std::complex<double>> member, sum, member_state, tail_state;
  std::vector<SoundTiming> member_timing;
};

// Two doubles in one vector register (vector extension of GCC and clang: packed SSE2 on x86-64).
using Pair = double __attribute__((vector_size(16)));

// The largest std::norm(z[i]) for lo <= i < hi (0 if none), and with Add sum[i] += z[i] in the
// same pass: two samples per vector, two running maxima.
template <bool Add>
double largest_power(const Complex* z, Complex* sum, std::size_t lo, std::size_t hi) {
  Pair m[2] = {{0.0, 0.0}, {0.0, 0.0}};
  std::size_t i = lo;
  for (; i + 4 <= hi; i += 4) {
    Pair v[4];
    std::memcpy(v, z + i, sizeof v);
    if constexpr (Add) {
      Pair acc[4];
      std::memcpy(acc, sum + i, sizeof acc);
      for (int j = 0; j < 4; ++j) acc[j] += v[j];
      std::memcpy(static_cast<void*>(sum + i), acc, sizeof acc);
    }
    for (int h = 0; h < 2; ++h) {
      const Pair re = __builtin_shufflevector(v[2 * h], v[2 * h + 1], 0, 2);
      const Pair im = __builtin_shufflevector(v[2 * h], v[2 * h + 1], 1, 3);
      const Pair p = re * re + im * im;  // std::norm, per lane
      m[h] = p > m[h] ? p : m[h];
    }
  }
  double largest = std::max(std::max(m[0][0], m[0][1]), std::max(m[1][0], m[1][1]));
  for (; i < hi; ++i) {
    if constexpr (Add) sum[i] += z[i];
    const double p = std::norm(z[i]);
    largest = p > largest ? p : largest;
  }
  return largest;
}

bool same_cascade(const FilterCascade& a, const FilterCascade& b) {
  if (a.gain != b.gain || a.sections.size() != b.sections.size()) return false;
  for (std::size_t k = 0; k < a.sections.size(); ++k) {
    const Biquad &x = a.sections[k], &y = b.sections[k];
    if (x.b0 != y.b0 || x.b1 != y.b1 || x.b2 != y.b2 || x.a1 != y.a1 || x.a2 != y.a2) return false;
  }
  return true;
}

}  // namespace

Rendering render_sites(const std::vector<SoundComponent>& components, const std::vector<SoundGroup>& groups,
                       const TransmissionPlan& plan, std::size_t n_samples) {
  const double fs = plan.sample_rate_hz;
  const std::size_t n_sites = plan.sites.size();
  Rendering out;
  out.clean = SiteArray<float>(n_sites, n_samples, 0.0f);
  out.component_timing.assign(components.size(), std::vector<SoundTiming>(n_sites));
  out.group_timing.assign(groups.size(), std::vector<SoundTiming>(n_sites));

  // The sites of a group are worked in lockstep where they are independent, so that their
  // filters run together (filter_continue_together[_single]); every site's values are computed
  // exactly as if it were alone.
  std::vector<SiteSegment> seg(n_sites);
  std::vector<Complex*> data(n_sites), state(n_sites);
  std::vector<std::size_t> count(n_sites);
  // One cascade for every site (plan_transmission); otherwise each site is filtered alone.
  bool shared_filter = true;
  for (const SitePath& p : plan.sites) shared_filter = shared_filter && same_cascade(p.filter, plan.sites[0].filter);
  // Single precision where the filter's poles allow it (biquad.hpp): far inside the output
  // tolerance, half the vector work.
  const bool single = shared_filter && single_precision_suffices(plan.sites[0].filter);
  auto filter_sites = [&] {
    if (single) {
      filter_continue_together_single(plan.sites[0].filter, data.data(), count.data(), state.data(), n_sites);
      return;
    }
    if (shared_filter) {
      filter_continue_together(plan.sites[0].filter, data.data(), count.data(), state.data(), n_sites);
      return;
    }
    for (std::size_t s = 0; s < n_sites; ++s) filter_continue(plan.sites[s].filter, data[s], count[s], state[s]);
  };
  for (std::size_t g = 0; g < groups.size(); ++g) {
    const SoundGroup& group = groups[g];
    for (std::size_t s = 0; s < n_sites; ++s) {
      const SitePath& path = plan.sites[s];
      SiteSegment& q = seg[s];
      double begin_s = INFINITY, end_s = -INFINITY;
      for (std::size_t m : group.members) {
        const SoundComponent& c = components[m];
        double delay = path.delay_s[component_index(c.kind)];
        begin_s = std::min(begin_s, c.start_s + delay);
        end_s = std::max(end_s, c.support_end_s() + delay);
      }
      end_s += plan.filter_tail_s;
      q.first = static_cast<std::int64_t>(std::floor(begin_s * fs));
      auto last = static_cast<std::int64_t>(std::ceil(end_s * fs));
      q.len = static_cast<std::size_t>(last - q.first + 1);
      q.t_first_s = static_cast<double>(q.first) / fs;
      q.sum.assign(q.len, Complex{});
      q.member.resize(q.len);
      q.member_timing.clear();
      // Each member on its support [lo, hi): zero before it, below kSupportFraction of its peak
      // after it. All members are filtered up to the latest support end, hi_max; beyond it the
      // input is zero and the group's tail is the free response from the sum of their filter
      // states (linearity), computed once.
      q.spans.clear();
      q.hi_max = 0;
      for (std::size_t m : group.members) {
        const SoundComponent& c = components[m];
        double delay = path.delay_s[component_index(c.kind)];
        auto lo = std::min(q.len, static_cast<std::size_t>(std::max(0.0, std::floor((c.start_s + delay) * fs) - q.first)));
        auto hi = std::min(q.len, static_cast<std::size_t>(std::ceil((c.support_end_s() + delay) * fs) - q.first) + 1);
        q.spans.emplace_back(lo, std::max(hi, lo));
        q.hi_max = std::max(q.hi_max, q.spans.back().second);
      }
      q.tail_state.assign(2 * path.filter.sections.size(), Complex{});
    }

    for (std::size_t k = 0; k < group.members.size(); ++k) {
      const std::size_t m = group.members[k];
      const SoundComponent& c = components[m];
      const int ci = component_index(c.kind);
      for (std::size_t s = 0; s < n_sites; ++s) {
        SiteSegment& q = seg[s];
        const auto [lo, hi] = q.spans[k];
        double delay = plan.sites[s].delay_s[ci], weight = plan.sites[s].weight[ci];
        if (hi > lo)
          c.render(static_cast<double>(q.first + static_cast<std::int64_t>(lo)) / fs - delay, fs, hi - lo, weight,
                   q.member.data() + lo);
        std::fill(q.member.begin() + static_cast<std::ptrdiff_t>(hi), q.member.begin() + static_cast<std::ptrdiff_t>(q.hi_max),
                  Complex{});
        // From rest at lo: before it the filtered signal is exactly zero (zero state, zero input).
        q.member_state.assign(q.tail_state.size(), Complex{});
        data[s] = q.member.data() + lo;
        count[s] = q.hi_max - lo;
        state[s] = q.member_state.data();
      }
      filter_sites();
      for (std::size_t s = 0; s < n_sites; ++s) {
        SiteSegment& q = seg[s];
        const std::size_t lo = q.spans[k].first;
        for (std::size_t i = 0; i < q.tail_state.size(); ++i) q.tail_state[i] += q.member_state[i];
        const double largest = largest_power<true>(q.member.data(), q.sum.data(), lo, q.hi_max);
        // The member's site timing on [0, hi_max) (zero before lo): its filtered tail beyond
        // stays far below the 10 % threshold, so peak and crossings are those of the whole
        // filtered component.
        SoundTiming t = measure_analytic(q.member.data(), lo, q.hi_max, largest, q.t_first_s, fs, kEnvelopeThreshold);
        out.component_timing[m][s] = t;
        q.member_timing.push_back(t);
      }
    }

    for (std::size_t s = 0; s < n_sites; ++s) {
      data[s] = seg[s].sum.data() + seg[s].hi_max;
      count[s] = seg[s].len - seg[s].hi_max;
      state[s] = seg[s].tail_state.data();
    }
    filter_sites();
    for (std::size_t s = 0; s < n_sites; ++s) {
      SiteSegment& q = seg[s];
      const double largest = largest_power<false>(q.sum.data(), nullptr, 0, q.len);
      out.group_timing[g][s] = combine(
          q.member_timing, measure_analytic(q.sum.data(), 0, q.len, largest, q.t_first_s, fs, kEnvelopeThreshold));
      // Add the real part where the segment overlaps the record.
      float* row = out.clean.row(s);
      const std::int64_t last = q.first + static_cast<std::int64_t>(q.len) - 1;
      std::int64_t lo = std::max<std::int64_t>(q.first, 0);
      std::int64_t hi = std::min<std::int64_t>(last, static_cast<std::int64_t>(n_samples) - 1);
      for (std::int64_t k = lo; k <= hi; ++k) row[k] += static_cast<float>(q.sum[k - q.first].real());
    }
  }
  return out;
}

}  // namespace stethogen::gen
