#include "bundle/verify.hpp"

#include <algorithm>
#include <map>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/version.hpp"

namespace stethogen::bundle {

std::string_view name(FindingKind kind) {
  switch (kind) {
    case FindingKind::schema: return "schema";
    case FindingKind::checksum: return "checksum";
    case FindingKind::mismatch: return "mismatch";
    case FindingKind::incomplete: return "incomplete";
  }
  return "?";
}

int VerifyReport::exit_code() const {
  bool failed = std::any_of(findings.begin(), findings.end(), [](const Finding& f) { return f.kind != FindingKind::incomplete; });
  if (failed) return 1;
  return findings.empty() ? 0 : 2;
}

std::vector<std::string> regeneration_sample(const std::vector<IndexRow>& index, std::size_t n) {
  // Records of each population in file order; populations in order of first appearance.
  std::vector<std::vector<std::size_t>> groups;
  std::map<std::string, std::size_t> position;
  for (std::size_t i = 0; i < index.size(); ++i) {
    auto [it, inserted] = position.try_emplace(index[i].population, groups.size());
    if (inserted) groups.emplace_back();
    groups[it->second].push_back(i);
  }
  // Picks per population, dealt round-robin and capped by the population's size.
  std::vector<std::size_t> picks(groups.size(), 0);
  std::size_t total = std::min(n, index.size());
  for (std::size_t dealt = 0; dealt < total;)
    for (std::size_t g = 0; g < groups.size() && dealt < total; ++g)
      if (picks[g] < groups[g].size()) {
        ++picks[g];
        ++dealt;
      }
  // Evenly spaced within each population (centres of equal slices), emitted round-robin.
  std::vector<std::string> out;
  const std::size_t rounds = picks.empty() ? 0 : *std::max_element(picks.begin(), picks.end());
  for (std::size_t j = 0; j < rounds; ++j)
    for (std::size_t g = 0; g < groups.size(); ++g) {
      if (j >= picks[g]) continue;
      const std::size_t m = groups[g].size();
      const std::size_t at = (2 * j + 1) * m / (2 * picks[g]);
      out.push_back(index[groups[g][at]].record_id);
    }
  return out;
}

void verify_checksums(const BundleReader& reader, VerifyReport& report, const VerifyProgress& progress) {
  const std::vector<std::string> ids = reader.record_ids();
  for (std::size_t i = 0; i < ids.size(); ++i) {
    try {
      reader.check_record_data(ids[i]);
    } catch (const std::exception& e) {  // RuntimeFailure naming the record and dataset
      report.findings.push_back({FindingKind::checksum, ids[i], e.what()});
    }
    report.records_read += 1;
    if (progress) progress("checksums", i + 1, ids.size());
  }
}

VerifyReport verify_bundle(const BundleReader& reader, const VerifyOptions& options, const VerifyProgress& progress) {
  VerifyReport report;
  verify_schema(reader, report);
  verify_checksums(reader, report, progress);
  if (options.sample > 0) verify_regeneration(reader, options, report, progress);
  return report;
}

std::string format_verify_report(const BundleReader& reader, const VerifyReport& report) {
  std::string out;
  std::map<FindingKind, std::size_t> counts;
  for (const Finding& f : report.findings) counts[f.kind] += 1;
  auto status = [&](FindingKind k) { return counts[k] == 0 ? std::string("ok") : fmt::format("{} problem(s)", counts[k]); };
  out += fmt::format("verify {}\n", reader.path().string());
  out += fmt::format("  schema      {} objects checked: {}\n", report.schema_objects, status(FindingKind::schema));
  out += fmt::format("  checksums   every chunk of {} records read: {}\n", report.records_read, status(FindingKind::checksum));
  std::string regenerated;
  for (const std::string& id : report.regenerated) regenerated += (regenerated.empty() ? "" : ", ") + id;
  out += fmt::format("  regenerate  {} records compared bit for bit{}: {}\n", report.regenerated.size(),
                     regenerated.empty() ? "" : " (" + regenerated + ")", status(FindingKind::mismatch));
  if (counts[FindingKind::incomplete] > 0)
    out += fmt::format("  incomplete  {} check(s) could not run\n", counts[FindingKind::incomplete]);
  for (const std::string& note : report.notes) out += fmt::format("note: {}\n", note);
  for (const Finding& f : report.findings)
    out += fmt::format("{}: {}{}\n", name(f.kind), f.record_id.empty() ? "" : "record " + f.record_id + ": ", f.message);
  if (counts[FindingKind::mismatch] > 0)
    out += fmt::format("note: regenerated data differ when the stored data were modified, or when the bundle was "
                       "written by a build whose synthesis differs from this one (bundle generator {}, this build {})\n",
                       reader.attributes().generator_version, kGeneratorVersion);
  const int code = report.exit_code();
  out += code == 0 ? "verify: all checks passed\n"
         : code == 1 ? "verify: FAILED\n"
                     : "verify: INCOMPLETE (no corruption or mismatch found in what could be checked)\n";
  return out;
}

}  // namespace stethogen::bundle
