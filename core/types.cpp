#include "core/types.hpp"

namespace stethogen {
namespace {

template <typename Enum, std::size_t N>
std::optional<Enum> parse_from(const std::array<Enum, N>& all, std::string_view s) {
  for (Enum v : all)
    if (name(v) == s) return v;
  return std::nullopt;
}

template <typename Enum, std::size_t N>
std::string join_names(const std::array<Enum, N>& all) {
  std::string out;
  for (Enum v : all) {
    if (!out.empty()) out += ", ";
    out += name(v);
  }
  return out;
}

}  // namespace

std::string_view name(State v) {
  switch (v) {
    case State::rest: return "rest";
    case State::exercise: return "exercise";
    case State::lv_failure: return "lv_failure";
    case State::rv_failure: return "rv_failure";
    case State::global_failure: return "global_failure";
  }
  return "?";
}

std::string_view name(Site v) {
  switch (v) {
    case Site::aortic: return "aortic";
    case Site::pulmonic: return "pulmonic";
    case Site::tricuspid: return "tricuspid";
    case Site::mitral: return "mitral";
  }
  return "?";
}

std::string_view name(Sensor v) {
  switch (v) {
    case Sensor::acoustic_bell: return "acoustic_bell";
    case Sensor::acoustic_diaphragm: return "acoustic_diaphragm";
    case Sensor::electronic: return "electronic";
    case Sensor::accelerometer: return "accelerometer";
  }
  return "?";
}

std::string_view name(SampleFormat v) {
  switch (v) {
    case SampleFormat::float32: return "float32";
    case SampleFormat::int16: return "int16";
    case SampleFormat::int24: return "int24";
  }
  return "?";
}

std::string_view name(FailurePolicy v) { return v == FailurePolicy::stop ? "stop" : "skip"; }

std::string_view name(Label v) {
  switch (v) {
    case Label::unlabelled: return "unlabelled";
    case Label::s1: return "S1";
    case Label::systole: return "systole";
    case Label::s2: return "S2";
    case Label::diastole: return "diastole";
  }
  return "?";
}

std::string_view name(EventKind v) {
  switch (v) {
    case EventKind::M1: return "M1";
    case EventKind::T1: return "T1";
    case EventKind::A2: return "A2";
    case EventKind::P2: return "P2";
    case EventKind::S3: return "S3";
    case EventKind::S4: return "S4";
    case EventKind::S1: return "S1";
    case EventKind::S2: return "S2";
    case EventKind::mitral_close: return "mitral_close";
    case EventKind::tricuspid_close: return "tricuspid_close";
    case EventKind::aortic_open: return "aortic_open";
    case EventKind::pulmonic_open: return "pulmonic_open";
    case EventKind::aortic_close: return "aortic_close";
    case EventKind::pulmonic_close: return "pulmonic_close";
    case EventKind::mitral_open: return "mitral_open";
    case EventKind::tricuspid_open: return "tricuspid_open";
  }
  return "?";
}

std::optional<State> parse_state(std::string_view s) { return parse_from(kAllStates, s); }
std::optional<Site> parse_site(std::string_view s) { return parse_from(kAllSites, s); }
std::optional<Sensor> parse_sensor(std::string_view s) { return parse_from(kAllSensors, s); }
std::optional<SampleFormat> parse_sample_format(std::string_view s) {
  return parse_from(kAllSampleFormats, s);
}
std::optional<FailurePolicy> parse_failure_policy(std::string_view s) {
  return parse_from(std::array{FailurePolicy::stop, FailurePolicy::skip}, s);
}
std::optional<EventKind> parse_event_kind(std::string_view s) { return parse_from(kAllEventKinds, s); }

std::string allowed_states() { return join_names(kAllStates); }
std::string allowed_sites() { return join_names(kAllSites); }
std::string allowed_sensors() { return join_names(kAllSensors); }
std::string allowed_sample_formats() { return join_names(kAllSampleFormats); }
std::string allowed_event_kinds() { return join_names(kAllEventKinds); }

}  // namespace stethogen
