// Step response and settling: the DC final value, Radau IIA on the sparse
// pencil until the state is quiet, then the metrics and the printed points
// from each step's collocation polynomial. See settle.hpp.

#include "tacet/analysis/settle.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <functional>
#include <limits>
#include <memory>

#include "tacet/common/errors.hpp"
#include "tacet/common/spelling.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/pencil.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/radau.hpp"

namespace tacet {
namespace {

using Vector = std::vector<double>;

// Local error per step, relative to each unknown's scale; a narrow band asks
// for more, so the settling time (the band edge crossed at a small slope)
// is located to 1e-6 of itself.
double step_tolerance(double band) { return std::min(1e-9, 1e-5 * band); }
// A state this many scales from its final value is diverging.
constexpr double kDiverged = 1e12;
// Each group's smallest scale, as a fraction of the largest in it (voltages,
// currents); a group whose values are all tiny takes the other's, converted
// through 1 uS (a current of 1 pA per volt of response is below notice).
constexpr double kScaleFloor = 1e-6;
constexpr double kCrossSiemens = 1e-6;
constexpr double kProbeFloor = 1e-3;

// --- inputs and probes ----------------------------------------------------------

bool is_source(const Element& e) { return traits(e.kind).drive != Drive::none; }

std::size_t resolve_input(const Circuit& circuit, const std::string& name) {
  std::vector<std::string> sources, with_ac;
  std::vector<std::size_t> indices, ac_indices;
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const Element& e = circuit.elements[i];
    if (!is_source(e)) continue;
    sources.push_back(e.name);
    indices.push_back(i);
    if (e.ac_magnitude != 0) with_ac.push_back(e.name), ac_indices.push_back(i);
  }
  if (name.empty()) {
    if (ac_indices.size() == 1) return ac_indices.front();
    if (indices.size() == 1) return indices.front();
    if (indices.empty())
      throw InputError::usage("settle: the circuit has no source to step",
                              "add a vsrc or isrc at the input");
    throw InputError::usage(
        fmt::format("settle: which source steps? the circuit has {} sources{}", sources.size(),
                    with_ac.size() > 1 ? " with an ac value" : ""),
        choice_hint("", with_ac.size() > 1 ? with_ac : sources, "name one with --input; sources"));
  }
  const auto element = circuit.find_element(name);
  if (!element) throw InputError::unknown("source", name, "--input", nearest_word(name, sources));
  const Element& e = circuit.elements[*element];
  if (!is_source(e))
    throw InputError::usage(
        fmt::format("--input '{}' is a {}, not a source", name, to_keyword(e.kind)),
        choice_hint(name, sources, "sources"));
  return *element;
}

// A probe as a real functional of the state: value = constant + sum c_k x_k.
struct TimeProbe {
  Probe probe;
  std::vector<ProbeTerm> terms;
  double constant = 0;
  bool is_current = false;

  double value(const Vector& x) const {
    double v = constant;
    for (const auto& t : terms) v += t.coefficient.real() * x[static_cast<std::size_t>(t.unknown)];
    return v;
  }
};

TimeProbe time_probe(const std::string& text, const Circuit& circuit, const MnaSystem& mna,
                     std::size_t input) {
  TimeProbe p;
  p.probe = resolve_probe(text, circuit);
  if (p.probe.kind == ProbeKind::impedance)
    throw InputError::usage(
        fmt::format("settle: probe '{}' is an impedance; a step response has voltages and "
                    "currents",
                    p.probe.text),
        "probe a node (out), a pair (out,ref) or a current (i(R1))");
  p.is_current = p.probe.kind == ProbeKind::current;
  std::vector<ProbeTerm> at_one;
  probe_functional(p.probe, mna, 0.0, p.terms);
  probe_functional(p.probe, mna, 1.0, at_one);
  for (std::size_t k = 0; k < at_one.size(); ++k)
    if (at_one[k].coefficient != p.terms[k].coefficient)
      throw InputError::usage(
          fmt::format("settle: probe '{}' is a capacitor's current, which settle does not give",
                      p.probe.text),
          "probe the voltage across it, or the current of an element in series with it");
  // A current source's own current is the step itself (or zero).
  if (p.is_current && circuit.elements[p.probe.element].kind == ElementKind::isource)
    p.constant = p.probe.element == input ? 1.0 : 0.0;
  return p;
}

Vector unit_step(const MnaSystem& mna, std::size_t input, int size) {
  Vector b(static_cast<std::size_t>(size), 0.0);
  const Element& e = mna.circuit().elements[input];
  if (traits(e.kind).drive == Drive::voltage) {
    b[static_cast<std::size_t>(mna.branch_unknown(input))] = 1.0;
  } else {  // the source draws its current out of its first node, into its second
    const int plus = mna.node_unknown(e.nodes[0]), minus = mna.node_unknown(e.nodes[1]);
    if (plus >= 0) b[static_cast<std::size_t>(plus)] -= 1.0;
    if (minus >= 0) b[static_cast<std::size_t>(minus)] += 1.0;
  }
  return b;
}

// (G + s C) x = b on a fresh real factorisation: s = 0 is the final value,
// a very large s the state just after the step.
Vector solve_at(const SparsePencil& pencil, const MnaSystem& mna, double s, const Vector& b,
                SolverKind kind) {
  auto lu = make_real_sparse_lu(kind);
  lu->analyse(pencil.pattern);
  Vector values(static_cast<std::size_t>(pencil.pattern.nonzeros()));
  pencil.assemble(s, values.data());
  if (lu->factor(values.data()) == FactorStatus::singular) throw_singular(mna, lu->singular_column(), 0.0);
  Vector x = b;
  lu->solve(x.data(), 1);
  return x;
}

// --- the dense output ----------------------------------------------------------------

// The probe's values at a step's start and its three stages (tau = 0, c1, c2, 1).
using StageValues = std::array<double, 4>;

struct StepRecord {
  double t0 = 0, h = 0;
  std::vector<StageValues> probes;  // one per probe
};

// The interpolating polynomial of one step in tau = (t - t0) / h, in Newton
// form: the step's own four values and the two inner stages of the next step
// (of the one before, for the last), degree 5. The step's own collocation cubic
// alone is only O(h^4) between its nodes, coarser than the step ends (O(h^5))
// and the stages: with two more nodes the printed points keep their accuracy.
class StepPolynomial {
 public:
  StepPolynomial(const std::vector<StepRecord>& steps, std::size_t i, std::size_t k) {
    const StepRecord& s = steps[i];
    const auto& v = s.probes[k];
    add(0.0, v[0]);
    for (std::size_t j = 0; j < 3; ++j) add(radau::kNodes[j], v[j + 1]);
    const StepRecord* other = i + 1 < steps.size() ? &steps[i + 1] : i > 0 ? &steps[i - 1] : nullptr;
    if (!other) return;
    for (std::size_t j = 0; j < 2; ++j) {
      const double t = other->t0 + radau::kNodes[j] * other->h;
      add((t - s.t0) / s.h, other->probes[k][j + 1]);
    }
  }
  double at(double tau) const {
    double v = coefficient_[count_ - 1];
    for (std::size_t j = count_ - 1; j-- > 0;) v = coefficient_[j] + (tau - node_[j]) * v;
    return v;
  }

 private:
  // Newton's divided differences, one node at a time.
  void add(double tau, double value) {
    double d = value;
    for (std::size_t j = 0; j < count_; ++j) d = (d - coefficient_[j]) / (tau - node_[j]);
    node_[count_] = tau;
    coefficient_[count_++] = d;
  }
  std::array<double, 6> node_{}, coefficient_{};
  std::size_t count_ = 0;
};

// Where a step's polynomial is looked at for crossings and extremes.
constexpr int kSamples = 32;
double sample(int j) { return static_cast<double>(j) / kSamples; }

// The largest tau in [0, 1] where p(tau) = level, by bisection in the last
// sample interval where p - level changes sign; nullopt when there is none.
std::optional<double> last_crossing(const StepPolynomial& p, double level) {
  for (int j = kSamples; j-- > 0;) {
    double lo = sample(j), hi = sample(j + 1);
    double flo = p.at(lo) - level, fhi = p.at(hi) - level;
    if (fhi == 0) return hi;
    if ((flo < 0) == (fhi < 0)) continue;
    for (int i = 0; i < 200 && hi - lo > 1e-15; ++i) {
      const double mid = 0.5 * (lo + hi), fmid = p.at(mid) - level;
      if ((fmid < 0) == (fhi < 0)) hi = mid, fhi = fmid;
      else lo = mid, flo = fmid;
    }
    return 0.5 * (lo + hi);
  }
  return std::nullopt;
}

// The largest of f(p(tau)) on [0, 1]: the best sample, then golden-section
// search between its neighbours.
double largest(const StepPolynomial& p, const std::function<double(double)>& f) {
  int best = 0;
  double best_value = f(p.at(0));
  for (int j = 1; j <= kSamples; ++j)
    if (const double v = f(p.at(sample(j))); v > best_value) best = j, best_value = v;
  double lo = sample(std::max(best - 1, 0)), hi = sample(std::min(best + 1, kSamples));
  const double ratio = (std::sqrt(5.0) - 1) / 2;
  double a = hi - ratio * (hi - lo), b = lo + ratio * (hi - lo);
  double fa = f(p.at(a)), fb = f(p.at(b));
  for (int i = 0; i < 80 && hi - lo > 1e-14; ++i) {
    if (fa < fb) lo = a, a = b, fa = fb, b = lo + ratio * (hi - lo), fb = f(p.at(b));
    else hi = b, b = a, fb = fa, a = hi - ratio * (hi - lo), fa = f(p.at(a));
  }
  return std::max({best_value, fa, fb});
}

// --- scales: what "small" means for each unknown ------------------------------------

class Scales {
 public:
  Scales(const Vector& final, std::vector<char> is_current)
      : largest_(final.size(), 0.0), is_current_(std::move(is_current)) {
    for (std::size_t i = 0; i < final.size(); ++i) largest_[i] = std::abs(final[i]);
    update_floors();
  }
  void see(const Vector& x) {
    for (std::size_t i = 0; i < x.size(); ++i) largest_[i] = std::max(largest_[i], std::abs(x[i]));
    update_floors();
  }
  double of(std::size_t i) const { return std::max(largest_[i], floor_[is_current_[i] ? 1 : 0]); }
  double floor(bool current) const { return floor_[current ? 1 : 0]; }

 private:
  void update_floors() {
    double top[2] = {0, 0};
    for (std::size_t i = 0; i < largest_.size(); ++i)
      top[is_current_[i] ? 1 : 0] = std::max(top[is_current_[i] ? 1 : 0], largest_[i]);
    const double volts = std::max(top[0], top[1] / kCrossSiemens);
    const double amps = std::max(top[1], top[0] * kCrossSiemens);
    floor_[0] = kScaleFloor * (volts > 0 ? volts : 1.0);
    floor_[1] = kScaleFloor * (amps > 0 ? amps : 1.0);
  }
  Vector largest_;
  std::vector<char> is_current_;
  double floor_[2] = {1, 1};
};

// --- the integration ---------------------------------------------------------------

struct Integration {
  std::vector<StepRecord> steps;
  double quiet_time = 0;
  bool settled = false;
};

class StepRun {
 public:
  StepRun(const SparsePencil& pencil, const Vector& b, const Vector& final,
          const std::vector<TimeProbe>& probes, std::vector<char> is_current,
          const SettleOptions& options)
      : final_(final),
        probes_(probes),
        band_(options.band),
        tolerance_(step_tolerance(options.band)),
        scales_(final, std::move(is_current)),
        initial_(scales_),
        radau_(pencil, b, options.solver) {
    for (const auto& p : probes) {
      probe_final_.push_back(p.value(final));
      probe_largest_.push_back(std::abs(probe_final_.back()));
    }
  }

  /// From rest (x = 0 before the step), `after_step` the state just after it.
  void begin(Vector after_step, double first_step) {
    scales_.see(after_step);
    see_probes(after_step);
    after_step_ = after_step;
    initial_ = scales_;
    radau_.start(Vector(after_step.size(), 0.0), first_step, std::move(after_step));
  }
  double time() const { return radau_.time(); }
  double band() const { return band_; }
  int factorisations() const { return radau_.factorisations(); }

  /// One step, recorded; returns the state's distance from final in scales
  /// (`growth`: in the scales it had just after the step, which a diverging
  /// response outgrows while its running scales follow it).
  double step(std::vector<StepRecord>& records, double* growth = nullptr) {
    const RadauStep s = radau_.advance([this](const Vector& err) { return error_norm(err); });
    StepRecord record{s.t0, s.h, {}};
    const Vector& start = records.empty() ? after_step_ : *s.start;
    for (const auto& p : probes_)
      record.probes.push_back({p.value(start), p.value(*s.stages[0]), p.value(*s.stages[1]),
                               p.value(*s.stages[2])});
    records.push_back(std::move(record));
    const Vector& y = *s.stages[2];
    scales_.see(y);
    see_probes(y);
    if (growth) *growth = distance_from_final(y, initial_);
    return distance_from_final(y, scales_);
  }

 private:
  // The larger of the probe's own size and a thousandth of what its terms'
  // scales give it (a probe that is a small difference of large unknowns is
  // held 1000 times tighter than they are, never more: rounding sets a limit).
  double probe_scale(std::size_t k) const {
    double from_terms = 0;
    for (const auto& t : probes_[k].terms)
      from_terms += std::abs(t.coefficient.real()) * scales_.of(static_cast<std::size_t>(t.unknown));
    return std::max({probe_largest_[k], kProbeFloor * from_terms,
                     scales_.floor(probes_[k].is_current)});
  }
  void see_probes(const Vector& x) {
    for (std::size_t k = 0; k < probes_.size(); ++k)
      probe_largest_[k] = std::max(probe_largest_[k], std::abs(probes_[k].value(x)));
  }
  double error_norm(const Vector& err) const {
    double worst = 0;
    for (std::size_t i = 0; i < err.size(); ++i)
      worst = std::max(worst, std::abs(err[i]) / scales_.of(i));
    for (std::size_t k = 0; k < probes_.size(); ++k)
      worst = std::max(worst, std::abs(probes_[k].value(err) - probes_[k].constant) / probe_scale(k));
    return worst / tolerance_;
  }
  double distance_from_final(const Vector& y, const Scales& scales) const {
    double worst = 0;
    for (std::size_t i = 0; i < y.size(); ++i)
      worst = std::max(worst, std::abs(y[i] - final_[i]) / scales.of(i));
    for (std::size_t k = 0; k < probes_.size(); ++k)
      worst = std::max(worst, std::abs(probes_[k].value(y) - probe_final_[k]) / probe_scale(k));
    return worst;
  }

  const Vector& final_;
  const std::vector<TimeProbe>& probes_;
  double band_, tolerance_;
  Scales scales_, initial_;
  RadauIntegrator radau_;
  Vector probe_final_, probe_largest_;
  Vector after_step_;
};

// A first step well inside the fastest time constant the matrices suggest.
double first_step(const SparsePencil& pencil) {
  double g = 0, c = 0;
  for (double v : pencil.g) g = std::max(g, std::abs(v));
  for (double v : pencil.c) c = std::max(c, std::abs(v));
  return c > 0 && g > 0 ? 1e-3 * c / g : 1.0;
}

// --- the metrics ---------------------------------------------------------------------

struct Metrics {
  double peak = 0;
  std::optional<double> overshoot, settling_time;
};

// Whether final counts as zero: below rounding of the largest value seen.
bool final_is_zero(double final, const std::vector<StepRecord>& steps, std::size_t k) {
  double most = std::abs(final);
  for (const auto& s : steps)
    for (double v : s.probes[k]) most = std::max(most, std::abs(v));
  return std::abs(final) <= 1e-9 * most || most == 0;
}

Metrics measure(const std::vector<StepRecord>& steps, std::size_t k, double final, double band,
                bool settled) {
  Metrics m;
  if (steps.empty()) return m;
  if (final_is_zero(final, steps, k)) {
    double up = 0, down = 0;  // the largest and the most negative value
    for (std::size_t i = 0; i < steps.size(); ++i) {
      const StepPolynomial p(steps, i, k);
      up = std::max(up, largest(p, [](double v) { return v; }));
      down = std::max(down, largest(p, [](double v) { return -v; }));
    }
    m.peak = up >= down ? up : -down;
    return m;
  }
  // q = (v - final) / final: positive beyond final, whatever final's sign.
  auto q = [final](double v) { return v / final - 1; };
  double most = -std::numeric_limits<double>::infinity();
  for (std::size_t i = 0; i < steps.size(); ++i) most = std::max(most, largest(StepPolynomial(steps, i, k), q));
  m.peak = final * (1 + most);
  m.overshoot = std::max(0.0, most);
  if (!settled) return m;
  const double upper = final * (1 + band), lower = final * (1 - band);
  auto away = [&](double v) { return std::abs(q(v)); };
  for (std::size_t i = steps.size(); i-- > 0;) {
    const StepPolynomial p(steps, i, k);
    if (!(largest(p, away) > band)) continue;
    double tau = 0;
    for (double level : {upper, lower})
      if (auto cross = last_crossing(p, level)) tau = std::max(tau, *cross);
    m.settling_time = steps[i].t0 + tau * steps[i].h;
    return m;
  }
  m.settling_time = 0.0;
  return m;
}

double value_at(const std::vector<StepRecord>& steps, std::size_t k, double t) {
  auto it = std::upper_bound(steps.begin(), steps.end(), t,
                             [](double time, const StepRecord& s) { return time < s.t0; });
  const auto i = static_cast<std::size_t>(it == steps.begin() ? 0 : it - steps.begin() - 1);
  const StepRecord& s = steps[i];
  return StepPolynomial(steps, i, k).at(std::clamp((t - s.t0) / s.h, 0.0, 1.0));
}

[[noreturn]] void unsettled(double t, bool diverged) {
  if (diverged)
    throw SolveError::unsolvable(
        fmt::format("the step response grows without bound (t = {:.6g} s): the circuit is "
                    "unstable",
                    t),
        "tacet poles lists the poles in the right half-plane; tacet loop the margins");
  throw SolveError::unsolvable(
      fmt::format("the step response has not settled after {} steps (t = {:.6g} s)",
                  kSettleMaxSteps, t),
      "a pole with little damping? see tacet poles; --to T shows the response up to T");
}

// Until the state is quiet and at least to `required_end` (0: no --to). With
// --to, the response may take as many steps again after it to become quiet;
// without, kSettleMaxSteps in all, else an error.
Integration integrate(StepRun& run, double required_end) {
  Integration out;
  std::size_t steps_to_end = 0;  // steps it took to reach required_end
  for (;;) {
    const std::size_t taken = out.steps.size();
    if (taken >= static_cast<std::size_t>(kSettleMaxSteps) ||
        (steps_to_end > 0 && taken >= 2 * steps_to_end)) {
      if (required_end == 0 || run.time() < required_end) unsettled(run.time(), false);
      break;
    }
    double growth = 0;
    const double distance = run.step(out.steps, &growth);
    if (!std::isfinite(growth) || growth > kDiverged) {
      if (run.time() < required_end && std::isfinite(growth)) continue;
      if (run.time() < required_end || required_end == 0) unsettled(run.time(), true);
      break;
    }
    if (required_end > 0 && steps_to_end == 0 && run.time() >= required_end)
      steps_to_end = out.steps.size();
    if (distance <= kQuietFraction * run.band() && run.time() >= required_end) {
      out.settled = true;
      out.quiet_time = run.time();
      break;
    }
  }
  return out;
}

std::vector<char> current_unknowns(const MnaSystem& mna, int size) {
  std::vector<char> is_current(static_cast<std::size_t>(size), 0);
  for (std::size_t i = 0; i < mna.circuit().elements.size(); ++i)
    if (const int u = mna.branch_unknown(i); u >= 0) is_current[static_cast<std::size_t>(u)] = 1;
  return is_current;
}

}  // namespace

SettleResult run_settle(const Circuit& circuit, const SettleOptions& options) {
  if (const std::string problem = options.validate(); !problem.empty())
    throw InputError::usage(problem);
  const std::size_t input = resolve_input(circuit, options.input);
  check_solvable(circuit, AnalysisKind::dc);  // final needs the DC point
  const MnaSystem mna(circuit);
  std::vector<TimeProbe> probes;
  for (const auto& text : options.probes) probes.push_back(time_probe(text, circuit, mna, input));

  const SparsePencil pencil = sparse_pencil(mna);
  const Vector b = unit_step(mna, input, pencil.size());
  const Vector final = solve_at(pencil, mna, 0.0, b, options.solver);
  const double h0 = first_step(pencil);
  // The state just after the step: one backward-Euler step far shorter than
  // the first, (G + C / h) x = b, whose error is of order h over the fastest
  // time constant.
  Vector after_step = solve_at(pencil, mna, 1e6 / h0, b, options.solver);

  StepRun run(pencil, b, final, probes, current_unknowns(mna, pencil.size()), options);
  run.begin(std::move(after_step), h0);
  Integration integration = integrate(run, options.to.value_or(0.0));

  SettleResult result;
  result.input = circuit.elements[input].name;
  result.input_unit = traits(circuit.elements[input].kind).drive == Drive::voltage ? "V" : "A";
  result.settled = integration.settled;
  double longest = 0;
  for (std::size_t k = 0; k < probes.size(); ++k) {
    SettleTrace trace;
    trace.probe = probes[k].probe.text;
    trace.unit = probe_unit(probes[k].probe);
    trace.final = probes[k].value(final);
    trace.band = options.band;
    const Metrics m = measure(integration.steps, k, trace.final, options.band, integration.settled);
    trace.peak = m.peak;
    trace.overshoot = m.overshoot;
    trace.settling_time = m.settling_time;
    longest = std::max(longest, m.settling_time.value_or(0.0));
    result.traces.push_back(std::move(trace));
  }
  result.to = options.to ? *options.to : longest > 0 ? 2 * longest : integration.quiet_time;
  while (run.time() < result.to) {
    if (static_cast<int>(integration.steps.size()) >= 2 * kSettleMaxSteps)
      unsettled(run.time(), false);
    run.step(integration.steps);
  }
  result.steps = static_cast<int>(integration.steps.size());
  result.factorisations = run.factorisations() + 2;
  result.unknowns = pencil.size();
  for (int i = 0; i < options.points; ++i)
    result.times.push_back(result.to * i / (options.points - 1));
  for (std::size_t k = 0; k < probes.size(); ++k)
    for (const double t : result.times)
      result.traces[k].values.push_back(value_at(integration.steps, k, t));
  return result;
}

std::string SettleOptions::validate() const {
  if (probes.empty()) return "settle needs at least one --probe";
  if (!(band > 0)) return "--band must be a positive fraction, such as 0.01% or 1e-4";
  if (!(band < 1)) return "--band must be below 100% of the final value";
  if (to && !(*to > 0 && std::isfinite(*to))) return "--to must be a positive time, such as 10us";
  if (points < 2 || points > 1000000) return "--points must be from 2 to 1000000";
  return {};
}

}  // namespace tacet
