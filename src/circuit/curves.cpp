#include "tacet/circuit/curves.hpp"

#include <array>
#include <cmath>

#include "tacet/common/constants.hpp"

namespace tacet {

namespace {

std::complex<double> at_one_kilohertz() { return {0, kTwoPi * 1e3}; }

// IEC 60098 playback (the RIAA curve): time constants 3180 us, 318 us, 75 us.
std::complex<double> riaa_raw(std::complex<double> s) {
  return (1.0 + s * 318e-6) / ((1.0 + s * 3180e-6) * (1.0 + s * 75e-6));
}

std::complex<double> riaa(std::complex<double> s) {
  static const double norm = std::abs(riaa_raw(at_one_kilohertz()));
  return riaa_raw(s) / norm;
}

// IEC 61672-1 A weighting: two poles at f1, one at f2, one at f3, two at f4 and
// four zeros at 0. The pole frequencies are the standard's exact values
// (IEC 61672-1:2013 equations E.1 to E.6; from memory: 20.598997 Hz,
// 107.65265 Hz, 737.86223 Hz, 12194.217 Hz), which round to the 20.6 Hz,
// 107.7 Hz, 737.9 Hz and 12194 Hz quoted in its text.
std::complex<double> a_weighting_raw(std::complex<double> s) {
  const double w1 = kTwoPi * 20.598997, w2 = kTwoPi * 107.65265, w3 = kTwoPi * 737.86223,
               w4 = kTwoPi * 12194.217;
  const auto s2 = s * s;
  return w4 * w4 * s2 * s2 / ((s + w1) * (s + w1) * (s + w2) * (s + w3) * (s + w4) * (s + w4));
}

// Normalised at 1 kHz exactly; the standard's A1000 = -2.000 dB is this constant
// rounded to the table's precision.
std::complex<double> a_weighting(std::complex<double> s) {
  static const double norm = std::abs(a_weighting_raw(at_one_kilohertz()));
  return a_weighting_raw(s) / norm;
}

constexpr std::array<BuiltinCurve, 2> kCurves{{
    {"riaa", "(1 + s 318us) / ((1 + s 3180us)(1 + s 75us))",
     "IEC 60098 playback equalisation (the RIAA curve)", riaa},
    {"a_weighting",
     "wA^2 s^4 / ((s + w1)^2 (s + w2)(s + w3)(s + wA)^2); w = 2 pi x 20.599 Hz, 107.65 Hz, "
     "737.86 Hz, 12194 Hz",
     "IEC 61672-1 frequency weighting A", a_weighting},
}};

}  // namespace

std::span<const BuiltinCurve> builtin_curves() { return kCurves; }

const BuiltinCurve* find_builtin_curve(std::string_view name) {
  for (const auto& curve : kCurves)
    if (curve.name == name) return &curve;
  return nullptr;
}

std::vector<std::string> builtin_curve_names() {
  std::vector<std::string> names;
  for (const auto& curve : kCurves) names.emplace_back(curve.name);
  return names;
}

std::complex<double> curve_at(const BuiltinCurve& curve, double f) {
  return curve.response({0, kTwoPi * f});
}

std::complex<double> TargetCurve::at(double f) const { return response({0, kTwoPi * f}); }

TargetCurve target_curve(const BuiltinCurve& curve) {
  return {std::string(curve.name), curve.response};
}

}  // namespace tacet
