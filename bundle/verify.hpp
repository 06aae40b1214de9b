// `verify`: is a bundle intact and what its recipe says it is? Three checks:
//   schema     every documented group, dataset, dtype, shape and attribute (docs/bundle-format.md);
//   checksums  every chunk of every record read back, so Fletcher32 and decompression errors
//              surface with the record and dataset named;
//   regenerate a deterministic sample of records synthesised again from the embedded recipe and
//              compared bit for bit with what is stored (checksums alone cannot catch data
//              rewritten by another tool, which recomputes them).
// created_utc is the one attribute allowed to differ and is never compared.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "bundle/reader.hpp"

namespace stethogen::bundle {

struct VerifyOptions {
  std::size_t sample = 3;  // records to regenerate; 0 skips the regeneration check
  // Folder that noise recordings named by the recipe are relative to (the original recipe's
  // folder); default: the bundle's folder.
  std::optional<std::filesystem::path> recipe_dir;
};

enum class FindingKind : std::uint8_t {
  schema,      // a documented path, dtype, shape or attribute is missing or wrong
  checksum,    // a chunk fails its checksum or does not decompress
  mismatch,    // regenerated data differ from the stored data
  incomplete,  // a check could not run (e.g. a noise recording is absent)
};
std::string_view name(FindingKind kind);

struct Finding {
  FindingKind kind = FindingKind::schema;
  std::string record_id;  // "" for dataset-level findings
  std::string message;    // names the dataset path
};

struct VerifyReport {
  std::vector<Finding> findings;
  std::size_t schema_objects = 0;       // groups, datasets and attributes checked
  std::size_t records_read = 0;         // records whose every chunk was read
  std::vector<std::string> regenerated; // records regenerated and compared
  std::vector<std::string> notes;       // informational, no effect on the exit code
  // 0 all passed, 1 corruption or mismatch, 2 a check could not run (input missing).
  int exit_code() const;
};

// Up to n record ids spread over the populations: round-robin over populations in file order,
// evenly spaced within each. Deterministic.
std::vector<std::string> regeneration_sample(const std::vector<IndexRow>& index, std::size_t n);

using VerifyProgress = std::function<void(const std::string& stage, std::size_t done, std::size_t total)>;

VerifyReport verify_bundle(const BundleReader& reader, const VerifyOptions& options,
                           const VerifyProgress& progress = {});

// The parts, also usable alone (each appends its findings).
void verify_schema(const BundleReader& reader, VerifyReport& report);
void verify_checksums(const BundleReader& reader, VerifyReport& report, const VerifyProgress& progress = {});
void verify_regeneration(const BundleReader& reader, const VerifyOptions& options, VerifyReport& report,
                         const VerifyProgress& progress = {});

std::string format_verify_report(const BundleReader& reader, const VerifyReport& report);

}  // namespace stethogen::bundle
