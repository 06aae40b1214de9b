#include "bundle/export_files.hpp"

#include <unistd.h>

#include <atomic>
#include <system_error>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle {
namespace fs = std::filesystem;

namespace {
// Distinguishes temporary names of files staged at the same time by one process.
std::atomic<unsigned> staged_counter{0};
}  // namespace

StagedPath::StagedPath(fs::path final_path) : final_(std::move(final_path)) {
  temp_ = final_;
  temp_.replace_filename(fmt::format(".{}.tmp-{}-{}", final_.filename().string(), ::getpid(),
                                     staged_counter.fetch_add(1)));
}

StagedPath::~StagedPath() {
  if (committed_) return;
  std::error_code ignored;
  fs::remove(temp_, ignored);
}

void StagedPath::commit() {
  std::error_code ec;
  fs::rename(temp_, final_, ec);
  if (ec) throw RuntimeFailure(fmt::format("cannot rename {} to {}: {}", temp_.string(), final_.string(), ec.message()));
  committed_ = true;
}

StagedTextFile::StagedTextFile(fs::path final_path) : staged_(std::move(final_path)) {
  out_.open(staged_.temp_path(), std::ios::out | std::ios::trunc | std::ios::binary);
  if (!out_) throw RuntimeFailure(fmt::format("cannot create {}", staged_.temp_path().string()));
}

void StagedTextFile::finish() {
  out_.flush();
  bool ok = static_cast<bool>(out_);
  out_.close();
  if (!ok || out_.fail())
    throw RuntimeFailure(fmt::format("writing {} failed (disk full or not writable?)", staged_.final_path().string()));
}

void check_not_overwriting(const std::vector<fs::path>& paths, bool force) {
  if (force) return;
  std::vector<std::string> existing;
  for (const auto& p : paths)
    if (fs::exists(p)) existing.push_back(p.string());
  if (existing.empty()) return;
  std::string shown = existing.front();
  if (existing.size() > 1) shown += fmt::format(" (and {} more)", existing.size() - 1);
  throw InputError(fmt::format("{} already exists: nothing was written; pass --force to overwrite", shown));
}

}  // namespace stethogen::bundle
