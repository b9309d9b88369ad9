// spread --corners: each spec's worst corner from the signs of its
// sensitivities, measured by a full solve there.

#include "tacet/analysis/spread_corners.hpp"

#include <algorithm>
#include <cmath>
#include <unordered_map>

#include "tacet/analysis/check.hpp"
#include "tacet/analysis/sensitivity.hpp"
#include "tacet/analysis/spread.hpp"
#include "tacet/analysis/spread_draw.hpp"
#include "tacet/common/errors.hpp"

namespace tacet {

const char* to_string(CornerDirection direction) {
  return direction == CornerDirection::toward_min ? "min" : "max";
}

namespace {

constexpr double kHeldBelow = 1e-9;        // of the largest |a_i|: rounding, not a dependence
constexpr double kDifferenceStep = 1e-3;   // relative deviation of a central difference

/// One normalised draw a corner pushes to +-1: a part's own (a member's
/// ratio draw) or a matched set's common one.
struct Component {
  std::string name, param;
  int parameter = -1;  ///< plan index of an own draw; -1 for a set
  int set = -1;        ///< set index of a common draw
  double range = 0;    ///< the relative deviation at +1: tol, or ratio, or the first member's tol
};

std::vector<Component> components_of(const SpreadPlan& plan) {
  std::vector<Component> out;
  std::vector<int> set_seen(plan.sets.size(), 0);
  for (std::size_t k = 0; k < plan.parameters.size(); ++k) {
    const SpreadParameter& p = plan.parameters[k];
    const int index = static_cast<int>(k);
    if (p.set < 0) {
      out.push_back({p.name, p.param, index, -1, p.tolerance});
      continue;
    }
    if (p.ratio > 0) out.push_back({p.name, "ratio", index, -1, p.ratio});
    auto& seen = set_seen[static_cast<std::size_t>(p.set)];
    if (p.tolerance > 0 && !seen) {
      seen = 1;
      out.push_back({plan.sets[static_cast<std::size_t>(p.set)], "set", -1, p.set, p.tolerance});
    }
  }
  return out;
}

/// d value / d deviation of every plan parameter for one spec, by the
/// adjoint where the kind has one (x dv/dx), else by central differences on
/// the evaluator.
class Slopes {
 public:
  Slopes(const Circuit& circuit, const CheckResult& nominal, const SpreadPlan& plan, SpreadEvaluator& evaluator)
      : plan_(plan), evaluator_(evaluator) {
    CheckResult adjoint_kinds;
    for (const SpecResult& r : nominal.specs) {
      adjoint_index_.push_back(adjoint_kinds.specs.size());
      if (spec_has_adjoint(r.spec.kind)) adjoint_kinds.specs.push_back(r);
    }
    sensitivities_ = run_spec_sensitivities(circuit, adjoint_kinds);
    for (std::size_t k = 0; k < sensitivities_.parameters.size(); ++k)
      index_.emplace(key(sensitivities_.names[k], to_string(sensitivities_.parameters[k].key)), k);
  }

  /// Per plan parameter, or a note why there are none.
  std::vector<double> of(std::size_t spec, const SpecResult& nominal, std::string& note) {
    std::vector<double> g(plan_.parameters.size(), 0.0);
    if (!spec_has_adjoint(nominal.spec.kind)) {
      std::vector<double> deviations(plan_.parameters.size(), 0.0);
      for (std::size_t k = 0; k < g.size(); ++k) {
        deviations[k] = kDifferenceStep;
        const SpecResult up = evaluator_.measure(spec, deviations);
        deviations[k] = -kDifferenceStep;
        const SpecResult down = evaluator_.measure(spec, deviations);
        deviations[k] = 0;
        if (up.value && down.value) g[k] = (*up.value - *down.value) / (2 * kDifferenceStep);
      }
      return g;
    }
    const SpecSensitivity& s = sensitivities_.specs.at(adjoint_index_.at(spec));
    if (s.method == SpecMethod::none) {
      note = "no sensitivities: " + s.note;
      return {};
    }
    std::vector<double> by_parameter(sensitivities_.parameters.size(), 0.0);
    for (const SpecDerivative& d : s.derivatives)
      by_parameter[d.parameter] = d.derivative * sensitivities_.parameters[d.parameter].value;
    // A toleranced number the matrix does not depend on (en, in) moves no AC value.
    for (std::size_t k = 0; k < g.size(); ++k) {
      const auto it = index_.find(key(plan_.parameters[k].name, plan_.parameters[k].param));
      if (it != index_.end()) g[k] = by_parameter[it->second];
    }
    return g;
  }

 private:
  static std::string key(const std::string& name, const std::string& param) { return name + "/" + param; }

  const SpreadPlan& plan_;
  SpreadEvaluator& evaluator_;
  SpecSensitivities sensitivities_;
  std::unordered_map<std::string, std::size_t> index_;
  std::vector<std::size_t> adjoint_index_;  ///< per spec: its entry in sensitivities_.specs
};

/// a_i of every component (header): the first-order change of the value at w_i = 1.
std::vector<double> coefficients(const SpreadPlan& plan, const std::vector<Component>& components,
                                 const std::vector<double>& g) {
  std::vector<double> a;
  for (const Component& c : components) {
    if (c.parameter >= 0) {
      const SpreadParameter& p = plan.parameters[static_cast<std::size_t>(c.parameter)];
      a.push_back(g[static_cast<std::size_t>(c.parameter)] * (p.set < 0 ? p.tolerance : p.ratio));
      continue;
    }
    double sum = 0;
    for (std::size_t k = 0; k < plan.parameters.size(); ++k)
      if (plan.parameters[k].set == c.set) sum += g[k] * plan.parameters[k].tolerance;
    a.push_back(sum);
  }
  return a;
}

/// The full solve agrees with the linear prediction (header).
bool agrees(double nominal, double predicted, double value) {
  const double moved = value - nominal, expected = predicted - nominal;
  if (expected == 0) return std::abs(moved) <= 1e-9 * std::max(1.0, std::abs(nominal));
  const double ratio = moved / expected;
  return ratio >= 0.5 && ratio <= 2;
}

/// The corner toward one limit, measured.
SpecCorner corner_toward(CornerDirection toward, std::size_t spec, const SpecResult& nominal,
                         const SpreadPlan& plan, const std::vector<Component>& components,
                         const std::vector<double>& a, SpreadEvaluator& evaluator) {
  SpecCorner c;
  c.spec = nominal.spec.name;
  c.computed = true;
  c.toward = toward;
  c.nominal = *nominal.value;
  const double dir = toward == CornerDirection::toward_max ? 1 : -1;
  double largest = 0;
  for (const double x : a)
    if (std::isfinite(x)) largest = std::max(largest, std::abs(x));
  std::vector<double> own(plan.parameters.size(), 0.0), common(plan.sets.size(), 0.0), deviations;
  c.predicted = c.nominal;
  for (std::size_t i = 0; i < components.size(); ++i) {
    const Component& comp = components[i];
    if (!std::isfinite(a[i]) || a[i] == 0 || std::abs(a[i]) <= kHeldBelow * largest) {
      ++c.held;
      continue;
    }
    const int sign = dir * a[i] > 0 ? 1 : -1;
    (comp.parameter >= 0 ? own[static_cast<std::size_t>(comp.parameter)]
                         : common[static_cast<std::size_t>(comp.set)]) = sign;
    c.predicted += dir * std::abs(a[i]);
    c.drivers.push_back({comp.name, comp.param, sign, sign * comp.range, dir * std::abs(a[i])});
    ++c.moved;
  }
  std::stable_sort(c.drivers.begin(), c.drivers.end(), [](const CornerDriver& x, const CornerDriver& y) {
    return std::abs(x.shift) > std::abs(y.shift);
  });
  deviations_of(plan, own, common, deviations);
  const SpecResult at = evaluator.measure(spec, deviations);
  c.value = at.value;
  c.margin = at.margin;
  c.pass = at.pass;
  if (!at.value) c.note = at.note.empty() ? "not measured at the corner" : at.note;
  c.agrees = at.value && agrees(c.nominal, c.predicted, *at.value);
  return c;
}

/// Of two corners, the one with less margin; one that could not be measured is the worse.
const SpecCorner& worse(const SpecCorner& a, const SpecCorner& b) {
  if (!a.value) return a;
  if (!b.value) return b;
  return b.margin < a.margin ? b : a;
}

}  // namespace

std::vector<SpecCorner> run_spread_corners(const Circuit& circuit) {
  const SpreadPlan plan = plan_spread(circuit);
  if (plan.parameters.empty())
    throw InputError::usage(
        "--corners has no value to push: no part has tol= or ratio= and no model has a KEY_tol",
        "give the parts their tolerances, e.g. res R1 (a, b) 10k tol=1% (docs/language.md, Tolerances)");
  const CheckResult nominal = run_check(circuit);
  if (nominal.unsolved() > 0) throw nominal.unsolved_error();
  SpreadEvaluator evaluator(circuit, plan);
  Slopes slopes(circuit, nominal, plan, evaluator);
  const std::vector<Component> components = components_of(plan);
  std::vector<SpecCorner> out;
  for (std::size_t s = 0; s < nominal.specs.size(); ++s) {
    const SpecResult& r = nominal.specs[s];
    SpecCorner none;
    none.spec = r.spec.name;
    std::vector<double> g;
    if (!r.spec.min && !r.spec.max)
      none.note = "no limit to approach";
    else if (!r.value)
      none.note = "not measured at the nominal values";
    else
      g = slopes.of(s, r, none.note);
    if (!none.note.empty()) {
      out.push_back(std::move(none));
      continue;
    }
    const std::vector<double> a = coefficients(plan, components, g);
    std::optional<SpecCorner> best;
    for (const CornerDirection toward : {CornerDirection::toward_min, CornerDirection::toward_max}) {
      if (!(toward == CornerDirection::toward_min ? r.spec.min : r.spec.max)) continue;
      SpecCorner c = corner_toward(toward, s, r, plan, components, a, evaluator);
      best = best ? worse(*best, c) : c;
    }
    out.push_back(std::move(*best));
  }
  return out;
}

void attach_corners(SpreadResult& result, std::vector<SpecCorner> corners) {
  for (std::size_t s = 0; s < result.specs.size() && s < corners.size(); ++s)
    result.specs[s].corner = std::move(corners[s]);
  result.corners = true;
}

}  // namespace tacet
