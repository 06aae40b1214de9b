// `stethogen detect BUNDLE -o DETECTIONS.csv [--site NAME] [--force]`: the bundled baseline
// S1/S2 detector (scoring/baseline_detector.hpp) over every record; writes
// record_id,kind,time_s,site for `score`.
#include <cstdio>
#include <memory>
#include <string>

#include <fmt/format.h>

#include "bundle/export_files.hpp"
#include "bundle/reader.hpp"
#include "cli/command.hpp"
#include "core/error.hpp"
#include "scoring/baseline_detector.hpp"

namespace stethogen::cli {
namespace {

struct DetectArgs {
  std::string bundle;
  std::string out;
  std::string site;
  bool force = false;
};

int run_detect(const DetectArgs& a) {
  std::optional<Site> wanted;
  if (!a.site.empty()) {
    wanted = parse_site(a.site);
    if (!wanted) throw InputError(fmt::format("--site = {}: allowed: {}", a.site, allowed_sites()));
  }
  bundle::check_not_overwriting({a.out}, a.force);
  const bundle::BundleReader reader(a.bundle);
  bundle::StagedTextFile out(a.out);
  out.stream() << "record_id,kind,time_s,site\n";
  std::size_t sounds = 0, records = 0;
  for (const std::string& id : reader.record_ids()) {
    std::vector<Site> sites = reader.sites(id);
    // Default: the mitral area, where S1 is loudest (common practice), else the first site.
    Site site = wanted.value_or(std::find(sites.begin(), sites.end(), Site::mitral) != sites.end() ? Site::mitral
                                                                                                 : sites.front());
    auto it = std::find(sites.begin(), sites.end(), site);
    if (it == sites.end()) {
      std::vector<std::string> names;
      for (Site s : sites) names.emplace_back(name(s));
      throw InputError(fmt::format("--site = {}: record {} was not recorded there (its sites: {})", a.site, id,
                                   fmt::join(names, ", ")));
    }
    SiteArray<float> pcg = reader.read_pcg(id);
    auto row = static_cast<std::size_t>(it - sites.begin());
    for (const scoring::DetectedSound& s :
         scoring::detect_heart_sounds(pcg.row(row), pcg.n_samples, reader.sample_rate_hz(id))) {
      out.stream() << fmt::format("{},{},{:.4f},{}\n", id, name(s.kind), s.time_s, name(site));
      ++sounds;
    }
    ++records;
  }
  out.close();
  fmt::print("detect: {} sounds in {} records -> {}\n", sounds, records, a.out);
  return kExitOk;
}

}  // namespace

Command add_detect(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "detect", "Run the bundled baseline S1/S2 detector (Shannon-energy envelope) and write detections for score");
  auto args = std::make_shared<DetectArgs>();
  app->add_option("BUNDLE", args->bundle, "bundle to analyse (a full or a public bundle)")->required();
  app->add_option("-o,--out", args->out, "detections CSV to write")->required();
  app->add_option("--site", args->site, "site to analyse (default: mitral if recorded, else the first site)");
  app->add_flag("--force", args->force, "overwrite an existing output file");
  return {app, [args] { return run_detect(*args); }};
}

}  // namespace stethogen::cli
