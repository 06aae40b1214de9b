#include "bundle/progress.hpp"

#include <unistd.h>

#include <cstdio>

#include <fmt/format.h>

namespace stethogen::bundle {

namespace {

using Clock = std::chrono::steady_clock;
constexpr auto kBarInterval = std::chrono::milliseconds(200);
constexpr auto kLineInterval = std::chrono::seconds(10);

std::string clock_text(double seconds) {
  if (!(seconds >= 0) || seconds > 1e7) return "--:--:--";
  auto s = static_cast<long long>(seconds + 0.5);
  return fmt::format("{}:{:02}:{:02}", s / 3600, (s / 60) % 60, s % 60);
}

}  // namespace

ProgressMode progress_mode(bool quiet) {
  if (quiet) return ProgressMode::quiet;
  return isatty(fileno(stderr)) ? ProgressMode::bar : ProgressMode::lines;
}

Progress::Progress(ProgressMode mode, std::uint64_t total, std::uint64_t already_done)
    : mode_(mode), total_(total), done_(already_done), done_at_start_(already_done),
      start_(Clock::now()), last_draw_(start_) {}

std::string Progress::status() const {
  double elapsed = std::chrono::duration<double>(Clock::now() - start_).count();
  std::uint64_t fresh = done_ - done_at_start_;
  double rate = elapsed > 0 ? fresh / elapsed : 0;
  double eta = rate > 0 ? (total_ - done_) / rate : -1;
  return fmt::format("{}/{} records, {:.2f} h audio, {:.1f} rec/s, ETA {}", done_, total_, audio_s_ / 3600.0,
                     rate, clock_text(eta));
}

void Progress::draw(bool force) {
  if (mode_ == ProgressMode::quiet) return;
  auto now = Clock::now();
  auto interval = mode_ == ProgressMode::bar ? std::chrono::duration_cast<Clock::duration>(kBarInterval)
                                             : std::chrono::duration_cast<Clock::duration>(kLineInterval);
  if (!force && now - last_draw_ < interval) return;
  last_draw_ = now;
  if (mode_ == ProgressMode::bar) {
    constexpr int kWidth = 30;
    int filled = total_ ? static_cast<int>(kWidth * done_ / total_) : kWidth;
    fmt::print(stderr, "\r[{}{}] {}\033[K", std::string(filled, '#'), std::string(kWidth - filled, '.'), status());
    drawn_ = true;
  } else {
    fmt::print(stderr, "generate: {}\n", status());
  }
  std::fflush(stderr);
}

void Progress::advance(double audio_s) {
  ++done_;
  audio_s_ += audio_s;
  draw(false);
}

void Progress::note(const std::string& message) {
  if (mode_ == ProgressMode::bar && drawn_) fmt::print(stderr, "\r\033[K");
  fmt::print(stderr, "{}\n", message);
  if (mode_ == ProgressMode::bar && drawn_) draw(true);
}

void Progress::finish() {
  if (mode_ == ProgressMode::quiet) return;
  draw(true);
  if (mode_ == ProgressMode::bar) fmt::print(stderr, "\n");
}

}  // namespace stethogen::bundle
