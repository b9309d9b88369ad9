#pragma once
// Loop gain of every op amp, with the loop closed and no element added.
//
// T(s) is Bode's return ratio of the op amp's internal gain source
// A(s)(v+ - v-): with every independent source zeroed, that controlled source
// is replaced by an independent one of value 1, and T is minus what the
// controlled source would then produce. With h(s) the transfer from the
// source's voltage v_x to its control voltage d = v+ - v-, T = -A(s) h(s).
//
// One solve per op amp on the closed-loop factorisation gives h: a unit
// voltage e in series with the + input (rhs of the op amp's gain row) makes
// v_x / A - d = e, so d = h v_x and h = d / v_x, each read from the solution.
// d is what the gain source amplifies: v+ - v- plus the common-mode error
// k(s)(v+ + v-) of a model with cmrr (solve/mna.hpp); input capacitances are
// part of the network like any other capacitor.
// Both are components of one solve, so no difference of nearly equal numbers
// is formed at either end of the range (|T| >> 1 or |T| << 1).
//
// Every other op amp stays active: in nested loops each op amp's T is its own
// return ratio with the rest of the circuit, other loops closed, around it.
//
// Crossovers (|T| = 1) and phase crossovers (unwrapped phase at -180 - 360k,
// k = 0, 1, 2, ...: a phase lagging by 180, 540, ... degrees) are bracketed on
// a scan grid of at least 100 points a decade and then located by bisection
// on the continuous response to 1e-12 relative. A phase that rises through
// +180 (k = -1, more than 180 degrees of net lead) is no phase crossover.

#include <complex>
#include <cstddef>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {

struct LoopOptions {
  std::optional<Sweep> sweep;        ///< nullopt: default_loop_sweep(circuit)
  std::vector<std::string> opamps;   ///< names; empty: every op amp, in netlist order
  SolverKind solver = SolverKind::klu;
};

struct LoopCrossover {
  double f = 0;             ///< Hz, |T| = 1
  double phase_margin = 0;  ///< deg, 180 + unwrapped arg T
};

struct LoopPhaseCrossover {
  double f = 0;            ///< Hz, unwrapped arg T = -180 - 360k
  double gain_margin = 0;  ///< dB, -20 log10 |T|
};

struct LoopTrace {
  std::string opamp;
  std::vector<std::complex<double>> t;  ///< T at each sweep frequency, V/V
  std::vector<double> deg;              ///< arg T unwrapped along the sweep, degrees
  std::vector<LoopCrossover> crossovers;             ///< sorted by frequency
  std::vector<LoopPhaseCrossover> phase_crossovers;  ///< sorted by frequency
  std::optional<double> phase_margin;  ///< deg, smallest over crossovers; none: no crossover
  std::optional<double> gain_margin;   ///< dB, smallest over phase crossovers
};

struct LoopResult {
  Sweep sweep;                      ///< the sweep used (the default when none was given)
  std::vector<double> frequencies;  ///< Hz
  std::vector<LoopTrace> loops;     ///< one per op amp
};

/// From a decade below the lowest dominant pole (gbw/aol) of any op amp to two
/// decades above the highest gbw or fp2, on whole decades, 20 points a decade.
Sweep default_loop_sweep(const Circuit& circuit);

/// Element indices of the named op amps (every op amp when `names` is empty).
/// Throws InputError for a name that is not an op amp, with the nearest op
/// amp's name as a hint, and when the circuit has no op amp.
std::vector<std::size_t> resolve_opamps(const Circuit& circuit,
                                        const std::vector<std::string>& names);

/// The op amp's open-loop gain A(s), the same function its MNA row divides by.
std::complex<double> opamp_gain(const OpAmpModel& model, std::complex<double> s);

/// T of one op amp at one frequency. An op amp's loop lives in its own
/// diagonal block of the matrix in block triangular form (solve/
/// block_form.hpp): its gain row, the gain source it drives and any pin that
/// depends on that source are strongly connected, and the unit in its gain
/// row reaches nothing upstream. So T comes from a dense solve of that block
/// alone (up to kMostBlockUnknowns unknowns, factored once per frequency and
/// block, each solve measured like every other): a few hundred operations a
/// point however large the circuit, where the whole matrix would cost one
/// factorisation and a solve of every unknown per op amp. A larger block, or
/// a block solve that cannot be trusted, takes the closed-loop factorisation
/// of the whole circuit: the first call at f factors, each op amp then costs
/// one solve.
class LoopGain {
 public:
  static constexpr int kMostBlockUnknowns = 64;

  /// `blocks` false: always the whole matrix (the tests compare the two).
  explicit LoopGain(const Circuit& circuit, SolverKind solver = SolverKind::klu, bool blocks = true);
  /// On a response the caller already has (check's, shared with its AC specs):
  /// no second MNA system, and a frequency factored for one is reused by both.
  explicit LoopGain(FrequencyResponse& shared, bool blocks = true);
  ~LoopGain();
  LoopGain(const LoopGain&) = delete;
  LoopGain& operator=(const LoopGain&) = delete;
  std::complex<double> at(std::size_t opamp, double f);
  FrequencyResponse& response() { return response_; }
  /// Whether the last at() was solved on the op amp's own block.
  bool last_on_block() const { return last_on_block_; }

 private:
  struct Blocks;
  /// T from the op amp's block; none: the block is too large or its solve
  /// cannot be trusted.
  std::optional<std::complex<double>> on_block(std::size_t opamp, double f);

  std::unique_ptr<FrequencyResponse> owned_;  ///< empty when the response is shared
  FrequencyResponse& response_;
  std::vector<std::complex<double>> rhs_;
  std::unique_ptr<Blocks> blocks_;  ///< none: whole matrix always
  bool last_on_block_ = false;
};

/// Crossovers, phase crossovers and both margins of a loop gain T(f) (V/V)
/// over `grid` (rising frequencies, Hz): each bracketed between neighbouring
/// points and located by bisection, then sorted and summarised into `trace`
/// (its t and deg are left as they are).
void find_loop_margins(const std::function<std::complex<double>(double)>& t,
                       const std::vector<double>& grid, LoopTrace& trace);
/// The same with T already known on the grid (`values[i]` = T at grid[i]):
/// `t` is called only inside the brackets.
void find_loop_margins(const std::function<std::complex<double>(double)>& t,
                       const std::vector<double>& grid,
                       const std::vector<std::complex<double>>& values, LoopTrace& trace);

/// One op amp's crossovers and margins over [from, to] Hz, scanned on a log
/// grid of kSearchGridPerDecade points a decade (no sweep points kept).
LoopTrace loop_margins(LoopGain& gain, std::size_t opamp, double from, double to);

/// Throws InputError for a bad sweep or op-amp name, SolveError when the
/// circuit cannot be solved at some frequency.
LoopResult run_loop(const Circuit& circuit, const LoopOptions& options);

/// Whether T at the low end of a range holds the loop left of -1 by positive
/// feedback: |T| > 1 with arg T in (90, 180], a lag from +180 as a latch's
/// T = -aol beta / (1 + s/wp) has. A negative-feedback loop lagging past -90
/// (a range that starts above its dominant pole) has arg T in (-180, -90).
bool regenerative(std::complex<double> t_low);

/// The unwrapped phase step from `previous` (deg) to the phase of `t`: the
/// nearest value congruent to arg t modulo 360.
double unwrap_deg(double previous, std::complex<double> t);

}  // namespace tacet
