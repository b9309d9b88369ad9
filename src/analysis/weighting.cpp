#include "tacet/analysis/weighting.hpp"

#include <cmath>
#include <complex>

#include "tacet/circuit/curves.hpp"

namespace tacet {
namespace {

double itu468_prototype(double f) {
  const double f2 = f * f, f3 = f2 * f, f4 = f2 * f2, f5 = f4 * f, f6 = f4 * f2;
  const double h1 = -4.737338981378384e-24 * f6 + 2.043828333606125e-15 * f4 -
                    1.363894795463638e-07 * f2 + 1;
  const double h2 = 1.306612257412824e-19 * f5 - 2.118150887518656e-11 * f3 +
                    5.559488023498642e-04 * f;
  return 1.246332637532143e-04 * f / std::sqrt(h1 * h1 + h2 * h2);
}

}  // namespace

// One A curve for targets and noise weighting: the curve table's (IEC 61672-1,
// normalised to 0 dB at 1 kHz), read as a magnitude.
double a_weighting(double f) {
  static const BuiltinCurve* const curve = find_builtin_curve("a_weighting");
  return std::abs(curve_at(*curve, f));
}

double itu468_weighting(double f) {
  static const double at_1k = itu468_prototype(1000);
  return itu468_prototype(f) / at_1k;
}

double weighting_gain(Weighting weighting, double f) {
  switch (weighting) {
    case Weighting::none: return 1;
    case Weighting::a: return a_weighting(f);
    case Weighting::itu468: return itu468_weighting(f);
  }
  return 1;
}

double weighting_db(Weighting weighting, double f) {
  return 20 * std::log10(weighting_gain(weighting, f));
}

}  // namespace tacet
