// Output files that appear complete or not at all: each is written under a temporary name
// beside its final path and renamed into place once closed without error.
#pragma once

#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

namespace stethogen::bundle {

// A temporary sibling of final_path; removed by the destructor unless commit() succeeded.
class StagedPath {
 public:
  explicit StagedPath(std::filesystem::path final_path);
  StagedPath(const StagedPath&) = delete;
  StagedPath& operator=(const StagedPath&) = delete;
  ~StagedPath();

  const std::filesystem::path& temp_path() const { return temp_; }
  const std::filesystem::path& final_path() const { return final_; }
  // Renames the temporary file onto the final path (replacing it). Throws RuntimeFailure.
  void commit();

 private:
  std::filesystem::path final_;
  std::filesystem::path temp_;
  bool committed_ = false;
};

// A text file written through a StagedPath. finish() flushes, checks and closes the stream
// (throws RuntimeFailure on a write error); commit() renames it into place; close() does both.
// Finishing a set of files before committing any keeps the set all-or-nothing on a full disk.
class StagedTextFile {
 public:
  explicit StagedTextFile(std::filesystem::path final_path);
  std::ofstream& stream() { return out_; }
  void finish();
  void commit() { staged_.commit(); }
  void close() {
    finish();
    commit();
  }

 private:
  StagedPath staged_;
  std::ofstream out_;
};

// Refuses (InputError) when any of paths exists and force is false, naming the first few.
void check_not_overwriting(const std::vector<std::filesystem::path>& paths, bool force);

}  // namespace stethogen::bundle
