#include "bundle/export.hpp"

#include <set>
#include <system_error>

#include <fmt/format.h>

#include "bundle/export_files.hpp"
#include "bundle/export_truth.hpp"
#include "core/error.hpp"
#include "core/suggest.hpp"

namespace stethogen::bundle {
namespace fs = std::filesystem;

std::optional<ExportFormat> parse_export_format(std::string_view s) {
  if (s == "wav") return ExportFormat::wav;
  if (s == "flac") return ExportFormat::flac;
  if (s == "csv") return ExportFormat::csv;
  return std::nullopt;
}

namespace {

AudioContainer container_of(ExportFormat f) { return f == ExportFormat::flac ? AudioContainer::flac : AudioContainer::wav; }

std::string audio_name(const std::string& record_id, Site site, ExportFormat format) {
  return fmt::format("{}_{}.{}", record_id, name(site), extension(container_of(format)));
}

void prepare_out_dir(const fs::path& dir) {
  std::error_code ec;
  if (fs::exists(dir, ec) && !fs::is_directory(dir, ec))
    throw InputError(fmt::format("--out {}: exists and is not a directory", dir.string()));
  fs::create_directories(dir, ec);
  if (ec) throw RuntimeFailure(fmt::format("cannot create the output directory {}: {}", dir.string(), ec.message()));
}

}  // namespace

std::vector<std::string> select_records(const BundleReader& reader, const std::vector<std::string>& requested) {
  if (requested.empty()) return reader.record_ids();
  std::set<std::string> seen;
  std::vector<std::string> out;
  for (const std::string& id : requested) {
    if (!reader.has_record(id))
      throw InputError(fmt::format("--records: record '{}' is not in {}{}", id, reader.path().string(),
                                   did_you_mean(id, reader.record_ids())));
    if (seen.insert(id).second) out.push_back(id);
  }
  return out;
}

std::vector<fs::path> export_targets(const BundleReader& reader, const ExportOptions& options) {
  std::vector<fs::path> targets;
  if (options.format == ExportFormat::csv) {
    targets.push_back(options.out_dir / "index.csv");
    for (const std::string& file : TruthCsvWriter::file_names()) targets.push_back(options.out_dir / file);
    return targets;
  }
  for (const std::string& id : select_records(reader, options.records))
    for (Site site : reader.sites(id)) targets.push_back(options.out_dir / audio_name(id, site, options.format));
  return targets;
}

void write_index_csv(StagedTextFile& file, const std::vector<IndexRow>& rows) {
  file.stream() << "record_id,record_index,population,state,exercise_intensity,severity,heart_rate_bpm,"
                   "cardiac_output_l_min,lv_ejection_fraction,rv_ejection_fraction,snr_db,snr_achieved_db,"
                   "duration_s,sample_rate_hz,n_samples,n_sites,n_beats,sensor,noise_profile\n";
  for (const IndexRow& r : rows)
    file.stream() << fmt::format("{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}\n", csv_field(r.record_id),
                                 r.record_index, csv_field(r.population), csv_field(r.state),
                                 csv_number(r.exercise_intensity), csv_number(r.severity), csv_number(r.heart_rate_bpm),
                                 csv_number(r.cardiac_output_l_min), csv_number(r.lv_ejection_fraction),
                                 csv_number(r.rv_ejection_fraction), csv_number(r.snr_db),
                                 csv_number(r.snr_achieved_db), csv_number(r.duration_s), r.sample_rate_hz,
                                 r.n_samples, r.n_sites, r.n_beats, csv_field(r.sensor), csv_field(r.noise_profile));
}

ExportReport export_bundle(const BundleReader& reader, const ExportOptions& options,
                           const std::function<void(std::size_t, std::size_t)>& progress) {
  if (options.format != ExportFormat::csv) check_audio_combination(container_of(options.format), options.encoding);
  const std::vector<std::string> ids = select_records(reader, options.records);
  if (options.clean && options.format != ExportFormat::csv)
    for (const std::string& id : ids)
      if (!reader.parts(id).pcg_clean)
        throw InputError(fmt::format("--clean: record {} of {} has no pcg_clean (a public bundle keeps only pcg)", id,
                                     reader.path().string()));
  const std::vector<fs::path> targets = export_targets(reader, options);
  check_not_overwriting(targets, options.force);
  prepare_out_dir(options.out_dir);

  ExportReport report;
  report.records = ids.size();
  if (options.format == ExportFormat::csv) {
    std::set<std::string> wanted(ids.begin(), ids.end());
    std::vector<IndexRow> rows;
    for (const IndexRow& row : reader.index())
      if (wanted.count(row.record_id)) rows.push_back(row);
    TruthCsvWriter truth(options.out_dir);
    for (std::size_t i = 0; i < ids.size(); ++i) {
      const std::string& id = ids[i];
      const RecordParts parts = reader.parts(id);
      SiteArray<std::uint8_t> states;
      std::vector<Event> events;
      std::vector<BeatRow> beats;
      std::vector<Artifact> artifacts;
      if (parts.states) states = reader.read_states(id);
      if (parts.events) events = reader.read_events(id);
      if (parts.beats) beats = reader.read_beats(id);
      if (parts.artifacts) artifacts = reader.read_artifacts(id);
      truth.add({id, reader.sample_rate_hz(id), reader.sites(id), parts.states ? &states : nullptr,
                 parts.events ? &events : nullptr, parts.beats ? &beats : nullptr,
                 parts.artifacts ? &artifacts : nullptr});
      if (progress) progress(i + 1, ids.size());
    }
    StagedTextFile index(options.out_dir / "index.csv");
    write_index_csv(index, rows);
    // All five complete before any appears.
    index.finish();
    truth.finish();
    index.commit();
    truth.commit();
    report.files = targets;
    return report;
  }

  for (std::size_t i = 0; i < ids.size(); ++i) {
    const std::string& id = ids[i];
    const SiteArray<float> pcg = options.clean ? reader.read_pcg_stored(id, true).samples : reader.read_pcg(id);
    const std::vector<Site> sites = reader.sites(id);
    const int rate = reader.sample_rate_hz(id);
    for (std::size_t s = 0; s < sites.size() && s < pcg.n_sites; ++s) {
      const fs::path target = options.out_dir / audio_name(id, sites[s], options.format);
      StagedPath staged(target);
      AudioWriteResult written;
      try {
        written = write_mono_audio(staged.temp_path(), pcg.row(s), pcg.n_samples, rate, container_of(options.format),
                                   options.encoding);
      } catch (const RuntimeFailure& e) {
        throw RuntimeFailure(fmt::format("exporting {}: {}", target.string(), e.what()));
      }
      staged.commit();
      report.files.push_back(target);
      report.clipped_samples += written.clipped_samples;
      report.clipped_files += written.clipped_samples > 0 ? 1 : 0;
    }
    if (progress) progress(i + 1, ids.size());
  }
  return report;
}

}  // namespace stethogen::bundle
