#include "generator/transmission/render.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
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

Rendering render_sites(const std::vector<SoundComponent>& components, const std::vector<SoundGroup>& groups,
                       const TransmissionPlan& plan, std::size_t n_samples) {
  const double fs = plan.sample_rate_hz;
  const std::size_t n_sites = plan.sites.size();
  Rendering out;
  out.clean = SiteArray<float>(n_sites, n_samples, 0.0f);
  out.component_timing.assign(components.size(), std::vector<SoundTiming>(n_sites));
  out.group_timing.assign(groups.size(), std::vector<SoundTiming>(n_sites));

  std::vector<Complex> member, sum, member_state, tail_state;
  std::vector<std::pair<std::size_t, std::size_t>> spans;
  std::vector<double> envelope;
  std::vector<SoundTiming> member_timing;
  for (std::size_t g = 0; g < groups.size(); ++g) {
    const SoundGroup& group = groups[g];
    for (std::size_t s = 0; s < n_sites; ++s) {
      const SitePath& path = plan.sites[s];
      double begin_s = INFINITY, end_s = -INFINITY;
      for (std::size_t m : group.members) {
        const SoundComponent& c = components[m];
        double delay = path.delay_s[component_index(c.kind)];
        begin_s = std::min(begin_s, c.start_s + delay);
        end_s = std::max(end_s, c.support_end_s() + delay);
      }
      end_s += plan.filter_tail_s;
      auto first = static_cast<std::int64_t>(std::floor(begin_s * fs));
      auto last = static_cast<std::int64_t>(std::ceil(end_s * fs));
      auto len = static_cast<std::size_t>(last - first + 1);
      double t_first = static_cast<double>(first) / fs;
      sum.assign(len, Complex{});
      member.resize(len);
      envelope.resize(len);
      member_timing.clear();

      // Each member on its support [lo, hi): zero before it, below kSupportFraction of its peak
      // after it. All members are filtered up to the latest support end, hi_max; beyond it the
      // input is zero and the group's tail is the free response from the sum of their filter
      // states (linearity), computed once.
      spans.clear();
      std::size_t hi_max = 0;
      for (std::size_t m : group.members) {
        const SoundComponent& c = components[m];
        double delay = path.delay_s[component_index(c.kind)];
        auto lo = std::min(len, static_cast<std::size_t>(std::max(0.0, std::floor((c.start_s + delay) * fs) - first)));
        auto hi = std::min(len, static_cast<std::size_t>(std::ceil((c.support_end_s() + delay) * fs) - first) + 1);
        spans.emplace_back(lo, std::max(hi, lo));
        hi_max = std::max(hi_max, spans.back().second);
      }
      tail_state.assign(2 * path.filter.sections.size(), Complex{});
      for (std::size_t k = 0; k < group.members.size(); ++k) {
        const SoundComponent& c = components[group.members[k]];
        const auto [lo, hi] = spans[k];
        int ci = component_index(c.kind);
        double delay = path.delay_s[ci], weight = path.weight[ci];
        if (hi > lo)
          c.render(static_cast<double>(first + static_cast<std::int64_t>(lo)) / fs - delay, fs, hi - lo, weight,
                   member.data() + lo);
        std::fill(member.begin() + static_cast<std::ptrdiff_t>(hi), member.begin() + static_cast<std::ptrdiff_t>(hi_max),
                  Complex{});
        // From rest at lo: before it the filtered signal is exactly zero (zero state, zero input).
        member_state.assign(tail_state.size(), Complex{});
        filter_continue(path.filter, member.data() + lo, hi_max - lo, member_state.data());
        for (std::size_t i = 0; i < tail_state.size(); ++i) tail_state[i] += member_state[i];
        std::fill(envelope.begin(), envelope.begin() + static_cast<std::ptrdiff_t>(lo), 0.0);
        for (std::size_t i = lo; i < hi_max; ++i) {
          envelope[i] = std::sqrt(std::norm(member[i]));  // not std::abs: hypot is slow
          sum[i] += member[i];
        }
        // The member's site timing on [0, hi_max): its filtered tail beyond stays far below the
        // 10 % threshold, so peak and crossings are those of the whole filtered component.
        SoundTiming t = measure_envelope(envelope.data(), hi_max, t_first, fs, kEnvelopeThreshold);
        out.component_timing[group.members[k]][s] = t;
        member_timing.push_back(t);
      }
      filter_continue(path.filter, sum.data() + hi_max, len - hi_max, tail_state.data());
      for (std::size_t i = 0; i < len; ++i) envelope[i] = std::sqrt(std::norm(sum[i]));
      out.group_timing[g][s] =
          combine(member_timing, measure_envelope(envelope.data(), len, t_first, fs, kEnvelopeThreshold));

      // Add the real part where the segment overlaps the record.
      float* row = out.clean.row(s);
      std::int64_t lo = std::max<std::int64_t>(first, 0);
      std::int64_t hi = std::min<std::int64_t>(last, static_cast<std::int64_t>(n_samples) - 1);
      for (std::int64_t k = lo; k <= hi; ++k) row[k] += static_cast<float>(sum[k - first].real());
    }
  }
  return out;
}

}  // namespace stethogen::gen
