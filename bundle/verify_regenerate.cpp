// The regeneration check of `verify` (bundle/verify.hpp): the sampled records are planned and
// synthesised again from the embedded recipe, written through the same writer to a scratch
// bundle (so storage conversions such as int16 quantisation apply identically) and compared
// bit for bit with the stored records.
#include <openssl/sha.h>
#include <unistd.h>

#include <atomic>
#include <map>
#include <set>
#include <system_error>

#include <fmt/format.h>

#include "bundle/record_compare.hpp"
#include "bundle/verify.hpp"
#include "bundle/writer.hpp"
#include "core/error.hpp"
#include "generator/pipeline.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::bundle {
namespace fs = std::filesystem;
namespace {

std::atomic<unsigned> scratch_counter{0};

// A scratch bundle path in the system temporary folder, removed on scope exit.
struct ScratchBundle {
  fs::path path = fs::temp_directory_path() /
                  fmt::format("stethogen-verify-{}-{}.h5", ::getpid(), scratch_counter.fetch_add(1));
  ~ScratchBundle() {
    std::error_code ignored;
    fs::remove(path, ignored);
    fs::remove(fs::path(path.string() + ".partial"), ignored);
  }
};

std::string sha256_hex(const std::string& text) {
  unsigned char digest[SHA256_DIGEST_LENGTH];
  SHA256(reinterpret_cast<const unsigned char*>(text.data()), text.size(), digest);
  std::string hex;
  for (unsigned char byte : digest) hex += fmt::format("{:02x}", byte);
  return hex;
}

}  // namespace

void verify_regeneration(const BundleReader& reader, const VerifyOptions& options, VerifyReport& report,
                         const VerifyProgress& progress) {
  const BundleAttributes& attributes = reader.attributes();
  if (attributes.content == "public") {
    report.notes.push_back("a public (blinded) bundle carries no recipe: regeneration does not apply; verify the key "
                           "bundle or the full bundle instead");
    return;
  }
  // A key bundle (from split) keeps the full records under their public ids.
  const bool renamed_ids = attributes.content == "key";
  const fs::path recipe_dir = options.recipe_dir ? *options.recipe_dir : fs::absolute(reader.path()).parent_path();
  // Noise recordings resolve against the folder of the source name (noise/profile.hpp).
  const std::string source_name = (recipe_dir / (reader.path().filename().string() + "#recipe_toml")).string();

  // The hash first, from the raw text: a damaged recipe may no longer parse.
  const std::string recipe_sha256 = sha256_hex(attributes.recipe_toml);
  if (recipe_sha256 != attributes.recipe_sha256)
    report.findings.push_back({FindingKind::mismatch, "",
                               fmt::format("/: recipe_sha256 attribute {} does not match the SHA-256 of recipe_toml ({})",
                                           attributes.recipe_sha256, recipe_sha256)});

  recipe::Recipe recipe;
  try {
    recipe = recipe::parse_recipe(attributes.recipe_toml, source_name);
  } catch (const InputError& e) {
    report.findings.push_back(
        {FindingKind::incomplete, "",
         fmt::format("cannot rebuild the embedded recipe (noise recordings are looked up relative to {}; pass "
                     "--recipe-dir with the original recipe's folder if they live elsewhere): {}",
                     recipe_dir.string(), e.what())});
    return;
  }

  // Records whose chunks are damaged cannot be read for comparison (already reported).
  std::set<std::string> damaged;
  for (const Finding& f : report.findings)
    if (f.kind == FindingKind::checksum) damaged.insert(f.record_id);
  std::vector<std::string> sample;
  for (const std::string& id : regeneration_sample(reader.index(), options.sample))
    if (!damaged.count(id)) sample.push_back(id);
  std::map<std::string, const IndexRow*> rows;
  for (const IndexRow& row : reader.index()) rows[row.record_id] = &row;

  ScratchBundle scratch;
  std::vector<std::string> written;
  {
    BundleWriter writer(scratch.path, attributes, WriterOptions{{}, true});
    for (std::size_t i = 0; i < sample.size(); ++i) {
      const std::string& id = sample[i];
      const IndexRow& row = *rows.at(id);
      try {
        SubjectSpec subject = recipe::plan_record(recipe, row.record_index);
        if (subject.record_id != id && !renamed_ids) {
          report.findings.push_back({FindingKind::mismatch, id,
                                     fmt::format("/index: record_index {} plans as record {}, not {}", row.record_index,
                                                 subject.record_id, id)});
          continue;
        }
        writer.write_record(gen::synthesize_record(subject), reader.parts(id), id);
        written.push_back(id);
      } catch (const std::out_of_range&) {
        report.findings.push_back({FindingKind::mismatch, id,
                                   fmt::format("/index: record_index {} lies beyond the recipe's {} records",
                                               row.record_index, recipe::record_count(recipe))});
      } catch (const RecordFailure& e) {
        report.findings.push_back({FindingKind::mismatch, id, fmt::format("regeneration failed: {}", e.what())});
      } catch (const InputError& e) {
        report.findings.push_back({FindingKind::mismatch, id, fmt::format("the planned subject is refused: {}", e.what())});
      }
      if (progress) progress("regenerate", i + 1, sample.size());
    }
    writer.finish();
  }

  const BundleReader regenerated(scratch.path);
  for (const std::string& id : written) {
    const RecordParts parts = reader.parts(id);
    for (const RecordDifference& d : compare_records(id, reader.read_record(id), regenerated.read_record(id), parts))
      report.findings.push_back({FindingKind::mismatch, id, fmt::format("{}: {}", d.dataset, d.message)});
    for (const IndexRow& row : regenerated.index())
      if (row.record_id == id)
        for (const RecordDifference& d : compare_index_rows(*rows.at(id), row))
          report.findings.push_back({FindingKind::mismatch, id, fmt::format("{}: {}", d.dataset, d.message)});
    report.regenerated.push_back(id);
  }
}

}  // namespace stethogen::bundle
