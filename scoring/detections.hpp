// Reading a detections file (docs/scoring.md): event detections `record_id,kind,time_s[,site]`
// or segmentations `record_id,site,start_s,end_s,state`, told apart by the header. Every
// problem is an InputError naming file:line:column, the column and the value; in lenient mode
// each bad row is skipped and counted per problem kind instead, so a score is never computed
// from rows that were silently misread.
#pragma once

#include <cstdint>
#include <filesystem>
#include <istream>
#include <string>
#include <vector>

#include "core/types.hpp"
#include "scoring/truth.hpp"

namespace stethogen::scoring {

enum class DetectionFormat : std::uint8_t { events, segments };

// One detected sound. site = -1: compare with the heart-level truth time.
struct EventDetection {
  std::uint32_t record = 0;  // index into the truth's records()
  EventKind kind = EventKind::S1;
  std::int32_t site = -1;    // index into RecordInfo::sites
  double time_s = 0;
  std::uint32_t line = 0;
};

// One detected state interval [start_s, end_s) at one site.
struct SegmentDetection {
  std::uint32_t record = 0;
  std::int32_t site = 0;
  double start_s = 0, end_s = 0;
  Label state = Label::s1;
  std::uint32_t line = 0;
  std::uint32_t start_column = 0;  // of start_s, for messages
};

// Lenient mode: how often one kind of problem occurred, with its first message.
struct ProblemSummary {
  std::string problem;  // e.g. "unknown record id"
  std::size_t count = 0;
  std::string first_message;
};

struct Detections {
  std::string file;
  DetectionFormat format = DetectionFormat::events;
  bool has_site_column = false;
  std::vector<EventDetection> events;      // grouped by (record, kind, site), time ascending
  std::vector<SegmentDetection> segments;  // grouped by (record, site), start ascending
  std::size_t data_rows = 0;               // non-empty rows after the header
  std::vector<ProblemSummary> warnings;    // lenient mode only
};

// The sound kinds a detections file may name: S1, S2 and the components.
bool is_scorable_kind(EventKind kind);
std::string scorable_kind_names();

Detections parse_detections(std::istream& in, const std::string& file_name,
                            const std::vector<RecordInfo>& records, bool lenient);
// Throws InputError if the file cannot be opened.
Detections read_detections(const std::filesystem::path& path, const std::vector<RecordInfo>& records,
                           bool lenient);

}  // namespace stethogen::scoring
