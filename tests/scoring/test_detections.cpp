#include <catch2/catch.hpp>

#include <map>
#include <sstream>

#include "core/error.hpp"
#include "fixtures.hpp"
#include "scoring/detections.hpp"

using namespace stethogen;
using namespace stethogen::scoring;

namespace {

std::vector<RecordInfo> infos() {
  test::FixtureSpec a;  // 10 s, sites aortic and mitral
  test::FixtureSpec b;
  b.record_id = "r000001";
  return {record_info(test::fixture_record(a)), record_info(test::fixture_record(b))};
}

Detections parse(const std::string& text, bool lenient = false) {
  std::istringstream in(text);
  return parse_detections(in, "det.csv", infos(), lenient);
}

struct BadCase {
  const char* what;
  std::string text;
  std::vector<std::string> message_parts;
};

}  // namespace

TEST_CASE("each kind of bad detections file is refused with its line, column and value", "[detections]") {
  const std::string h = "record_id,kind,time_s\n";
  const std::string seg = "record_id,site,start_s,end_s,state\n";
  std::vector<BadCase> cases = {
      {"empty file", "", {"det.csv: ", "the file is empty"}},
      {"blank lines only", "\n  \n", {"the file is empty"}},
      {"semicolons", "record_id;kind;time_s\nr000000;S1;1.0\n", {"det.csv:1:1", "';'-separated", "comma-separated"}},
      {"tabs", "record_id\tkind\ttime_s\n", {"det.csv:1:1", "tab-separated"}},
      {"missing column", "record_id,kind\nr000000,S1\n", {"det.csv:1:1", "missing column 'time_s'"}},
      {"misspelt column", "record_id,kind,time\n", {"det.csv:1:16", "unknown column 'time'", "did you mean 'time_s'"}},
      {"mixed formats", "record_id,kind,time_s,state\n", {"mixes event columns"}},
      {"unknown record", h + "r000000,S1,1.0\nr00001,S1,1.0\n",
       {"det.csv:3:1", "record_id", "'r00001' is not a record", "did you mean 'r000001'"}},
      {"unknown kind", h + "r000000,S5,1.0\n", {"det.csv:2:9", "kind", "'S5'", "allowed: S1, S2, M1"}},
      {"valve event kind", h + "r000000,mitral_close,1.0\n", {"det.csv:2:9", "not a sound kind"}},
      {"NaN", h + "r000000,S1,nan\n", {"det.csv:2:12", "time_s", "finite"}},
      {"not a number", h + "r000000,S1,1.0s\n", {"det.csv:2:12", "'1.0s' is not a number"}},
      {"negative time", h + "r000000,S1,-0.25\n", {"det.csv:2:12", "-0.25", ">= 0"}},
      {"beyond the record", h + "r000000,S1,10.5\n", {"det.csv:2:12", "10.5", "lasts 10 s"}},
      {"unsorted", h + "r000000,S1,2.0\nr000000,S1,1.5\n", {"det.csv:3:12", "line 2", "increasing time"}},
      {"duplicated", h + "r000000,S1,2.0\nr000000,S1,2.0\n", {"det.csv:3:12", "repeats the S1 of record r000000"}},
      {"field count", h + "r000000,S1\n", {"det.csv:2:1", "expected 3", "found 2"}},
      {"semicolon rows", h + "r000000;S1;1.0\n", {"det.csv:2:1", "found 1", "looks ';'-separated"}},
      {"unknown site", "record_id,kind,time_s,site\nr000000,S1,1.0,mitra\n",
       {"det.csv:2:16", "site", "'mitra' is not a site", "did you mean 'mitral'"}},
      {"empty segment", seg + "r000000,mitral,1.0,1.0,S1\n", {"det.csv:2:", "end_s", "greater than start_s"}},
      {"unknown state", seg + "r000000,mitral,1.0,1.1,sistole\n", {"det.csv:2:", "'sistole'", "did you mean 'systole'"}},
      {"overlapping segments", seg + "r000000,mitral,1.0,1.2,S1\nr000000,mitral,1.1,1.4,systole\n",
       {"det.csv:3:16", "overlaps the segment of line 2"}},
      {"segment without site", seg + "r000000,,1.0,1.2,S1\n", {"det.csv:2:9", "site"}},
  };
  for (const BadCase& c : cases) {
    INFO(c.what);
    try {
      parse(c.text);
      FAIL("accepted a bad file");
    } catch (const InputError& e) {
      for (const std::string& part : c.message_parts) REQUIRE_THAT(e.what(), Catch::Contains(part));
    }
  }
}

TEST_CASE("lenient mode skips bad rows, counts each problem and keeps the good rows", "[detections]") {
  std::string text =
      "record_id,kind,time_s\n"
      "r000000,S1,1.0\n"
      "r00000x,S1,1.2\n"
      "r0000zz,S1,1.3\n"
      "r000000,S2,nan\n"
      "r000000,S1,3.0\n"
      "r000000,S1,2.0\n"   // unsorted: kept and sorted
      "r000000,S1,3.0\n";  // duplicate of line 6: dropped
  Detections d = parse(text, true);
  REQUIRE(d.events.size() == 3);
  REQUIRE(d.events[0].time_s == 1.0);
  REQUIRE(d.events[1].time_s == 2.0);
  REQUIRE(d.events[2].time_s == 3.0);
  std::map<std::string, std::size_t> counts;
  for (const ProblemSummary& w : d.warnings) counts[w.problem] = w.count;
  REQUIRE(counts["unknown record id"] == 2);
  REQUIRE(counts["not a finite number"] == 1);
  REQUIRE(counts["unsorted rows"] == 1);
  REQUIRE(counts["duplicated row"] == 1);
  REQUIRE(counts.size() == 4);
  // The first message of each kind keeps its location.
  for (const ProblemSummary& w : d.warnings)
    if (w.problem == "unknown record id") REQUIRE_THAT(w.first_message, Catch::Contains("det.csv:3:1"));
  // Fatal problems stay fatal: no rows can be read from a semicolon file.
  REQUIRE_THROWS_AS(parse("record_id;kind;time_s\n", true), InputError);
}

TEST_CASE("good files parse whatever their layout details", "[detections]") {
  Detections d = parse("\xEF\xBB\xBF" "kind, time_s ,record_id\r\nS2,0.7,r000001\r\n\r\nS1,0.36,r000001\r\n");
  REQUIRE(d.format == DetectionFormat::events);
  REQUIRE(d.events.size() == 2);
  REQUIRE(d.events[0].kind == EventKind::S1);  // grouped by kind, time ascending
  REQUIRE(d.events[0].record == 1);
  REQUIRE_FALSE(d.has_site_column);
  Detections s = parse("record_id,site,start_s,end_s,state\nr000000,aortic,0.3,0.42,S1\nr000000,aortic,0.42,0.6,systole\n");
  REQUIRE(s.format == DetectionFormat::segments);
  REQUIRE(s.segments.size() == 2);
  REQUIRE(s.segments[1].state == Label::systole);
}
