// A run's scratch files: notes that records are in the run's data file (or were skipped), saved
// by generate's HDF5 thread once the records are written, so `generate --resume` can carry on
// after an interruption. Not HDF5. A scratch file holds consecutive records; for each, the staged
// record's metadata and, for each of its chunks, its size, check value (its Fletcher32, or a
// CRC-32 for a chunk without one) and byte offset in the data file, the partial bundle
// `data_file_name(generation)` beside it. The chunks themselves are only in the data file (written
// once), so a resume reads them back from there and checks every byte. Layout (little-endian):
// magic, header size, header (entry count, then each entry's size and bytes), CRC-32 of the
// header. The file is written under a temporary name and renamed, so it is complete or absent.
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
  std::vector<std::uint32_t> chunk_checks;  // filled by load_scratch, checked by load_chunks
  std::vector<std::uint64_t> chunk_bytes;   // filled by load_scratch
};

// The data file of a generation: each start or resume of a run writes a new one ("bundle-3.h5").
std::string data_file_name(std::uint64_t generation);

// An entry as a scratch file stores it: its metadata, its chunks' sizes, checks and offsets.
std::vector<unsigned char> scratch_bytes(const ScratchEntry& entry);

// Writes entries (scratch_bytes of consecutive records) to `path` via "<path>.partial". Throws
// RuntimeFailure naming the file and the system's reason (e.g. "No space left on device"); no
// file is left behind then.
void save_scratch(const std::filesystem::path& path, const std::vector<std::vector<unsigned char>>& entries);

// The entries of a scratch file, each record's chunks sized but not read. Throws RuntimeFailure
// naming the file when it is unreadable, truncated or damaged.
std::vector<ScratchEntry> load_scratch(const std::filesystem::path& path);

// Reads a loaded record's chunks from data_dir / data_file_name(generation) and checks every byte.
// Throws RuntimeFailure naming `path` (its scratch file) when they are missing, cut short or damaged.
void load_chunks(ScratchEntry& entry, const std::filesystem::path& data_dir, const std::filesystem::path& path);

}  // namespace stethogen::bundle
