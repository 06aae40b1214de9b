// `export`: a bundle as files other tools read. Audio: one mono file per record and site,
// "<record_id>_<site>.<wav|flac>", at the bundle's sample rate (quantisation in
// bundle/export_audio.hpp). CSV: index.csv plus the truth tables of bundle/export_truth.hpp.
// Every file is staged under a temporary name and renamed when complete; existing files are
// refused (before anything is written) unless force is set.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "bundle/export_audio.hpp"
#include "bundle/export_files.hpp"
#include "bundle/reader.hpp"

namespace stethogen::bundle {

enum class ExportFormat : std::uint8_t { wav, flac, csv };
std::optional<ExportFormat> parse_export_format(std::string_view s);  // "wav", "flac", "csv"

struct ExportOptions {
  ExportFormat format = ExportFormat::wav;
  std::filesystem::path out_dir;
  AudioEncoding encoding = AudioEncoding::pcm16;
  std::vector<std::string> records;  // empty: all, in file order
  bool clean = false;                // audio from pcg_clean instead of the noisy pcg
  bool force = false;                // replace existing files
};

struct ExportReport {
  std::size_t records = 0;
  std::vector<std::filesystem::path> files;  // written, in order
  std::size_t clipped_samples = 0;           // integer audio: samples clipped at full scale
  std::size_t clipped_files = 0;
};

// The records to export: options.records checked against the bundle (InputError with a
// did-you-mean suggestion for an unknown id), or all of them.
std::vector<std::string> select_records(const BundleReader& reader, const std::vector<std::string>& requested);

// The files an export would write, in order.
std::vector<std::filesystem::path> export_targets(const BundleReader& reader, const ExportOptions& options);

// Runs the export. progress (optional) is called after each record with (done, total).
ExportReport export_bundle(const BundleReader& reader, const ExportOptions& options,
                           const std::function<void(std::size_t, std::size_t)>& progress = {});

// index.csv: the /index table, one row per given row (header = IndexRow field names), written
// into file (not finished or committed).
void write_index_csv(StagedTextFile& file, const std::vector<IndexRow>& rows);

}  // namespace stethogen::bundle
