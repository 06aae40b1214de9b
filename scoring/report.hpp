// Score reports: an aligned text table for people and JSON for machines (docs/scoring.md).
#pragma once

#include <string>

#include <nlohmann/json.hpp>

#include "scoring/detections.hpp"
#include "scoring/event_score.hpp"
#include "scoring/segment_score.hpp"

namespace stethogen::scoring {

std::string event_report_text(const EventScore& score, const Detections& detections, const std::string& truth_name);
nlohmann::json event_report_json(const EventScore& score, const Detections& detections,
                                 const std::string& truth_name);

std::string segment_report_text(const SegmentScore& score, const Detections& detections,
                                const std::string& truth_name);
nlohmann::json segment_report_json(const SegmentScore& score, const Detections& detections,
                                   const std::string& truth_name);

}  // namespace stethogen::scoring
