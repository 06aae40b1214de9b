// A run's scratch file: one finished record (or the note that it was skipped), saved by the
// synthesis thread that made it so `generate --resume` can carry on after an interruption. Not
// HDF5: the staged record's metadata, then its already-filtered chunks as they will be stored.
// Layout (little-endian): magic, header size, header, CRC-32 of the header, chunk bytes. The
// header lists every chunk's size and check value (its Fletcher32, or a CRC-32 for a chunk
// without one), so the load checks every byte; the file is written under a temporary name and
// renamed, so a scratch file is complete or absent.
#pragma once

#include <filesystem>
#include <optional>

#include "bundle/index_row.hpp"
#include "bundle/staged_record.hpp"

namespace stethogen::bundle {

struct ScratchEntry {
  std::optional<StagedRecord> record;  // exactly one of the two
  std::optional<SkippedRecord> skipped;
};

// Writes `path` via "<path>.partial". Throws RuntimeFailure naming the file and the system's
// reason (e.g. "No space left on device"); no file is left behind then.
void save_scratch(const std::filesystem::path& path, const ScratchEntry& entry);

// Throws RuntimeFailure naming the file when it is unreadable, truncated or damaged.
ScratchEntry load_scratch(const std::filesystem::path& path);

}  // namespace stethogen::bundle
