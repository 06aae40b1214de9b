// Progress of a generate run on stderr: a redrawn bar on a terminal (records done/total, audio
// hours, rate, ETA), plain lines every few seconds otherwise, nothing when quiet.
#pragma once

#include <chrono>
#include <cstdint>
#include <string>

namespace stethogen::bundle {

enum class ProgressMode { bar, lines, quiet };

// bar if stderr is a terminal, else lines; quiet wins.
ProgressMode progress_mode(bool quiet);

class Progress {
 public:
  // already_done: records finished by an earlier (resumed) run; they do not count in the rate.
  Progress(ProgressMode mode, std::uint64_t total, std::uint64_t already_done);
  // One more record finished (written or skipped) with this much audio (seconds per site x sites
  // is not counted: one record of 30 s is 30 s of audio whatever its site count).
  void advance(double audio_s);
  // Final line; clears the bar.
  void finish();
  // Prints a message without tearing the bar.
  void note(const std::string& message);

  // "12/40 records, 0.10 h audio, 3.2 rec/s, ETA 0:00:09"
  std::string status() const;

 private:
  void draw(bool force);

  ProgressMode mode_;
  std::uint64_t total_, done_, done_at_start_;
  double audio_s_ = 0;
  std::chrono::steady_clock::time_point start_, last_draw_;
  bool drawn_ = false;
};

}  // namespace stethogen::bundle
