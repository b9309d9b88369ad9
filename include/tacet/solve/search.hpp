#pragma once
// One-dimensional searches over frequency, on a logarithmic axis: the grid a
// band is scanned on, the bisection that locates where a condition starts to
// hold, and the golden-section search for a largest value. Shared by the spec
// measurements (corners, flatness) and the loop-gain crossovers.

#include <functional>
#include <vector>

namespace tacet {

/// Points per decade of the grid a band is scanned on before refinement.
inline constexpr int kSearchGridPerDecade = 100;

/// At least two points from `from` to `to` (both included), evenly spaced in
/// log f, `per_decade` a decade.
std::vector<double> log_grid(double from, double to, int per_decade = kSearchGridPerDecade);

/// `holds(inside)` is false and `holds(outside)` true: the frequency between
/// them where `holds` changes, by bisection in log f until the bracket is
/// narrower than `relative` (either order of inside and outside).
double bisect_log(double inside, double outside, const std::function<bool(double)>& holds,
                  double relative = 1e-13);

/// The frequency of the largest `value` between `low` and `high` (a bracket
/// around one peak), by golden-section search in log f; one evaluation a step.
struct Peak {
  double f = 0;
  double value = 0;
};
Peak golden_max_log(double low, double high, const std::function<double(double)>& value,
                    double relative = 1e-12);

}  // namespace tacet
