#pragma once
// Worst-case corners (`tacet spread --corners`): per spec, every toleranced
// value pushed to the end of its tolerance that moves the spec's measured
// value toward its limit, chosen from the signs of the sensitivities, then
// the spec measured by a full solve there (the restamping evaluator a Monte
// Carlo draw uses), so the verdict never rests on the linear model alone.
//
// The components that can be pushed are the normalised draws of the spread
// (spread.hpp): a part on its own has one (u, d = tol u); a matched set has
// its common draw c and each member its own ratio draw u,
// 1 + d = (1 + tol c)(1 + ratio u). With g_k = d value/d d_k at the nominal
// circuit (x_k times the spec sensitivity d value/d x_k), to first order
//
//     value ~ nominal + sum_i a_i w_i,   w_i in [-1, 1],
//     a_i = g_k tol_k        a part on its own,
//     a_i = g_k ratio_k      a member's own draw,
//     a_i = sum_k g_k tol_k  a set's common draw (over its members),
//
// so the corner toward a max is w_i = sign(a_i) and toward a min
// w_i = -sign(a_i); the linear prediction is nominal +- sum |a_i|. A
// component whose |a_i| is 0, or below 1e-9 of the largest one's (rounding,
// not a dependence), is held at nominal: its sign says nothing.
//
// Direction: a spec with a max only is pushed up, with a min only down; a
// window (both) is pushed both ways and the corner with the smaller margin
// in the full solve is reported.
//
// Agreement: the full solve "agrees" with the linear prediction when it
// moved the value the predicted way by between half and twice the predicted
// amount (or neither moved it). Otherwise the response is not near-linear
// over the tolerances (a resonance crossed, a kink, strong curvature): the
// worst case may lie inside the tolerance box or at another corner, and the
// Monte Carlo is the better guide.
//
// Sensitivities come from run_spec_sensitivities (adjoint for the AC kinds,
// central differences for the others). A toleranced value it does not list
// (a noise-only model key such as en, or a model key of a large circuit) is
// differentiated here by a central difference of its deviation (+-1e-3) on
// the evaluator: two single-spec solves per such value.

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"

namespace tacet {

/// How many of a corner's drivers the report lists (largest first).
inline constexpr std::size_t kCornerDriversShown = 10;

enum class CornerDirection { toward_min, toward_max };
/// "min", "max".
const char* to_string(CornerDirection direction);

/// One component of the corner, pushed to one end of its range.
struct CornerDriver {
  std::string name;   ///< the element, the op-amp instance, or the matched set
  std::string param;  ///< "value", a model key ("gbw"), "ratio" (a member's own draw), "set" (a set's common draw)
  int sign = 0;       ///< +1: at +tol (+ratio), -1: at -tol (-ratio)
  double deviation = 0;  ///< relative: sign x tol (or x ratio)
  double shift = 0;      ///< first-order change of the spec's value, in its unit (|a_i|, signed)
};

struct SpecCorner {
  std::string spec;
  /// false: no corner (the spec has no limit, could not be measured, or has
  /// no sensitivities); `note` says why.
  bool computed = false;
  std::string note;
  CornerDirection toward = CornerDirection::toward_min;
  double nominal = 0;    ///< the spec's value at nominal, in its unit
  double predicted = 0;  ///< the linear prediction at the corner
  std::optional<double> value;  ///< the full solve at the corner; nullopt: not solvable there
  double margin = 0;     ///< of `value` (check's margin), negative: outside
  bool pass = false;
  bool agrees = false;   ///< the full solve confirms the linear prediction (see above)
  std::size_t moved = 0;  ///< components pushed to an end
  std::size_t held = 0;   ///< components held at nominal (no first-order effect)
  std::vector<CornerDriver> drivers;  ///< every pushed component, largest |shift| first
};

/// The corner of every spec of the circuit, in the order written. Throws
/// InputError when nothing in the circuit has a tolerance, and the SolveError
/// of exit 3 when a spec cannot be measured at the nominal values.
std::vector<SpecCorner> run_spread_corners(const Circuit& circuit);

}  // namespace tacet
