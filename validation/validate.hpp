// `stethogen validate`: synthesise the validation recipes, compare with published values, and
// optionally write the report (Markdown, CSV, figure data and figures) into a folder.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "validation/check.hpp"
#include "validation/cohort.hpp"

namespace stethogen::validation {

struct ValidateOptions {
  std::optional<std::filesystem::path> report_dir;
  unsigned threads = 0;  // 0 = all cores
  bool force = false;    // replace report files already in report_dir
  std::string python = "/usr/bin/python3";  // runs validation/figures.py
};

struct ValidateOutcome {
  std::vector<CheckResult> results;
  std::vector<std::string> report_files;  // written into report_dir
  std::string figure_note;                // why figures are missing, "" when they were drawn
};

ValidateOutcome run_validation(const ValidateOptions& options);

// Files of a report folder: the tables, the figure data and the figures.
inline const std::vector<std::string> kReportTables = {"report.md", "checks.csv", "figure_data.json"};
inline const std::vector<std::string> kFigureFiles = {
    "record_states.png", "pressures_pcg.png", "s1_amplitude.png", "split_severity.png", "spectrogram.png", "snr.png"};

// The Markdown report (header, summary, the table by group, figure links).
std::string format_report(const std::vector<CheckResult>& results, bool with_figures, const std::string& figure_note);

// The data the figures are drawn from, as JSON text.
std::string figure_data_json(const Cohort& cohort);

}  // namespace stethogen::validation
