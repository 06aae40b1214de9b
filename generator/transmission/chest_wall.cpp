#include "generator/transmission/chest_wall.hpp"

#include <cmath>

#include "core/check.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

constexpr double kReferenceThicknessMm = 20.0;   // a lean adult's precordium
constexpr double kFirstCornerAtReferenceHz = 100.0;
constexpr double kSecondCornerAtReferenceHz = 300.0;
constexpr double kFlatLossDbPerMm = 0.12;        // frequency-independent part of the tissue loss

}  // namespace

ChestWallDesign chest_wall_design(double thickness_mm) {
  check_positive("chest_wall_mm", thickness_mm);
  double scale = kReferenceThicknessMm / thickness_mm;
  return {kFirstCornerAtReferenceHz * scale, kSecondCornerAtReferenceHz * scale,
          portable::pow(10.0, -kFlatLossDbPerMm * thickness_mm / 20.0)};
}

FilterCascade chest_wall_filter(double thickness_mm, double fs_hz) {
  ChestWallDesign d = chest_wall_design(thickness_mm);
  FilterCascade c;
  c.gain = d.flat_gain;
  // A corner beyond the synthesised band would act only above it (docs/sounds.md).
  for (double corner : {d.first_corner_hz, d.second_corner_hz})
    if (corner <= max_corner_hz(fs_hz)) c.sections.push_back(butter_lowpass1(corner, fs_hz));
  return c;
}

}  // namespace stethogen::gen
