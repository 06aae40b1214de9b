#include "bundle/merge.hpp"

#include <algorithm>
#include <csignal>
#include <optional>

#include <sys/resource.h>

#include <fmt/format.h>

#include "bundle/reader.hpp"
#include "bundle/writer.hpp"
#include "core/error.hpp"

namespace stethogen::bundle {

namespace fs = std::filesystem;

namespace {

struct Entry {
  std::uint64_t record_index = 0;
  std::size_t source = 0;  // input index; for a skipped record, its index in the skipped list
  std::string record_id;
  bool skipped = false;
};

std::string list_some(const std::vector<std::uint64_t>& indices) {
  std::string out;
  for (std::size_t i = 0; i < indices.size() && i < 10; ++i) out += (i ? ", " : "") + std::to_string(indices[i]);
  if (indices.size() > 10) out += fmt::format(" and {} more", indices.size() - 10);
  return out;
}

// libhdf5 1.10 can crash inside H5Ocopy after a failed write, so the copy must not start unless
// the output fits: within the file-size limit (ulimit -f) and the free space of its folder.
// Records are copied with their chunks as they are, so the inputs' total size bounds the result.
void check_room_for(const std::vector<fs::path>& inputs, const fs::path& output) {
  std::uintmax_t needed = 0;
  for (const fs::path& p : inputs) needed += fs::file_size(p);
  needed += needed / 50 + (1u << 20);  // index, attributes, allocation slack
  rlimit limit{};
  if (::getrlimit(RLIMIT_FSIZE, &limit) == 0 && limit.rlim_cur != RLIM_INFINITY && needed > limit.rlim_cur)
    throw RuntimeFailure(fmt::format("{}: File too large: the merged bundle needs about {} bytes, the file-size "
                                     "limit (ulimit -f) is {} bytes", output.string(), needed, limit.rlim_cur));
  const fs::path folder = output.has_parent_path() ? output.parent_path() : fs::path(".");
  std::error_code ec;
  const fs::space_info space = fs::space(folder, ec);
  if (!ec && needed > space.available)
    throw RuntimeFailure(fmt::format("{}: No space left on device: the merged bundle needs about {} bytes, {} has "
                                     "{} free", output.string(), needed, folder.string(), space.available));
}

// A write past the file-size limit is then an error the writer reports and cleans up after,
// instead of SIGXFSZ killing the process with the partial file left behind.
class IgnoreFileSizeSignal {
 public:
  IgnoreFileSizeSignal() : old_(std::signal(SIGXFSZ, SIG_IGN)) {}
  ~IgnoreFileSizeSignal() { std::signal(SIGXFSZ, old_); }
  IgnoreFileSizeSignal(const IgnoreFileSizeSignal&) = delete;
  IgnoreFileSizeSignal& operator=(const IgnoreFileSizeSignal&) = delete;

 private:
  void (*old_)(int);
};

}  // namespace

void merge_bundles(const std::vector<fs::path>& inputs, const fs::path& output, const MergeSpec& spec) {
  if (inputs.empty()) throw InputError("merge: no input bundles");
  if (fs::exists(output) && !spec.overwrite)
    throw InputError(fmt::format("{}: output exists; pass --force to replace it", output.string()));
  // First pass: what each input holds. Inputs are opened one at a time (a run may have many).
  std::optional<BundleAttributes> first;
  std::vector<Entry> entries;
  std::vector<SkippedRecord> skipped;
  for (std::size_t s = 0; s < inputs.size(); ++s) {
    const fs::path& p = inputs[s];
    if (fs::exists(output) && fs::equivalent(p, output))
      throw InputError(fmt::format("{}: an input cannot also be the output", p.string()));
    BundleReader r(p);
    const BundleAttributes& a = r.attributes();
    if (!first) first = a;
    if (a.recipe_sha256 != first->recipe_sha256)
      throw InputError(fmt::format("{}: from a different recipe (recipe_sha256 {} vs {} in {})", p.string(),
                                   a.recipe_sha256, first->recipe_sha256, inputs.front().string()));
    if (a.sample_format != first->sample_format || a.content != first->content || a.seed != first->seed)
      throw InputError(fmt::format("{}: sample format, content or seed differ from {}", p.string(),
                                   inputs.front().string()));
    for (const IndexRow& row : r.index()) entries.push_back({row.record_index, s, row.record_id, false});
    for (const SkippedRecord& k : r.skipped()) {
      entries.push_back({k.record_index, skipped.size(), k.record_id, true});
      skipped.push_back(k);
    }
  }
  std::stable_sort(entries.begin(), entries.end(),
                   [](const Entry& a, const Entry& b) { return a.record_index < b.record_index; });

  const RecordRange expect = spec.expect.value_or(RecordRange{0, first->record_count});
  std::vector<std::uint64_t> duplicates, missing, outside;
  std::uint64_t want = expect.begin;
  for (std::size_t i = 0; i < entries.size(); ++i) {
    std::uint64_t idx = entries[i].record_index;
    if (idx < expect.begin || idx >= expect.end) { outside.push_back(idx); continue; }
    if (i > 0 && entries[i - 1].record_index == idx) { duplicates.push_back(idx); continue; }
    for (; want < idx; ++want) missing.push_back(want);
    want = idx + 1;
  }
  for (; want < expect.end; ++want) missing.push_back(want);
  if (!duplicates.empty())
    throw InputError(fmt::format("merge: records appear more than once (record indices {}); each shard must be "
                                 "given once", list_some(duplicates)));
  if (!outside.empty())
    throw InputError(fmt::format("merge: records outside the expected range [{}, {}): {}", expect.begin, expect.end,
                                 list_some(outside)));
  if (!missing.empty())
    throw InputError(fmt::format("merge: {} of {} records are missing (record indices {}); is a shard missing?",
                                 missing.size(), expect.size(), list_some(missing)));

  // Second pass: copy in record order, keeping one input open at a time.
  BundleAttributes attributes = *first;
  attributes.created_utc.clear();
  attributes.shard_index = spec.shard.count > 1 ? static_cast<std::int32_t>(spec.shard.index) : -1;
  attributes.shard_count = spec.shard.count > 1 ? static_cast<std::int32_t>(spec.shard.count) : 0;
  check_room_for(inputs, output);
  const IgnoreFileSizeSignal file_size_errors;
  WriterOptions options;
  options.overwrite = spec.overwrite;
  options.temp_path = spec.temp_path;
  BundleWriter writer(output, attributes, options);
  std::optional<BundleReader> open;
  std::size_t open_source = 0;
  for (const Entry& e : entries) {
    if (e.skipped) {
      writer.add_skipped(skipped[e.source]);
      continue;
    }
    if (!open || open_source != e.source) {
      open.reset();
      open.emplace(inputs[e.source]);
      open_source = e.source;
    }
    writer.copy_record(*open, e.record_id);
  }
  open.reset();
  writer.finish();
}

}  // namespace stethogen::bundle
