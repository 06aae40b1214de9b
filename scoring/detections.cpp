#include "scoring/detections.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <fstream>
#include <map>
#include <optional>
#include <tuple>
#include <unordered_map>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/suggest.hpp"

namespace stethogen::scoring {
namespace {

constexpr std::array<EventKind, 8> kScorableKinds = {EventKind::S1, EventKind::S2, EventKind::M1,
                                                     EventKind::T1, EventKind::A2, EventKind::P2,
                                                     EventKind::S3, EventKind::S4};
const std::vector<std::string> kEventColumns = {"record_id", "kind", "time_s", "site"};
const std::vector<std::string> kSegmentColumns = {"record_id", "site", "start_s", "end_s", "state"};
const std::vector<std::string> kStateNames = {"S1", "systole", "S2", "diastole"};

struct Field {
  std::string text;
  std::uint32_t column = 0;  // 1-based
};

std::string trim(std::string_view s) {
  std::size_t b = s.find_first_not_of(" \t\r");
  if (b == std::string_view::npos) return {};
  std::size_t e = s.find_last_not_of(" \t\r");
  return std::string(s.substr(b, e - b + 1));
}

std::vector<Field> split_fields(const std::string& line) {
  std::vector<Field> fields;
  std::size_t start = 0;
  while (true) {
    std::size_t comma = line.find(',', start);
    std::string_view raw = std::string_view(line).substr(start, comma == std::string::npos ? std::string::npos
                                                                                            : comma - start);
    std::size_t lead = raw.find_first_not_of(" \t");
    fields.push_back({trim(raw), static_cast<std::uint32_t>(start + (lead == std::string_view::npos ? 0 : lead) + 1)});
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return fields;
}

// A problem with one row: thrown at once, or counted in lenient mode.
struct RowProblem {
  std::string problem;
  InputError error;
};

class Parser {
 public:
  Parser(std::string file, const std::vector<RecordInfo>& records, bool lenient)
      : file_(std::move(file)), records_(records), lenient_(lenient) {
    for (std::size_t i = 0; i < records.size(); ++i) ids_.emplace(records[i].record_id, i);
  }

  Detections parse(std::istream& in) {
    out_.file = file_;
    std::string line;
    std::uint32_t number = 0;
    bool have_header = false;
    while (std::getline(in, line)) {
      ++number;
      if (number == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);  // UTF-8 byte-order mark
      if (trim(line).empty()) continue;
      if (!have_header) {
        read_header(line, number);
        have_header = true;
        continue;
      }
      ++out_.data_rows;
      try {
        if (out_.format == DetectionFormat::events) read_event(line, number);
        else read_segment(line, number);
      } catch (RowProblem& p) {
        if (!lenient_) throw p.error;
        note(p.problem, p.error.what());
      }
    }
    if (!have_header)
      throw InputError(SourceLocation{file_, 0, 0}, "",
                       "the file is empty: expected a header 'record_id,kind,time_s[,site]' (events) or "
                       "'record_id,site,start_s,end_s,state' (segmentation)");
    finish();
    for (auto& [problem, summary] : problems_) out_.warnings.push_back(summary);
    return std::move(out_);
  }

 private:
  [[noreturn]] void fail(const std::string& problem, std::uint32_t line, std::uint32_t column,
                         const std::string& key, const std::string& message) {
    throw RowProblem{problem, InputError(SourceLocation{file_, line, column}, key, message)};
  }

  void note(const std::string& problem, const std::string& message) {
    auto [it, inserted] = problems_.try_emplace(problem, ProblemSummary{problem, 0, message});
    ++it->second.count;
  }

  void read_header(const std::string& line, std::uint32_t number) {
    std::vector<Field> fields = split_fields(line);
    if (fields.size() == 1) {
      for (char delimiter : {';', '\t', '|'}) {
        if (line.find(delimiter) != std::string::npos)
          throw InputError(SourceLocation{file_, number, 1}, "header",
                           fmt::format("'{}' looks {}-separated: detections files are comma-separated",
                                       trim(line), delimiter == '\t' ? "tab" : fmt::format("'{}'", delimiter)));
      }
    }
    std::vector<std::string> all = kEventColumns;
    all.insert(all.end(), kSegmentColumns.begin(), kSegmentColumns.end());
    bool has_time = false, has_start = false;
    for (const Field& f : fields) {
      if (std::find(all.begin(), all.end(), f.text) == all.end())
        throw InputError(SourceLocation{file_, number, f.column}, "header",
                         fmt::format("unknown column '{}'{}; event files have record_id,kind,time_s[,site], "
                                     "segmentations record_id,site,start_s,end_s,state",
                                     f.text, did_you_mean(f.text, all)));
      if (columns_.count(f.text))
        throw InputError(SourceLocation{file_, number, f.column}, "header",
                         fmt::format("column '{}' appears twice", f.text));
      columns_[f.text] = columns_.size();
      has_time |= f.text == "time_s" || f.text == "kind";
      has_start |= f.text == "start_s" || f.text == "end_s" || f.text == "state";
    }
    n_columns_ = fields.size();
    if (has_time && has_start)
      throw InputError(SourceLocation{file_, number, 1}, "header",
                       "mixes event columns (kind, time_s) with segmentation columns (start_s, end_s, state): "
                       "write events and segmentations to separate files");
    out_.format = has_start ? DetectionFormat::segments : DetectionFormat::events;
    const auto& required = out_.format == DetectionFormat::events
                               ? std::vector<std::string>{"record_id", "kind", "time_s"}
                               : kSegmentColumns;
    for (const std::string& c : required)
      if (!columns_.count(c))
        throw InputError(SourceLocation{file_, number, 1}, "header",
                         fmt::format("missing column '{}': {} files need the columns {}", c,
                                     out_.format == DetectionFormat::events ? "event" : "segmentation",
                                     fmt::join(required, ",")));
    out_.has_site_column = columns_.count("site") > 0;
  }

  std::vector<Field> row_fields(const std::string& line, std::uint32_t number) {
    std::vector<Field> fields = split_fields(line);
    if (fields.size() != n_columns_) {
      std::string hint;
      for (char delimiter : {';', '\t', '|'})
        if (fields.size() == 1 && line.find(delimiter) != std::string::npos)
          hint = fmt::format(" (the row looks {}-separated)", delimiter == '\t' ? "tab" : fmt::format("'{}'", delimiter));
      fail("wrong number of fields", number, 1, "",
           fmt::format("expected {} comma-separated fields as in the header, found {}{}", n_columns_, fields.size(),
                       hint));
    }
    return fields;
  }

  const Field& field(const std::vector<Field>& fields, const std::string& column) {
    return fields[columns_.at(column)];
  }

  std::uint32_t record_of(const Field& f, std::uint32_t number) {
    auto it = ids_.find(f.text);
    if (it != ids_.end()) return static_cast<std::uint32_t>(it->second);
    auto [hint, fresh] = suggestions_.try_emplace(f.text);
    if (fresh) {
      std::vector<std::string> ids;
      ids.reserve(records_.size());
      for (const RecordInfo& r : records_) ids.push_back(r.record_id);
      hint->second = did_you_mean(f.text, ids);
    }
    fail("unknown record id", number, f.column, "record_id",
         fmt::format("'{}' is not a record of the truth bundle{}", f.text, hint->second));
  }

  std::int32_t site_of(const Field& f, std::uint32_t record, std::uint32_t number, bool required) {
    if (f.text.empty()) {
      if (required) fail("unknown site", number, f.column, "site", "empty: a segmentation names the site it labels");
      return -1;
    }
    const auto& sites = records_[record].sites;
    auto it = std::find(sites.begin(), sites.end(), f.text);
    if (it == sites.end())
      fail("unknown site", number, f.column, "site",
           fmt::format("'{}' is not a site of record {} (its sites: {}){}", f.text, records_[record].record_id,
                       fmt::join(sites, ", "), did_you_mean(f.text, sites)));
    return static_cast<std::int32_t>(it - sites.begin());
  }

  double time_of(const Field& f, std::uint32_t record, std::uint32_t number, const std::string& column) {
    double value = 0;
    const char* end = f.text.data() + f.text.size();
    auto [ptr, ec] = std::from_chars(f.text.data(), end, value);
    if (f.text.empty() || ec != std::errc() || ptr != end)
      fail("not a number", number, f.column, column, fmt::format("'{}' is not a number (seconds)", f.text));
    if (!std::isfinite(value))
      fail("not a finite number", number, f.column, column, fmt::format("{}: must be a finite time in seconds", f.text));
    if (value < 0)
      fail("negative time", number, f.column, column, fmt::format("{}: times must be >= 0 s", f.text));
    double duration = records_[record].duration_s;
    if (value > duration)
      fail("time beyond the record", number, f.column, column,
           fmt::format("{}: record {} lasts {} s", f.text, records_[record].record_id, duration));
    return value;
  }

  void read_event(const std::string& line, std::uint32_t number) {
    std::vector<Field> fields = row_fields(line, number);
    std::uint32_t record = record_of(field(fields, "record_id"), number);
    const Field& kind_field = field(fields, "kind");
    std::optional<EventKind> kind = parse_event_kind(kind_field.text);
    if (!kind || !is_scorable_kind(*kind)) {
      std::vector<std::string> names;
      for (EventKind k : kScorableKinds) names.emplace_back(name(k));
      fail("unknown kind", number, kind_field.column, "kind",
           fmt::format("'{}' is not a sound kind; allowed: {}{}", kind_field.text, scorable_kind_names(),
                       did_you_mean(kind_field.text, names)));
    }
    std::int32_t site = out_.has_site_column ? site_of(field(fields, "site"), record, number, false) : -1;
    double time_s = time_of(field(fields, "time_s"), record, number, "time_s");
    EventDetection d{record, *kind, site, time_s, number};
    if (keep_in_order(d, field(fields, "time_s").column)) out_.events.push_back(d);
  }

  // Rows of one (record, kind, site) must rise in time. Lenient mode drops repeats and lets
  // finish() sort the rest.
  bool keep_in_order(const EventDetection& d, std::uint32_t column) {
    auto key = std::make_tuple(d.record, static_cast<int>(d.kind), d.site);
    auto it = last_event_.find(key);
    if (it != last_event_.end()) {
      const EventDetection& prev = it->second;
      std::string where = fmt::format("{} of record {}{}", name(d.kind), records_[d.record].record_id,
                                      d.site < 0 ? "" : " at " + records_[d.record].sites[d.site]);
      if (d.time_s == prev.time_s) {
        RowProblem p{"duplicated row", InputError(SourceLocation{file_, d.line, column}, "time_s",
                                                  fmt::format("{}: repeats the {} of line {}", d.time_s, where, prev.line))};
        if (!lenient_) throw p.error;
        note(p.problem, p.error.what());
        return false;
      } else if (d.time_s < prev.time_s) {
        RowProblem p{"unsorted rows",
                     InputError(SourceLocation{file_, d.line, column}, "time_s",
                                fmt::format("{} comes before the {} at line {} ({} s): rows of one record, kind "
                                            "and site must be in increasing time (lenient mode sorts them)",
                                            d.time_s, where, prev.line, prev.time_s))};
        if (!lenient_) throw p.error;
        note(p.problem, p.error.what());
      }
    }
    if (it == last_event_.end() || d.time_s > it->second.time_s) last_event_[key] = d;
    return true;
  }

  void read_segment(const std::string& line, std::uint32_t number) {
    std::vector<Field> fields = row_fields(line, number);
    std::uint32_t record = record_of(field(fields, "record_id"), number);
    std::int32_t site = site_of(field(fields, "site"), record, number, true);
    const Field& state_field = field(fields, "state");
    auto state_it = std::find(kStateNames.begin(), kStateNames.end(), state_field.text);
    if (state_it == kStateNames.end())
      fail("unknown state", number, state_field.column, "state",
           fmt::format("'{}' is not a state; allowed: S1, systole, S2, diastole{}", state_field.text,
                       did_you_mean(state_field.text, kStateNames)));
    double start_s = time_of(field(fields, "start_s"), record, number, "start_s");
    double end_s = time_of(field(fields, "end_s"), record, number, "end_s");
    if (!(end_s > start_s))
      fail("empty interval", number, field(fields, "end_s").column, "end_s",
           fmt::format("{}: must be greater than start_s = {}", end_s, start_s));
    auto label = static_cast<Label>(1 + (state_it - kStateNames.begin()));
    out_.segments.push_back({record, site, start_s, end_s, label, number, field(fields, "start_s").column});
  }

  // Sorting (lenient), duplicate and overlap checks over whole groups.
  void finish() {
    if (out_.format == DetectionFormat::events) {
      std::stable_sort(out_.events.begin(), out_.events.end(), [](const auto& a, const auto& b) {
        return std::tie(a.record, a.kind, a.site, a.time_s) < std::tie(b.record, b.kind, b.site, b.time_s);
      });
      // Repeats that were out of order only meet their twin after sorting (lenient mode).
      auto same = [](const EventDetection& a, const EventDetection& b) {
        return a.record == b.record && a.kind == b.kind && a.site == b.site && a.time_s == b.time_s;
      };
      auto& ev = out_.events;
      for (std::size_t i = 1; i < ev.size(); ++i)
        if (same(ev[i], ev[i - 1]))
          note("duplicated row", fmt::format("{}:{}: time_s: {}: repeats line {}", file_, ev[i].line, ev[i].time_s,
                                             ev[i - 1].line));
      ev.erase(std::unique(ev.begin(), ev.end(), same), ev.end());
      return;
    }
    auto& segs = out_.segments;
    std::vector<SegmentDetection> kept;
    std::map<std::pair<std::uint32_t, std::int32_t>, SegmentDetection> last;
    if (lenient_) {
      std::stable_sort(segs.begin(), segs.end(), [](const auto& a, const auto& b) {
        return std::tie(a.record, a.site, a.start_s) < std::tie(b.record, b.site, b.start_s);
      });
    }
    for (const SegmentDetection& s : segs) {
      auto it = last.find({s.record, s.site});
      if (it != last.end() && s.start_s < it->second.end_s) {
        const SegmentDetection& prev = it->second;
        std::string problem = s.start_s == prev.start_s && s.end_s == prev.end_s ? "duplicated row"
                              : s.start_s < prev.start_s                         ? "unsorted rows"
                                                                                 : "overlapping segments";
        InputError error(SourceLocation{file_, s.line, s.start_column}, "start_s",
                         fmt::format("{} s: {} the segment of line {} ([{}, {}) s) at {} of record {}; segments "
                                     "of one record and site must be in time order without overlap",
                                     s.start_s, problem == "duplicated row" ? "repeats" : "overlaps", prev.line,
                                     prev.start_s, prev.end_s, records_[s.record].sites[s.site],
                                     records_[s.record].record_id));
        if (!lenient_) throw error;
        note(problem, error.what());
        continue;
      }
      last[{s.record, s.site}] = s;
      kept.push_back(s);
    }
    std::stable_sort(kept.begin(), kept.end(), [](const auto& a, const auto& b) {
      return std::tie(a.record, a.site, a.start_s) < std::tie(b.record, b.site, b.start_s);
    });
    segs = std::move(kept);
  }

  std::string file_;
  const std::vector<RecordInfo>& records_;
  bool lenient_;
  std::unordered_map<std::string, std::size_t> ids_;
  std::unordered_map<std::string, std::string> suggestions_;
  std::map<std::string, std::size_t> columns_;
  std::size_t n_columns_ = 0;
  std::map<std::tuple<std::uint32_t, int, std::int32_t>, EventDetection> last_event_;
  std::map<std::string, ProblemSummary> problems_;
  Detections out_;
};

}  // namespace

bool is_scorable_kind(EventKind kind) {
  return std::find(kScorableKinds.begin(), kScorableKinds.end(), kind) != kScorableKinds.end();
}

std::string scorable_kind_names() {
  std::string out;
  for (EventKind k : kScorableKinds) out += (out.empty() ? "" : ", ") + std::string(name(k));
  return out;
}

Detections parse_detections(std::istream& in, const std::string& file_name,
                            const std::vector<RecordInfo>& records, bool lenient) {
  return Parser(file_name, records, lenient).parse(in);
}

Detections read_detections(const std::filesystem::path& path, const std::vector<RecordInfo>& records,
                           bool lenient) {
  std::ifstream in(path);
  if (!in) throw InputError(fmt::format("{}: cannot open the detections file", path.string()));
  return parse_detections(in, path.string(), records, lenient);
}

}  // namespace stethogen::scoring
