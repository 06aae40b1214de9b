// Small vocabulary types shared by every stage, with their canonical names (the names used in
// recipes, bundles and CSV files).
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace stethogen {

enum class State : std::uint8_t { rest, exercise, lv_failure, rv_failure, global_failure };
inline constexpr std::array<State, 5> kAllStates = {State::rest, State::exercise, State::lv_failure,
                                                    State::rv_failure, State::global_failure};

// The four standard auscultation areas.
enum class Site : std::uint8_t { aortic, pulmonic, tricuspid, mitral };
inline constexpr std::array<Site, 4> kAllSites = {Site::aortic, Site::pulmonic, Site::tricuspid,
                                                  Site::mitral};

enum class Sensor : std::uint8_t { acoustic_bell, acoustic_diaphragm, electronic, accelerometer };
inline constexpr std::array<Sensor, 4> kAllSensors = {Sensor::acoustic_bell, Sensor::acoustic_diaphragm,
                                                      Sensor::electronic, Sensor::accelerometer};

// How pcg samples are stored in the bundle (float32, or integers with a scale attribute).
enum class SampleFormat : std::uint8_t { float32, int16, int24 };
inline constexpr std::array<SampleFormat, 3> kAllSampleFormats = {SampleFormat::float32, SampleFormat::int16,
                                                                  SampleFormat::int24};

// What a record does when one record fails to synthesise.
enum class FailurePolicy : std::uint8_t { stop, skip };

// Per-sample segmentation labels (values are part of the bundle format).
enum class Label : std::uint8_t { unlabelled = 0, s1 = 1, systole = 2, s2 = 3, diastole = 4 };

// Event kinds of the /events table: sound components, derived S1/S2 intervals, valve events.
enum class EventKind : std::uint8_t {
  M1, T1, A2, P2, S3, S4, S1, S2,
  mitral_close, tricuspid_close, aortic_open, pulmonic_open,
  aortic_close, pulmonic_close, mitral_open, tricuspid_open,
};
inline constexpr std::array<EventKind, 16> kAllEventKinds = {
    EventKind::M1, EventKind::T1, EventKind::A2, EventKind::P2, EventKind::S3, EventKind::S4,
    EventKind::S1, EventKind::S2, EventKind::mitral_close, EventKind::tricuspid_close,
    EventKind::aortic_open, EventKind::pulmonic_open, EventKind::aortic_close,
    EventKind::pulmonic_close, EventKind::mitral_open, EventKind::tricuspid_open};

std::string_view name(State v);
std::string_view name(Site v);
std::string_view name(Sensor v);
std::string_view name(SampleFormat v);
std::string_view name(FailurePolicy v);
std::string_view name(Label v);
std::string_view name(EventKind v);

// Parse canonical names; std::nullopt if unknown (callers report the allowed set).
std::optional<State> parse_state(std::string_view s);
std::optional<Site> parse_site(std::string_view s);
std::optional<Sensor> parse_sensor(std::string_view s);
std::optional<SampleFormat> parse_sample_format(std::string_view s);
std::optional<FailurePolicy> parse_failure_policy(std::string_view s);
std::optional<EventKind> parse_event_kind(std::string_view s);

// "a, b, c": the allowed names of an enum, for error messages.
std::string allowed_states();
std::string allowed_sites();
std::string allowed_sensors();
std::string allowed_sample_formats();
std::string allowed_event_kinds();

}  // namespace stethogen
