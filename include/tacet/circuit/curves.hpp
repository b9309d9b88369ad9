#pragma once
// Target curves: the responses a stage is meant to follow or a measurement is
// weighted by. One table of built-in curves (name, formula, source), each a
// rational function of the complex frequency s normalised to 0 dB at 1 kHz,
// read by deviation specs (`target=riaa`) and by anything that weights a
// band by a standard curve (`weight=`). A spec may instead give an
// expression in s (`target=1/(1+s*75u)`), compiled by the expression
// language into a TargetCurve.

#include <complex>
#include <functional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace tacet {

struct BuiltinCurve {
  std::string_view name;     ///< as written after target=
  std::string_view formula;  ///< for docs and --help
  std::string_view source;   ///< the standard that defines it
  /// The response at the Laplace variable s (rad/s), 0 dB at s = j 2 pi 1kHz.
  std::complex<double> (*response)(std::complex<double> s);
};

/// Every built-in curve, in the order hints and docs list them.
std::span<const BuiltinCurve> builtin_curves();
/// The curve named `name`, or nullptr.
const BuiltinCurve* find_builtin_curve(std::string_view name);
/// Every built-in curve's name (for "did you mean" hints).
std::vector<std::string> builtin_curve_names();
/// The curve's complex response at the frequency f (Hz): response(j 2 pi f).
std::complex<double> curve_at(const BuiltinCurve& curve, double f);

/// What a deviation spec compares with: a built-in curve or an expression in s.
struct TargetCurve {
  std::string text;  ///< as written: "riaa", "1/(1+s*75u)"
  std::function<std::complex<double>(std::complex<double>)> response;  ///< of s, rad/s

  /// The response at the frequency f (Hz).
  std::complex<double> at(double f) const;
};

/// A built-in curve as a TargetCurve.
TargetCurve target_curve(const BuiltinCurve& curve);

}  // namespace tacet
