// The files of a run directory `<output>.partial/` besides run.json (docs/bundle-format.md,
// "How a run writes"): the partial bundles (data files, one per start or resume of the run) and
// the scratch files noting which records are in them (bundle/scratch_file.hpp). A scratch file
// rec-<first>.stg holds the records from <first> written within kScratchInterval, at most
// kScratchRecords of them: each new file costs the file system an inode (about 1 ms on a busy
// ext4), and a kill loses at most that much work.
#pragma once

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace stethogen::bundle {

inline constexpr auto kScratchInterval = std::chrono::milliseconds(250);
inline constexpr std::size_t kScratchRecords = 16;

std::string scratch_name(std::uint64_t first);

// The scratch files of the run by first record; removes partial (temporary) files.
std::map<std::uint64_t, std::filesystem::path> scratch_files(const std::filesystem::path& workdir);

// The generations of the data files in the run directory.
std::vector<std::uint64_t> data_generations(const std::filesystem::path& workdir);

// Records noted since the last scratch file, saved together.
class ScratchBatch {
 public:
  explicit ScratchBatch(std::filesystem::path workdir) : workdir_(std::move(workdir)) {}
  // The entry (scratch_bytes) of record `index`, the one after the last added.
  void add(std::uint64_t index, std::vector<unsigned char> entry);
  void save();
  // On the way out after another error: what can be saved is, a second error is not reported.
  void save_quietly() noexcept;

 private:
  std::filesystem::path workdir_;
  std::uint64_t first_ = 0;
  std::chrono::steady_clock::time_point started_;
  std::vector<std::vector<unsigned char>> entries_;
};

}  // namespace stethogen::bundle
