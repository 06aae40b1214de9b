// libFuzzer target: the bundle reader on arbitrary bytes written to a temporary file, followed
// by the reads `inspect` and `score` make (summary, per-record detail, whole records, truth).
// A malformed file must be an InputError or a RuntimeFailure; anything else is a finding.
// Note: libhdf5 itself is not instrumented; a crash inside it is reported with its stack.
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <string>

#include "bundle/inspect.hpp"
#include "bundle/reader.hpp"
#include "core/error.hpp"
#include "scoring/truth.hpp"

namespace {

// At most this many records are read per input, so one input stays fast.
constexpr std::size_t kMaxRecordsRead = 3;

std::filesystem::path temp_path() {
  static const std::filesystem::path p =
      std::filesystem::temp_directory_path() / ("stethogen-fuzz-" + std::to_string(::getpid()) + ".h5");
  return p;
}

void exercise(const std::filesystem::path& path) {
  using namespace stethogen;
  const bundle::BundleReader reader(path);
  const bundle::DatasetSummary summary = bundle::summarize_dataset(reader);
  (void)bundle::format_summary(summary);
  (void)bundle::summary_json(summary).dump(2, ' ', false, nlohmann::json::error_handler_t::replace);  // as the CLI
  std::size_t n = 0;
  for (const std::string& id : reader.record_ids()) {
    if (n++ == kMaxRecordsRead) break;
    const bundle::RecordDetail detail = bundle::describe_record(reader, id);
    (void)bundle::format_record(detail);
    (void)bundle::record_json(detail).dump(2, ' ', false, nlohmann::json::error_handler_t::replace);
    (void)reader.read_record(id);
    reader.check_record_data(id);
  }
  const scoring::BundleTruth truth(path);
  for (std::size_t i = 0; i < truth.records().size() && i < kMaxRecordsRead; ++i) (void)truth.load(i, true);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::filesystem::path path = temp_path();
  {
    std::FILE* f = std::fopen(path.c_str(), "wb");
    if (f == nullptr) __builtin_trap();
    if (size > 0 && std::fwrite(data, 1, size, f) != size) __builtin_trap();
    std::fclose(f);
  }
  try {
    exercise(path);
  } catch (const stethogen::InputError&) {
  } catch (const stethogen::RuntimeFailure&) {
  }
  std::filesystem::remove(path);
  return 0;
}
