#pragma once
// Sensitivity: how much a transfer H (a probe at one frequency), and each
// spec's measured value, moves when one element value or one op-amp model
// entry moves, for every such number at once.
//
// The adjoint method. With Y(s) x = b and H = c^T x (c the probe's
// functional), a parameter p changes H by
//
//     dH/dp = -y^T (dY/dp) x + (dc/dp)^T x,     Y(s)^T y = c,
//
// so one forward solve (x) and one transposed solve (y) on the same
// factorisation give dH/dp for every parameter; dY/dp has O(1) entries per
// parameter (MnaSystem::derivative), so the whole analysis is one AC point
// plus a pass over the parameters: linear in circuit size.
//
// Normalised forms (dimensionless; x the parameter's value):
//   mag = (x/|H|) d|H|/dx = Re((x/H) dH/dx)   (+1: |H| grows as x does, in proportion)
//   deg = d(arg H in degrees)/d(ln x) = (180/pi) Im((x/H) dH/dx)
// A 1 % rise of x moves |H| by about mag % and the phase by deg/100 degrees.

#include <complex>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/circuit/spec.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/probe.hpp"

namespace tacet {

class FrequencyResponse;
struct CheckResult;

struct SensitivityOptions {
  std::string probe;  ///< probe text, resolved by run_sensitivity
  double at = 0;      ///< Hz, > 0
  /// A source's name: H is the transfer from that source alone (a unit
  /// phasor in it, every other source off). Empty: the response to every
  /// source's ac= phasor, as `tacet ac` shows it.
  std::string input;

  /// Empty when valid, else the problem in one sentence (--at not positive).
  std::string validate() const;
};

/// One parameter's effect on H.
struct ParameterSensitivity {
  std::string name;       ///< element (or op-amp instance) name
  ParameterKey key = ParameterKey::value;
  double value = 0;       ///< the parameter, SI
  double tolerance = 0;   ///< relative (0.01 = 1 %); 0: none given
  std::complex<double> derivative;  ///< dH/dx, H's unit per SI unit of x
  double mag = 0;         ///< (x/|H|) d|H|/dx
  double deg = 0;         ///< d(arg H, degrees)/d(ln x)
};

struct SensitivityResult {
  Probe probe;
  std::string input;  ///< the source H is taken from; empty: every source
  double f = 0;       ///< Hz
  std::complex<double> value;  ///< H
  /// Every parameter, sorted by |mag| largest first; equal |mag| (to 12
  /// digits) in circuit order, so the order does not depend on rounding.
  std::vector<ParameterSensitivity> elements;
};

/// Throws InputError for bad options, an unknown probe (with the nearest
/// name), an --input that is no source; SolveError when the circuit cannot be
/// solved at f or H is zero there (no relative sensitivity exists).
SensitivityResult run_sensitivity(const Circuit& circuit, const SensitivityOptions& options);

/// What drives the transfer being differentiated.
struct TransferDrive {
  /// Element index of the one source driving with a unit phasor; nullopt:
  /// every source's ac= phasor. Ignored for an impedance probe, which is
  /// driven by its own unit test current.
  std::optional<std::size_t> source;
};

/// The working part of the analysis, for callers that differentiate at many
/// frequencies (spec sensitivities): parameters listed once, scratch kept.
class TransferDerivatives {
 public:
  /// `response` must outlive this object. Lists the parameters and their
  /// dY/dx entries once (O(parameters) memory, a few entries each).
  explicit TransferDerivatives(FrequencyResponse& response);

  const std::vector<Parameter>& parameters() const { return parameters_; }
  /// H at f, and dH/dx for every parameter (in parameters() order) into
  /// `derivatives`. One factorisation (reused when f is the last one), one
  /// forward and one transposed solve.
  std::complex<double> at(const Probe& probe, const TransferDrive& drive, double f,
                          std::vector<std::complex<double>>& derivatives);

 private:
  FrequencyResponse& response_;
  std::vector<Parameter> parameters_;
  // Every parameter's dY/dx entries, made once (they are polynomials in s):
  // parameter k's are entries_[first_[k] .. first_[k + 1]).
  std::vector<MnaSystem::EntryPolynomial> entries_;
  std::vector<std::size_t> first_;
  std::vector<std::complex<double>> x_;
  std::vector<ProbeTerm> terms_;
};

// --- per spec ------------------------------------------------------------

/// d(measured value)/dx of one spec for one parameter.
struct SpecDerivative {
  std::size_t parameter = 0;  ///< index into SpecSensitivities::parameters
  double derivative = 0;      ///< spec unit per SI unit of the parameter, signed
  double per_percent = 0;     ///< spec unit per +1 % of the parameter: derivative * x / 100
};

/// How a spec's derivatives were found.
enum class SpecMethod {
  adjoint,            ///< gain, phase: the adjoint at the spec's frequency
  adjoint_flatness,   ///< adjoint at the worst frequency and at ref (the worst point held: envelope theorem)
  implicit_corner,    ///< corner: -(dG/dx)/(dG/df) at the corner, G = dB(f) - dB(ref)
  restamp_difference, ///< noise, snr: central difference of the band total on a re-stamped value
  none,               ///< offset, rails, or a spec that could not be measured: no derivatives
};
const char* to_string(SpecMethod method);

struct SpecSensitivity {
  std::string spec;       ///< the spec's name
  SpecKind kind = SpecKind::gain;
  SpecUnit unit = SpecUnit::db;  ///< the unit of value and of every derivative's numerator
  std::optional<double> value;   ///< as check measured it; nullopt: not measured
  SpecMethod method = SpecMethod::none;
  std::string note;       ///< why there are no derivatives (method none)
  /// One per parameter of SpecSensitivities::parameters, in that order
  /// (empty for method none). Signs are the point: d value/dx > 0 means the
  /// value rises with x.
  std::vector<SpecDerivative> derivatives;
};

/// Kinds without an adjoint form are differentiated by re-measuring on a
/// copy with one value scaled: every parameter while the circuit has at most
/// this many, else only those with tol=, so a large circuit costs O(tolerances).
inline constexpr std::size_t kMostRestampedParameters = 256;

/// The contract `tacet check --sensitivity` prints and `tacet spread
/// --corners` reads (it picks each toleranced value's worst sign from here):
///
/// - `parameters` lists every number Y(s) depends on (MnaSystem::parameters:
///   element main values, op-amp instances' gbw, aol, fp2, rout, rin), with
///   each element's `tol=` in `tolerances` (0: none; model entries: 0 until
///   models carry tolerances). A consumer that wants "each toleranced value"
///   keeps the ones with a tolerance; the others are listed so that a
///   designer sees which untoleranced numbers matter.
/// - per spec, in the order written, `derivatives[k]` is the first-order,
///   signed d(measured value)/d(parameter k) at the nominal circuit, in the
///   spec's unit (dB, V/V, deg, Hz, V rms) per SI unit of the parameter, and
///   `per_percent` the same per +1 % of it. For a phase, the measured value
///   is the angle check reports (its window's turn), whose derivative is that
///   of arg H. Flatness is |deviation| at its worst frequency: its derivative
///   is that of the worst point (held there), signed by the deviation.
/// - noise, snr, offset, rails (and any kind without an adjoint form) are
///   re-measured by run_check on a copy of the circuit with one value scaled
///   by 1 +- 1e-3 (central difference, method restamp_difference): every
///   parameter up to kMostRestampedParameters of them, else only toleranced
///   ones (`note` says so); their `derivatives` list only the parameters done,
///   each naming its index. Offset and rails are worst cases over the offsets'
///   signs: their derivative is that of the bound, piecewise smooth.
/// - a spec check could not measure, or whose derivative fails (a zero
///   transfer), has method none, a note, and no entries.
/// - `check` is the result of run_check(circuit); the adjoint kinds are not
///   re-measured, their worst point and corner are taken from it.
struct SpecSensitivities {
  std::vector<Parameter> parameters;
  std::vector<std::string> names;   ///< per parameter: the element's name
  std::vector<double> tolerances;   ///< per parameter: relative, 0 none
  std::vector<SpecSensitivity> specs;
};
SpecSensitivities run_spec_sensitivities(const Circuit& circuit, const CheckResult& check);

/// Whether run_spec_sensitivities differentiates a kind by the adjoint (gain,
/// phase, flatness, corners: derivatives of the matrix entries alone, so a
/// number Y(s) does not depend on has derivative 0) rather than by re-measuring.
bool spec_has_adjoint(SpecKind kind);

}  // namespace tacet
