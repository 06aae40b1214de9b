// The bundle's tables as columns (names, kinds and units are the format: docs/bundle-format.md),
// converted to and from the record types. HDF5-free.
#pragma once

#include <vector>

#include "bundle/index_row.hpp"
#include "bundle/table.hpp"
#include "core/record.hpp"

namespace stethogen::bundle {

Table index_table(const std::vector<IndexRow>& rows);
std::vector<IndexRow> index_rows(const Table& table);

Table events_table(const std::vector<Event>& events);
std::vector<Event> events_from(const Table& table);

Table beats_table(const std::vector<BeatRow>& beats);
std::vector<BeatRow> beats_from(const Table& table);

// Artifacts carry sample indices beside the seconds, at the record's rate.
Table artifacts_table(const std::vector<Artifact>& artifacts, int sample_rate_hz);
std::vector<Artifact> artifacts_from(const Table& table);

Table skipped_table(const std::vector<SkippedRecord>& skipped);
std::vector<SkippedRecord> skipped_from(const Table& table);

Table string_table(const StringTable& table);
StringTable string_table_from(const Table& table);

// Names of the /states values 0..4, in value order.
std::vector<std::string> label_names();

}  // namespace stethogen::bundle
