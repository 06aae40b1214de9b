#include "bundle/run_directory.hpp"

#include <regex>

#include <fmt/format.h>

#include "bundle/scratch_file.hpp"

namespace stethogen::bundle {

namespace fs = std::filesystem;

std::string scratch_name(std::uint64_t first) { return fmt::format("rec-{:012}.stg", first); }

std::map<std::uint64_t, fs::path> scratch_files(const fs::path& workdir) {
  static const std::regex pattern(R"(rec-(\d{12})\.stg)");
  std::map<std::uint64_t, fs::path> found;
  for (const auto& entry : fs::directory_iterator(workdir)) {
    const std::string name = entry.path().filename().string();
    std::smatch m;
    if (std::regex_match(name, m, pattern)) found.emplace(std::stoull(m[1]), entry.path());
    else if (name.ends_with(".partial")) fs::remove(entry.path());
  }
  return found;
}

std::vector<std::uint64_t> data_generations(const fs::path& workdir) {
  static const std::regex pattern(R"(bundle-(\d{1,18})\.h5)");
  std::vector<std::uint64_t> found;
  for (const auto& entry : fs::directory_iterator(workdir)) {
    const std::string name = entry.path().filename().string();
    std::smatch m;
    if (std::regex_match(name, m, pattern)) found.push_back(std::stoull(m[1]));
  }
  return found;
}

void ScratchBatch::add(std::uint64_t index, std::vector<unsigned char> entry) {
  if (entries_.empty()) {
    first_ = index;
    started_ = std::chrono::steady_clock::now();
  }
  entries_.push_back(std::move(entry));
  if (entries_.size() >= kScratchRecords || std::chrono::steady_clock::now() - started_ >= kScratchInterval) save();
}

void ScratchBatch::save() {
  if (entries_.empty()) return;
  save_scratch(workdir_ / scratch_name(first_), entries_);
  entries_.clear();
}

void ScratchBatch::save_quietly() noexcept {
  try {
    save();
  } catch (...) {
  }
}

}  // namespace stethogen::bundle
