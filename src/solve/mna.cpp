// assemble: numbering of unknowns, the fixed sparse pattern and the
// structural checks that run before any matrix is built.

#include "tacet/solve/mna.hpp"
#include "tacet/common/constants.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <numeric>
#include <queue>
#include <type_traits>

#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"

namespace tacet {
namespace {


// --- structural checks -----------------------------------------------------

class DisjointSets {
 public:
  explicit DisjointSets(std::size_t n) : parent_(n) {
    std::iota(parent_.begin(), parent_.end(), 0);
  }
  int find(int x) {
    while (parent_[x] != x) x = parent_[x] = parent_[parent_[x]];
    return x;
  }
  void join(int a, int b) { parent_[find(a)] = find(b); }

 private:
  std::vector<int> parent_;
};

bool vccs_is_conductance(const Element& e) {
  const auto& n = e.nodes;
  return (n[0] == n[2] && n[1] == n[3]) || (n[0] == n[3] && n[1] == n[2]);
}

// The node pairs through which an element lets a node voltage be fixed
// relative to gnd. Current sources and op-amp inputs do not conduct.
struct NodePairs {
  std::array<std::pair<int, int>, 5> pair{};
  int count = 0;
  void add(int a, int b) { pair[static_cast<std::size_t>(count++)] = {a, b}; }
};

NodePairs conducting_pairs(const Circuit& circuit, const Element& e, AnalysisKind kind) {
  const auto& n = e.nodes;
  NodePairs pairs;
  if (holds(traits(e.kind).conducts, kind == AnalysisKind::dc)) pairs.add(n[0], n[1]);
  // The paths that depend on more than the kind: its wiring or its model.
  if (e.kind == ElementKind::vccs && vccs_is_conductance(e)) pairs.add(n[0], n[1]);
  if (e.kind == ElementKind::opamp) {
    const OpAmpModel& m = circuit.model_of(e);
    pairs.add(n[2], 0);
    if (m.rin > 0) pairs.add(n[0], n[1]);
    if (kind == AnalysisKind::ac && m.cin_diff > 0) pairs.add(n[0], n[1]);
    if (kind == AnalysisKind::ac && m.cin_cm > 0) pairs.add(n[0], 0), pairs.add(n[1], 0);
  }
  return pairs;
}

std::string quoted_list(const std::vector<std::string>& names) {
  constexpr std::size_t kShown = 12;
  std::string out;
  for (std::size_t i = 0; i < names.size() && i < kShown; ++i)
    out += (out.empty() ? "'" : ", '") + names[i] + "'";
  if (names.size() > kShown) out += fmt::format(" and {} more", names.size() - kShown);
  return out;
}

void check_connected_to_gnd(const Circuit& circuit, AnalysisKind kind) {
  DisjointSets sets(circuit.node_count());
  for (const auto& e : circuit.elements) {
    const NodePairs pairs = conducting_pairs(circuit, e, kind);
    for (int k = 0; k < pairs.count; ++k) sets.join(pairs.pair[k].first, pairs.pair[k].second);
  }
  std::vector<std::string> floating;
  for (std::size_t node = 1; node < circuit.node_count(); ++node)
    if (sets.find(static_cast<int>(node)) != sets.find(0))
      floating.push_back(circuit.node_names[node]);
  if (floating.empty()) return;
  const bool one = floating.size() == 1;
  const std::string who = fmt::format("{} {}", one ? "node" : "nodes", quoted_list(floating));
  const char* has = one ? "has" : "have";
  if (kind == AnalysisKind::ac)
    throw SolveError::unsolvable(
        fmt::format("{} {} no connection to gnd", who, has),
        "every node needs a path to gnd through resistors, capacitors, inductors or voltage "
        "sources; op-amp inputs and current sources are no such path");
  throw SolveError::unsolvable_at(
      0, fmt::format("{} {} no DC path to gnd", who, has),
      "at DC capacitors are open; give the node a resistor to a biased node or to gnd");
}

struct VoltageBranch {
  int a, b;
  std::size_t element;
};

std::vector<VoltageBranch> voltage_defining_branches(const Circuit& circuit, AnalysisKind kind) {
  std::vector<VoltageBranch> branches;
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    const auto& n = e.nodes;
    if (holds(traits(e.kind).defines_voltage, kind == AnalysisKind::dc))
      branches.push_back({n[0], n[1], i});
    if (e.kind == ElementKind::opamp && circuit.model_of(e).rout == 0)
      branches.push_back({n[2], 0, i});
  }
  return branches;
}

// The elements on the path from `from` to `to` in a forest of branches.
std::vector<std::size_t> forest_path(const std::vector<std::vector<VoltageBranch>>& adjacent,
                                     int from, int to) {
  std::vector<int> came_by(adjacent.size(), -1);  // index into adjacent[previous]
  std::vector<int> previous(adjacent.size(), -1);
  std::vector<bool> seen(adjacent.size(), false);
  std::queue<int> open;
  open.push(from);
  seen[from] = true;
  while (!open.empty()) {
    const int node = open.front();
    open.pop();
    for (std::size_t k = 0; k < adjacent[node].size(); ++k) {
      const int next = adjacent[node][k].b;
      if (seen[next]) continue;
      seen[next] = true;
      previous[next] = node;
      came_by[next] = static_cast<int>(k);
      open.push(next);
    }
  }
  std::vector<std::size_t> path;
  for (int node = to; node != from; node = previous[node])
    path.push_back(adjacent[previous[node]][came_by[node]].element);
  return path;
}

// The reason a voltage loop makes the circuit unsolvable, for one analysis kind.
SolveError loop_error(AnalysisKind kind, const std::string& reason) {
  return kind == AnalysisKind::dc ? SolveError::unsolvable_at(0, reason)
                                  : SolveError::unsolvable(reason);
}

[[noreturn]] void report_loop(const Circuit& circuit, AnalysisKind kind,
                              const VoltageBranch& closing, const std::vector<std::size_t>& path) {
  const auto& closer = circuit.elements[closing.element].name;
  if (closing.a == closing.b)
    throw loop_error(kind, fmt::format("'{}' sets a voltage between node '{}' and itself", closer,
                                       circuit.node_names[closing.a]));
  if (path.size() == 1)
    throw loop_error(kind, fmt::format("'{}' and '{}' both set the voltage between nodes '{}' "
                                       "and '{}'",
                                       circuit.elements[path[0]].name, closer,
                                       circuit.node_names[closing.a],
                                       circuit.node_names[closing.b]));
  std::vector<std::string> names;
  // The path runs from the closing branch's second node back to its first, so
  // path then closer reads once around the loop.
  for (const std::size_t element : path) names.push_back(circuit.elements[element].name);
  names.push_back(closer);
  const char* dc_note = kind == AnalysisKind::dc ? " (inductors are shorts at DC)" : "";
  throw loop_error(kind, fmt::format("{} form a loop of elements that each set a voltage{}",
                                     quoted_list(names), dc_note));
}

void check_no_voltage_loop(const Circuit& circuit, AnalysisKind kind) {
  DisjointSets sets(circuit.node_count());
  std::vector<std::vector<VoltageBranch>> adjacent(circuit.node_count());
  for (const auto& branch : voltage_defining_branches(circuit, kind)) {
    if (sets.find(branch.a) == sets.find(branch.b))
      report_loop(circuit, kind, branch,
                  branch.a == branch.b ? std::vector<std::size_t>{}
                                       : forest_path(adjacent, branch.a, branch.b));
    sets.join(branch.a, branch.b);
    adjacent[branch.a].push_back(branch);
    adjacent[branch.b].push_back({branch.b, branch.a, branch.element});
  }
}


// --- stamps --------------------------------------------------------------------

// The numbers one element's stamp is made of: its main value and, for an op
// amp, its model's entries (each instance its own copy, so a derivative is
// the instance's alone).
template <typename T>
struct StampValues {
  T value, gbw, aol, fp2, rout, rin;
  // Entries not (yet) differentiated: the common-mode error k(s) = k0 + k1 s
  // and the input capacitances.
  double k0 = 0, k1 = 0, cin_diff = 0, cin_cm = 0;
};

// One matrix entry c0 + c1 s + c2 s^2 of scalar type T.
template <typename T>
struct StampPolynomial {
  T c0, c1, c2;
};

// Forward-mode automatic differentiation: a value and its derivative with
// respect to one parameter. The stamps below are written once for any scalar
// T; evaluated with double they give the matrix, with Dual (one parameter
// seeded with derivative 1) they give that parameter's dY/dx from the very
// same expressions, so the stamp and its derivative cannot drift apart.
struct Dual {
  double v = 0, d = 0;
  Dual(double value = 0, double derivative = 0) : v(value), d(derivative) {}  // NOLINT
};
Dual operator+(Dual a, Dual b) { return {a.v + b.v, a.d + b.d}; }
[[maybe_unused]] Dual operator-(Dual a, Dual b) { return {a.v - b.v, a.d - b.d}; }
Dual operator-(Dual a) { return {-a.v, -a.d}; }
Dual operator*(Dual a, Dual b) { return {a.v * b.v, a.d * b.v + a.v * b.d}; }
Dual operator/(Dual a, Dual b) { return {a.v / b.v, (a.d * b.v - a.v * b.d) / (b.v * b.v)}; }
double value_of(double x) { return x; }
double value_of(Dual x) { return x.v; }

// What one element's stamp adds: unknowns of its pins (-1: gnd), of its branch
// current and of its internal node.
struct ElementUnknowns {
  std::array<int, 4> pin{-1, -1, -1, -1};
  int branch = -1;
  int source = -1;  ///< op amp: the unknown its gain source sets (internal node or output pin)
};

ElementUnknowns unknowns_of(const MnaSystem& mna, std::size_t i) {
  const Element& e = mna.circuit().elements[i];
  ElementUnknowns u;
  for (std::size_t k = 0; k < e.nodes.size() && k < 4; ++k) u.pin[k] = mna.node_unknown(e.nodes[k]);
  u.branch = mna.branch_unknown(i);
  if (e.kind == ElementKind::opamp) u.source = mna.opamp_source_unknown(i);
  return u;
}

// The element's stamp values; with `seed`, as duals whose derivative is 1 on
// the seeded parameter (which must be this element's) and 0 elsewhere.
template <typename T>
StampValues<T> stamp_values(const Circuit& circuit, std::size_t i, const Parameter* seed) {
  const Element& e = circuit.elements[i];
  auto seeded = [&](double v, ParameterKey key) {
    if constexpr (std::is_same_v<T, double>) {
      return v;
    } else {
      return T(v, seed && seed->key == key ? 1.0 : 0.0);
    }
  };
  StampValues<T> p{seeded(e.value, ParameterKey::value), T(0), T(1), T(0), T(0), T(0)};
  if (e.kind == ElementKind::opamp) {
    const OpAmpModel& m = circuit.model_of(e);
    p.gbw = seeded(m.gbw, ParameterKey::gbw);
    p.aol = seeded(m.aol, ParameterKey::aol);
    p.fp2 = seeded(m.fp2, ParameterKey::fp2);
    p.rout = seeded(m.rout, ParameterKey::rout);
    p.rin = seeded(m.rin, ParameterKey::rin);
    p.k0 = m.cmrr > 0 ? 0.5 / m.cmrr : 0.0;
    p.k1 = m.cmrr > 0 && m.fcmrr > 0 ? p.k0 / (kTwoPi * m.fcmrr) : 0.0;
    p.cin_diff = m.cin_diff;
    p.cin_cm = m.cin_cm;
  }
  return p;
}

// Calls add(row, col, polynomial) for each entry of one element's stamp.
template <typename T, typename Add>
void stamp_element(const Element& e, const StampValues<T>& p, const ElementUnknowns& u,
                   Add&& add_entry) {
  using Poly = StampPolynomial<T>;
  auto add = [&](int row, int col, const Poly& c) {
    if (row >= 0 && col >= 0) add_entry(row, col, c);
  };
  auto admittance = [&](int a, int b, const Poly& y) {
    const Poly minus{-y.c0, -y.c1, -y.c2};
    add(a, a, y), add(b, b, y), add(a, b, minus), add(b, a, minus);
  };
  const T one(1.0), zero(0.0);
  auto incidence = [&](int plus, int minus, int branch) {
    add(plus, branch, {one, zero, zero}), add(minus, branch, {-one, zero, zero});
    add(branch, plus, {one, zero, zero}), add(branch, minus, {-one, zero, zero});
  };
  const auto& x = u.pin;
  const int br = u.branch;
  switch (e.kind) {
    case ElementKind::resistor:
      admittance(x[0], x[1], {one / p.value, zero, zero});
      break;
    case ElementKind::capacitor:
      admittance(x[0], x[1], {zero, p.value, zero});
      break;
    case ElementKind::inductor:
      incidence(x[0], x[1], br);
      add(br, br, {zero, -p.value, zero});
      break;
    case ElementKind::vsource:
      incidence(x[0], x[1], br);
      break;
    case ElementKind::isource:
      break;
    case ElementKind::vcvs:
      incidence(x[0], x[1], br);
      add(br, x[2], {-p.value, zero, zero}), add(br, x[3], {p.value, zero, zero});
      break;
    case ElementKind::vccs:
      add(x[0], x[2], {p.value, zero, zero}), add(x[0], x[3], {-p.value, zero, zero});
      add(x[1], x[2], {-p.value, zero, zero}), add(x[1], x[3], {p.value, zero, zero});
      break;
    case ElementKind::opamp: {
      const int source = u.source;
      // 1/A(s) = (1 + s/wp)(1 + s/wp2) / aol, expanded in powers of s.
      const T wp = T(kTwoPi) * p.gbw / p.aol;
      const T inv_wp2 = value_of(p.fp2) > 0 ? one / (T(kTwoPi) * p.fp2) : zero;
      add(source, br, {one, zero, zero});
      add(br, source, {one / p.aol, (one / wp + inv_wp2) / p.aol, inv_wp2 / (wp * p.aol)});
      // -d(s) = -(1 + k(s)) v+ + (1 - k(s)) v-, k(s) = k0 + k1 s (common-mode error).
      add(br, x[0], {-one - T(p.k0), -T(p.k1), zero}), add(br, x[1], {one - T(p.k0), -T(p.k1), zero});
      if (value_of(p.rout) > 0) admittance(source, x[2], {one / p.rout, zero, zero});
      if (value_of(p.rin) > 0) admittance(x[0], x[1], {one / p.rin, zero, zero});
      if (p.cin_diff > 0) admittance(x[0], x[1], {zero, T(p.cin_diff), zero});
      if (p.cin_cm > 0) admittance(x[0], -1, {zero, T(p.cin_cm), zero}), admittance(x[1], -1, {zero, T(p.cin_cm), zero});
      break;
    }
  }
}

}  // namespace

void check_solvable(const Circuit& circuit, AnalysisKind kind) {
  check_no_voltage_loop(circuit, kind);
  check_connected_to_gnd(circuit, kind);
}

// --- numbering and pattern ---------------------------------------------------

MnaSystem::MnaSystem(const Circuit& circuit) : MnaSystem(circuit, AnalysisKind::ac) {}

MnaSystem::MnaSystem(const Circuit& circuit, AnalysisKind kind) : circuit_(&circuit) {
  check_solvable(circuit, kind);
  number_unknowns();
  build_pattern();
}

namespace {

// See "Stiff parts" in mna.hpp. 1e4 keeps the error of summing a part into
// its neighbours' entries under 1e-12 relative; a part stiffer than that
// (a 10 ohm link between two nodes that see only megohms otherwise) is
// stamped on differences, which costs nothing: the system keeps its size.
constexpr double kStiffRatio = 1e4;

// What a stiff-part test compares: conductance for a resistor, capacitance for
// a capacitor (they never share the real or the imaginary part of an entry).
std::optional<double> admittance_scale(const Element& e) {
  if (e.kind == ElementKind::resistor) return 1.0 / std::abs(e.value);
  if (e.kind == ElementKind::capacitor) return std::abs(e.value);
  return std::nullopt;
}

// Which admittance_scale it is: 0 conductance, 1 capacitance (an index into
// the per-node pairs both the stiffness test and the grip to gnd keep).
std::size_t admittance_kind(const Element& e) { return e.kind == ElementKind::resistor ? 0 : 1; }

// A part is stiff when, at both of its nodes, its admittance is more than
// kStiffRatio times the sum of the small admittances of its kind there: every
// part to gnd, and every other part at most 1/kStiffRatio of its own (parts
// of comparable size between two nodes, the links of a chain of milliohms,
// join its group instead). It then holds its two nodes within a tiny voltage
// of each other, and that tiny voltage is what the difference unknown keeps
// exact. Dominance at both ends matters: a part that dominates only one end
// does not pin its nodes together.
std::vector<bool> find_stiff_parts(const Circuit& circuit) {
  const auto& elements = circuit.elements;
  // Per node and kind (0 resistor, 1 capacitor): the sum to gnd, and the
  // admittances of parts to other nodes, sorted, with their running sums.
  struct Side {
    double to_gnd = 0;
    std::vector<double> links, below;  // below[k] = sum of links[0..k)
  };
  std::vector<std::array<Side, 2>> sides(circuit.node_count());
  for (const Element& e : elements) {
    const auto y = admittance_scale(e);
    if (!y || e.nodes[0] == e.nodes[1]) continue;
    for (std::size_t k = 0; k < 2; ++k) {
      Side& side = sides[static_cast<std::size_t>(e.nodes[k])][admittance_kind(e)];
      if (e.nodes[1 - k] == 0) side.to_gnd += *y;
      else side.links.push_back(*y);
    }
  }
  for (auto& node : sides)
    for (Side& side : node) {
      std::sort(side.links.begin(), side.links.end());
      side.below.assign(1, 0.0);
      for (const double y : side.links) side.below.push_back(side.below.back() + y);
    }
  std::vector<bool> stiff(elements.size(), false);
  for (std::size_t i = 0; i < elements.size(); ++i) {
    const Element& e = elements[i];
    const auto y = admittance_scale(e);
    // To gnd a stiff part swamps nothing that matters: its node's voltage is small.
    if (!y || e.nodes[0] == 0 || e.nodes[1] == 0 || e.nodes[0] == e.nodes[1]) continue;
    auto dominates = [&](int node) {
      const Side& side = sides[static_cast<std::size_t>(node)][admittance_kind(e)];
      const auto small = std::lower_bound(side.links.begin(), side.links.end(), *y / kStiffRatio);
      const double soft = side.to_gnd + side.below[static_cast<std::size_t>(small - side.links.begin())];
      return soft > 0 && *y > kStiffRatio * soft;
    };
    stiff[i] = dominates(e.nodes[0]) && dominates(e.nodes[1]);
  }
  return stiff;
}

// The node of a group that keeps its voltage: the one held hardest to gnd
// (largest conductance, then capacitance, to gnd). Where a group is not
// pinned to one voltage after all (its parts dominate only within their own
// kind), the others are then written as that small voltage minus a large
// difference, which cancels nothing.
std::vector<std::array<double, 2>> grip_to_gnd(const Circuit& circuit) {
  std::vector<std::array<double, 2>> grip(circuit.node_count(), {0.0, 0.0});
  for (const Element& e : circuit.elements) {
    const auto y = admittance_scale(e);
    if (!y) continue;
    const std::size_t kind = admittance_kind(e);
    if (e.nodes[1] == 0) grip[static_cast<std::size_t>(e.nodes[0])][kind] += *y;
    if (e.nodes[0] == 0) grip[static_cast<std::size_t>(e.nodes[1])][kind] += *y;
  }
  return grip;
}

}  // namespace

void MnaSystem::number_unknowns() {
  const auto& elements = circuit_->elements;
  node_unknowns_ = static_cast<int>(circuit_->node_count()) - 1;
  int next = node_unknowns_;
  internal_of_.assign(elements.size(), -1);
  branch_of_.assign(elements.size(), -1);
  for (std::size_t i = 0; i < elements.size(); ++i)
    if (elements[i].kind == ElementKind::opamp && circuit_->model_of(elements[i]).rout > 0) {
      internal_of_[i] = next++;
      owner_of_.push_back(i);
    }
  for (std::size_t i = 0; i < elements.size(); ++i) {
    if (traits(elements[i].kind).has_branch) {
      branch_of_[i] = next++;
      owner_of_.push_back(i);
    }
  }
  pattern_.n = next;
  group_stiff_nodes();
}

// Nodes joined by stiff parts form groups; each group's representative keeps
// its voltage, the others become differences from it.
void MnaSystem::group_stiff_nodes() {
  stiff_ = find_stiff_parts(*circuit_);
  stiff_parts_ = static_cast<int>(std::count(stiff_.begin(), stiff_.end(), true));
  root_of_.assign(static_cast<std::size_t>(node_unknowns_), -1);
  if (stiff_parts_ == 0) return;
  DisjointSets groups(circuit_->node_count());
  for (std::size_t i = 0; i < stiff_.size(); ++i)
    if (stiff_[i]) groups.join(circuit_->elements[i].nodes[0], circuit_->elements[i].nodes[1]);
  const auto grip = grip_to_gnd(*circuit_);
  std::vector<int> keeper(circuit_->node_count(), -1);  // per set representative
  for (int node = 1; node < static_cast<int>(circuit_->node_count()); ++node) {
    int& best = keeper[static_cast<std::size_t>(groups.find(node))];
    if (best < 0 || grip[static_cast<std::size_t>(node)] > grip[static_cast<std::size_t>(best)]) best = node;
  }
  for (int node = 1; node < static_cast<int>(circuit_->node_count()); ++node) {
    const int root = keeper[static_cast<std::size_t>(groups.find(node))];
    if (root != node) root_of_[static_cast<std::size_t>(node_unknown(node))] = node_unknown(root);
  }
}

MnaSystem::VoltageTerms MnaSystem::voltage_terms(int node) const {
  VoltageTerms terms;
  const int u = node_unknown(node);
  if (u < 0) return terms;
  const int root = root_of_[static_cast<std::size_t>(u)];
  if (root < 0) {
    terms.term[0] = {u, 1.0}, terms.count = 1;
  } else {
    terms.term[0] = {root, 1.0}, terms.term[1] = {u, -1.0}, terms.count = 2;
  }
  return terms;
}

// Calls visit(row, col, coefficients) for every stamp entry off gnd, in
// element order. Run twice by build_pattern (count, then fill), so no list of
// all terms is ever held: on a large circuit that list costs more in page
// faults than the stamps cost to compute.
template <typename Visit>
void MnaSystem::for_each_term(Visit&& visit) const {
  const auto& elements = circuit_->elements;
  for (std::size_t i = 0; i < elements.size(); ++i)
    stamp_element(elements[i], stamp_values<double>(*circuit_, i, nullptr), unknowns_of(*this, i),
                  [&](int row, int col, const StampPolynomial<double>& c) {
                    on_columns(i, col, [&](int column, double sign) {
                      visit(row, column, Coefficients{sign * c.c0, sign * c.c1, sign * c.c2});
                    });
                  });
}

// Terms are bucketed by column (a counting sort, linear in their number),
// each column sorted by row, and terms on the same entry summed into one slot,
// compacting the buckets in place into the final CSC arrays.
void MnaSystem::build_pattern() {
  const auto n = static_cast<std::size_t>(pattern_.n);
  auto& col_ptr = pattern_.col_ptr;
  col_ptr.assign(n + 1, 0);
  for_each_term([&](int, int col, const Coefficients&) { ++col_ptr[col + 1]; });
  std::partial_sum(col_ptr.begin(), col_ptr.end(), col_ptr.begin());
  std::vector<int> rows(static_cast<std::size_t>(col_ptr[n]));
  std::vector<Coefficients> coefficients(rows.size());
  std::vector<int> term_at(rows.size());  // bucket position -> term number
  {
    std::vector<int> fill(col_ptr.begin(), col_ptr.end() - 1);
    int term = 0;
    for_each_term([&](int row, int col, const Coefficients& c) {
      const auto k = static_cast<std::size_t>(fill[col]++);
      rows[k] = row;
      coefficients[k] = c;
      term_at[k] = term++;
    });
  }
  term_slot_.assign(rows.size(), 0);
  std::vector<bool> varies;  // per slot: some term of it depends on s
  struct Term {
    int row;
    Coefficients c;
    int term;
  };
  std::vector<Term> column;  // one bucket, copied out before it is compacted in place
  std::size_t out = 0, begin = 0;
  for (std::size_t col = 0; col < n; ++col) {
    const auto end = static_cast<std::size_t>(col_ptr[col + 1]);
    column.clear();
    for (std::size_t k = begin; k < end; ++k) column.push_back({rows[k], coefficients[k], term_at[k]});
    // Stable: the terms of one entry are summed in term order, as restamp() sums them.
    std::stable_sort(column.begin(), column.end(),
                     [](const Term& a, const Term& b) { return a.row < b.row; });
    col_ptr[col] = static_cast<int>(out);
    for (std::size_t k = 0; k < column.size(); ++k) {
      const Coefficients c = column[k].c;
      const int term = column[k].term;
      const bool depends_on_s = c.c1 != 0 || c.c2 != 0;
      if (k > 0 && column[k].row == column[k - 1].row) {
        auto& sum = coefficients[out - 1];
        sum.c0 += c.c0, sum.c1 += c.c1, sum.c2 += c.c2;
        term_slot_[static_cast<std::size_t>(term)] = static_cast<int>(out - 1);
        if (depends_on_s) varies[out - 1] = true;
        continue;
      }
      rows[out] = column[k].row;
      coefficients[out] = c;
      term_slot_[static_cast<std::size_t>(term)] = static_cast<int>(out);
      varies.push_back(depends_on_s);
      ++out;
    }
    begin = end;
  }
  col_ptr[n] = static_cast<int>(out);
  rows.resize(out);
  coefficients.resize(out);
  pattern_.row_index = std::move(rows);
  coefficients_ = std::move(coefficients);
  // By term, not by sum: an entry whose s parts cancel at nominal values still
  // varies once restamp() moves them apart.
  for (std::size_t k = 0; k < coefficients_.size(); ++k)
    if (varies[k]) varying_.push_back(static_cast<int>(k));
}

// Where a stamp term on column `col` lands (see "Stiff parts" in mna.hpp):
// a node written as its group's root minus a difference puts the term on
// both, the difference with the opposite sign. A stiff part's own terms on
// the root cancel exactly (both its nodes share the root) and are left out,
// so its large admittance is never summed into the root's small entries.
template <typename Place>
void MnaSystem::on_columns(std::size_t element, int col, Place&& place) const {
  if (col >= node_unknowns_) return place(col, 1.0);
  const int root = root_of_[static_cast<std::size_t>(col)];
  if (stiff_[element]) {
    if (root >= 0) place(col, -1.0);  // the root's own column (root < 0) is left out
    return;
  }
  if (root < 0) return place(col, 1.0);
  place(root, 1.0);
  place(col, -1.0);
}

void MnaSystem::restamp() {
  for (Coefficients& c : coefficients_) c = {0, 0, 0};
  std::size_t term = 0;
  for_each_term([&](int, int, const Coefficients& c) {
    Coefficients& sum = coefficients_[static_cast<std::size_t>(term_slot_[term++])];
    sum.c0 += c.c0, sum.c1 += c.c1, sum.c2 += c.c2;
  });
}

// --- per-point work ----------------------------------------------------------

void MnaSystem::assemble(std::complex<double> s, std::complex<double>* values) const {
  const std::size_t count = coefficients_.size();
  for (std::size_t k = 0; k < count; ++k) {
    const Coefficients& c = coefficients_[k];
    values[k] = c.c0 + s * (c.c1 + s * c.c2);
  }
}

void MnaSystem::assemble_varying(std::complex<double> s, std::complex<double>* values) const {
  for (const int k : varying_) {
    const Coefficients& c = coefficients_[static_cast<std::size_t>(k)];
    values[k] = c.c0 + s * (c.c1 + s * c.c2);
  }
}

void MnaSystem::assemble_dc(double* values) const {
  for (std::size_t k = 0; k < coefficients_.size(); ++k) values[k] = coefficients_[k].c0;
}

void MnaSystem::excitation(std::complex<double>* rhs) const {
  std::fill(rhs, rhs + pattern_.n, std::complex<double>{});
  const auto& elements = circuit_->elements;
  for (std::size_t i = 0; i < elements.size(); ++i) add_excitation(i, elements[i].ac_phasor(), rhs);
}

void MnaSystem::add_excitation(std::size_t element, std::complex<double> phasor,
                               std::complex<double>* rhs) const {
  const Element& e = circuit_->elements[element];
  switch (traits(e.kind).drive) {
    case Drive::none:
      break;
    case Drive::voltage:
      rhs[branch_of_[element]] += phasor;
      break;
    case Drive::current: {
      // The source draws its current out of its first node and into its second.
      const int plus = node_unknown(e.nodes[0]), minus = node_unknown(e.nodes[1]);
      if (plus >= 0) rhs[plus] -= phasor;
      if (minus >= 0) rhs[minus] += phasor;
      break;
    }
  }
}

// --- names and lookups -------------------------------------------------------

std::complex<double> common_mode_feedthrough(const OpAmpModel& m, std::complex<double> s) {
  if (!(m.cmrr > 0)) return {};
  const std::complex<double> rolloff = m.fcmrr > 0 ? 1.0 + s / (kTwoPi * m.fcmrr) : 1.0;
  return rolloff / (2 * m.cmrr);
}

int MnaSystem::opamp_gain_row(std::size_t element) const {
  return circuit_->elements[element].kind == ElementKind::opamp ? branch_of_[element] : -1;
}

std::vector<MnaSystem::EntryPolynomial> MnaSystem::polynomials() const {
  std::vector<EntryPolynomial> out;
  out.reserve(coefficients_.size());
  for (int col = 0; col < pattern_.n; ++col)
    for (int k = pattern_.col_ptr[col]; k < pattern_.col_ptr[col + 1]; ++k) {
      const Coefficients& c = coefficients_[static_cast<std::size_t>(k)];
      out.push_back({pattern_.row_index[static_cast<std::size_t>(k)], col, c.c0, c.c1, c.c2});
    }
  return out;
}

int MnaSystem::opamp_source_unknown(std::size_t element) const {
  const Element& e = circuit_->elements[element];
  if (e.kind != ElementKind::opamp) return -1;
  return internal_of_[element] >= 0 ? internal_of_[element] : node_unknown(e.nodes[2]);
}

std::string MnaSystem::unknown_name(int unknown) const {
  if (unknown < 0 || unknown >= pattern_.n) return fmt::format("unknown {}", unknown);
  if (unknown < node_unknowns_)
    return "node " + circuit_->node_names[static_cast<std::size_t>(unknown) + 1];
  const std::size_t element = owner_of_[static_cast<std::size_t>(unknown - node_unknowns_)];
  const auto& name = circuit_->elements[element].name;
  return internal_of_[element] == unknown ? "internal node of " + name : "current in " + name;
}

const char* to_string(ParameterKey key) {
  switch (key) {
    case ParameterKey::value: return "value";
    case ParameterKey::gbw: return "gbw";
    case ParameterKey::aol: return "aol";
    case ParameterKey::fp2: return "fp2";
    case ParameterKey::rout: return "rout";
    case ParameterKey::rin: return "rin";
  }
  return "?";
}

std::vector<Parameter> MnaSystem::parameters() const {
  std::vector<Parameter> out;
  const auto& elements = circuit_->elements;
  for (std::size_t i = 0; i < elements.size(); ++i) {
    const Element& e = elements[i];
    switch (e.kind) {
      case ElementKind::resistor:
      case ElementKind::capacitor:
      case ElementKind::inductor:
      case ElementKind::vcvs:
      case ElementKind::vccs:
        out.push_back({i, ParameterKey::value, e.value});
        break;
      case ElementKind::vsource:
      case ElementKind::isource:
        break;
      case ElementKind::opamp: {
        const OpAmpModel& m = circuit_->model_of(e);
        out.push_back({i, ParameterKey::gbw, m.gbw});
        out.push_back({i, ParameterKey::aol, m.aol});
        if (m.fp2 > 0) out.push_back({i, ParameterKey::fp2, m.fp2});
        if (m.rout > 0) out.push_back({i, ParameterKey::rout, m.rout});
        if (m.rin > 0) out.push_back({i, ParameterKey::rin, m.rin});
        break;
      }
    }
  }
  return out;
}

void MnaSystem::derivative(const Parameter& p, std::vector<EntryPolynomial>& out) const {
  out.clear();
  stamp_element(circuit_->elements[p.element], stamp_values<Dual>(*circuit_, p.element, &p),
                unknowns_of(*this, p.element),
                [&](int row, int col, const StampPolynomial<Dual>& c) {
                  if (c.c0.d != 0 || c.c1.d != 0 || c.c2.d != 0)
                    on_columns(p.element, col, [&](int column, double sign) {
                      out.push_back({row, column, sign * c.c0.d, sign * c.c1.d, sign * c.c2.d});
                    });
                });
}

int MnaSystem::slot(int row, int col) const {
  if (row < 0 || col < 0 || col >= pattern_.n) return -1;
  const auto begin = pattern_.row_index.begin() + pattern_.col_ptr[col];
  const auto end = pattern_.row_index.begin() + pattern_.col_ptr[col + 1];
  const auto it = std::lower_bound(begin, end, row);
  return it != end && *it == row ? static_cast<int>(it - pattern_.row_index.begin()) : -1;
}

void throw_singular(const MnaSystem& mna, int column, double f) {
  throw SolveError::unsolvable_at(
      f, column >= 0 ? fmt::format("the equations do not determine {} (singular matrix)",
                                   mna.unknown_name(column))
                     : std::string("the matrix is singular"));
}

}  // namespace tacet
