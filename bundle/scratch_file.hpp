// A run's scratch file: the note that one record is in the run's data file (or was skipped),
// saved by generate's HDF5 thread once the record is written, so `generate --resume` can carry on
// after an interruption. Not HDF5: the staged record's metadata and, for each of its chunks, its
// size, check value (its Fletcher32, or a CRC-32 for a chunk without one) and byte offset in the
// data file, the partial bundle `data_file_name(generation)` beside it. The chunks themselves are
// only in the data file (written once), so after a kill the load reads them back from there and
// checks every byte. Layout (little-endian): magic, header size, header, CRC-32 of the header.
// The file is written under a temporary name and renamed, so a scratch file is complete or absent.
#pragma once

#include <filesystem>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "bundle/index_row.hpp"
#include "bundle/staged_record.hpp"

namespace stethogen::bundle {

struct ScratchEntry {
  std::optional<StagedRecord> record;  // exactly one of the two
  std::optional<SkippedRecord> skipped;
  // A record's chunks: in data_file_name(generation), at these byte offsets (in the order of its
  // objects and their chunks, as BundleWriter::write_staged reports them).
  std::uint64_t generation = 0;
  std::vector<std::uint64_t> chunk_offsets;
};

// The data file of a generation: each start or resume of a run writes a new one ("bundle-3.h5").
std::string data_file_name(std::uint64_t generation);

// Writes `path` via "<path>.partial". Throws RuntimeFailure naming the file and the system's
// reason (e.g. "No space left on device"); no file is left behind then.
void save_scratch(const std::filesystem::path& path, const ScratchEntry& entry);

// The entry, its chunks read from data_dir / data_file_name(generation). Throws RuntimeFailure
// naming the file when the scratch file or the chunks are unreadable, truncated or damaged.
ScratchEntry load_scratch(const std::filesystem::path& path, const std::filesystem::path& data_dir);

}  // namespace stethogen::bundle
