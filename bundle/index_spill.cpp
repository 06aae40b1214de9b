#include "bundle/index_spill.hpp"

#include <stdlib.h>
#include <unistd.h>

#include <cerrno>
#include <cstdint>
#include <cstring>
#include <string>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle {

namespace {

// The numeric fields of a row, in a fixed order; strings travel as a length and their bytes.
struct Numbers {
  std::uint64_t record_index;
  double exercise_intensity, severity, heart_rate_bpm, cardiac_output_l_min, lv_ejection_fraction,
      rv_ejection_fraction, snr_db, snr_achieved_db, duration_s;
  std::int64_t n_samples;
  std::int32_t sample_rate_hz, n_sites, n_beats;
};

template <typename Row, typename F>
void for_each_string(Row& r, F f) {
  f(r.record_id);
  f(r.population);
  f(r.state);
  f(r.sensor);
  f(r.noise_profile);
}

void keep_longer(std::string& widest, const std::string& value) {
  if (value.size() > widest.size()) widest = value;
}

}  // namespace

IndexSpill::IndexSpill(const std::filesystem::path& directory)
    : directory_(directory.empty() ? std::filesystem::path(".") : directory) {
  std::string name = (directory_ / ".index-rows-XXXXXX").string();
  const int fd = ::mkstemp(name.data());
  if (fd < 0)
    throw RuntimeFailure(fmt::format("{}: cannot create a temporary file for the index rows: {}",
                                     directory_.string(), std::strerror(errno)));
  ::unlink(name.c_str());
  file_ = ::fdopen(fd, "w+b");
  if (!file_) {
    ::close(fd);
    throw RuntimeFailure(fmt::format("{}: cannot open the index rows' temporary file", directory_.string()));
  }
}

IndexSpill::~IndexSpill() {
  if (file_) std::fclose(file_);
}

void IndexSpill::append(const IndexRow& r) {
  const Numbers n{r.record_index,      r.exercise_intensity,   r.severity,       r.heart_rate_bpm,
                  r.cardiac_output_l_min, r.lv_ejection_fraction, r.rv_ejection_fraction, r.snr_db,
                  r.snr_achieved_db,   r.duration_s,           r.n_samples,      r.sample_rate_hz,
                  r.n_sites,           r.n_beats};
  bool ok = std::fwrite(&n, sizeof n, 1, file_) == 1;
  for_each_string(r, [&](const std::string& s) {
    const auto length = static_cast<std::uint32_t>(s.size());
    ok = ok && std::fwrite(&length, sizeof length, 1, file_) == 1 && std::fwrite(s.data(), 1, s.size(), file_) == s.size();
  });
  if (!ok)
    throw RuntimeFailure(fmt::format("{}: cannot write the index rows' temporary file: {}", directory_.string(),
                                     std::strerror(errno)));
  keep_longer(widest_.record_id, r.record_id);
  keep_longer(widest_.population, r.population);
  keep_longer(widest_.state, r.state);
  keep_longer(widest_.sensor, r.sensor);
  keep_longer(widest_.noise_profile, r.noise_profile);
  ++rows_;
}

void IndexSpill::read_blocks(std::size_t block_rows, const std::function<void(const std::vector<IndexRow>&)>& block) {
  const auto fail = [&](const char* what) {
    return RuntimeFailure(fmt::format("{}: {} the index rows' temporary file", directory_.string(), what));
  };
  if (std::fflush(file_) != 0 || std::fseek(file_, 0, SEEK_SET) != 0) throw fail("cannot write");
  std::vector<IndexRow> rows;
  rows.reserve(std::min(block_rows, rows_));
  for (std::size_t done = 0; done < rows_;) {
    rows.resize(std::min(block_rows, rows_ - done));
    for (IndexRow& r : rows) {
      Numbers n;
      bool ok = std::fread(&n, sizeof n, 1, file_) == 1;
      for_each_string(r, [&](std::string& s) {
        std::uint32_t length = 0;
        ok = ok && std::fread(&length, sizeof length, 1, file_) == 1;
        if (ok) s.resize(length);
        ok = ok && std::fread(s.data(), 1, length, file_) == length;
      });
      if (!ok) throw fail("cannot read back");
      r.record_index = n.record_index;
      r.exercise_intensity = n.exercise_intensity;
      r.severity = n.severity;
      r.heart_rate_bpm = n.heart_rate_bpm;
      r.cardiac_output_l_min = n.cardiac_output_l_min;
      r.lv_ejection_fraction = n.lv_ejection_fraction;
      r.rv_ejection_fraction = n.rv_ejection_fraction;
      r.snr_db = n.snr_db;
      r.snr_achieved_db = n.snr_achieved_db;
      r.duration_s = n.duration_s;
      r.n_samples = n.n_samples;
      r.sample_rate_hz = n.sample_rate_hz;
      r.n_sites = n.n_sites;
      r.n_beats = n.n_beats;
    }
    block(rows);
    done += rows.size();
  }
  if (std::fseek(file_, 0, SEEK_END) != 0) throw fail("cannot seek in");
}

}  // namespace stethogen::bundle
