// assemble: numbering of unknowns, the fixed sparse pattern and the
// structural checks that run before any matrix is built.

#include "tacet/solve/mna.hpp"
#include "tacet/common/constants.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <numeric>
#include <queue>

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
}

// Calls visit(row, col, coefficients) for every stamp entry off gnd, in
// element order. Run twice by build_pattern (count, then fill), so no list of
// all terms is ever held: on a large circuit that list costs more in page
// faults than the stamps cost to compute.
template <typename Visit>
void MnaSystem::for_each_term(Visit&& visit) const {
  auto add = [&](int row, int col, Coefficients c) {
    if (row >= 0 && col >= 0) visit(row, col, c);
  };
  auto admittance = [&](int a, int b, Coefficients y) {
    const Coefficients minus{-y.c0, -y.c1, -y.c2};
    add(a, a, y), add(b, b, y), add(a, b, minus), add(b, a, minus);
  };
  auto incidence = [&](int plus, int minus, int branch) {
    add(plus, branch, {1.0, 0, 0}), add(minus, branch, {-1.0, 0, 0});
    add(branch, plus, {1.0, 0, 0}), add(branch, minus, {-1.0, 0, 0});
  };
  const auto& elements = circuit_->elements;
  for (std::size_t i = 0; i < elements.size(); ++i) {
    const auto& e = elements[i];
    std::array<int, 4> u{-1, -1, -1, -1};
    for (std::size_t k = 0; k < e.nodes.size() && k < 4; ++k) u[k] = node_unknown(e.nodes[k]);
    const int br = branch_of_[i];
    switch (e.kind) {
      case ElementKind::resistor:
        admittance(u[0], u[1], {1.0 / e.value, 0, 0});
        break;
      case ElementKind::capacitor:
        admittance(u[0], u[1], {0, e.value, 0});
        break;
      case ElementKind::inductor:
        incidence(u[0], u[1], br);
        add(br, br, {0, -e.value, 0});
        break;
      case ElementKind::vsource:
        incidence(u[0], u[1], br);
        break;
      case ElementKind::isource:
        break;
      case ElementKind::vcvs:
        incidence(u[0], u[1], br);
        add(br, u[2], {-e.value, 0, 0}), add(br, u[3], {e.value, 0, 0});
        break;
      case ElementKind::vccs:
        add(u[0], u[2], {e.value, 0, 0}), add(u[0], u[3], {-e.value, 0, 0});
        add(u[1], u[2], {-e.value, 0, 0}), add(u[1], u[3], {e.value, 0, 0});
        break;
      case ElementKind::opamp: {
        const auto& m = circuit_->model_of(e);
        const int x = internal_of_[i] >= 0 ? internal_of_[i] : u[2];
        // 1/A(s) = (1 + s/wp)(1 + s/wp2) / aol, expanded in powers of s.
        const double wp = kTwoPi * m.gbw / m.aol;
        const double inv_wp2 = m.fp2 > 0 ? 1.0 / (kTwoPi * m.fp2) : 0.0;
        add(x, br, {1.0, 0, 0});
        add(br, x, {1.0 / m.aol, (1.0 / wp + inv_wp2) / m.aol, inv_wp2 / (wp * m.aol)});
        // -d(s) = -(1 + k(s)) v+ + (1 - k(s)) v-, k(s) = k0 + k1 s.
        const double k0 = m.cmrr > 0 ? 0.5 / m.cmrr : 0.0;
        const double k1 = m.cmrr > 0 && m.fcmrr > 0 ? k0 / (kTwoPi * m.fcmrr) : 0.0;
        add(br, u[0], {-1.0 - k0, -k1, 0}), add(br, u[1], {1.0 - k0, -k1, 0});
        if (m.rout > 0) admittance(x, u[2], {1.0 / m.rout, 0, 0});
        if (m.rin > 0) admittance(u[0], u[1], {1.0 / m.rin, 0, 0});
        if (m.cin_diff > 0) admittance(u[0], u[1], {0, m.cin_diff, 0});
        if (m.cin_cm > 0) admittance(u[0], -1, {0, m.cin_cm, 0}), admittance(u[1], -1, {0, m.cin_cm, 0});
        break;
      }
    }
  }
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
  {
    std::vector<int> fill(col_ptr.begin(), col_ptr.end() - 1);
    for_each_term([&](int row, int col, const Coefficients& c) {
      const auto k = static_cast<std::size_t>(fill[col]++);
      rows[k] = row;
      coefficients[k] = c;
    });
  }
  std::vector<std::pair<int, Coefficients>> column;  // one bucket, sorted by row
  std::size_t out = 0, begin = 0;
  for (std::size_t col = 0; col < n; ++col) {
    const auto end = static_cast<std::size_t>(col_ptr[col + 1]);
    column.clear();
    for (std::size_t k = begin; k < end; ++k) column.emplace_back(rows[k], coefficients[k]);
    std::sort(column.begin(), column.end(),
              [](const auto& a, const auto& b) { return a.first < b.first; });
    col_ptr[col] = static_cast<int>(out);
    for (std::size_t k = 0; k < column.size(); ++k) {
      if (k > 0 && column[k].first == column[k - 1].first) {
        auto& c = coefficients[out - 1];
        c.c0 += column[k].second.c0, c.c1 += column[k].second.c1, c.c2 += column[k].second.c2;
        continue;
      }
      rows[out] = column[k].first;
      coefficients[out++] = column[k].second;
    }
    begin = end;
  }
  col_ptr[n] = static_cast<int>(out);
  rows.resize(out);
  coefficients.resize(out);
  pattern_.row_index = std::move(rows);
  coefficients_ = std::move(coefficients);
  for (std::size_t k = 0; k < coefficients_.size(); ++k)
    if (coefficients_[k].c1 != 0 || coefficients_[k].c2 != 0) varying_.push_back(static_cast<int>(k));
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
  for (std::size_t i = 0; i < elements.size(); ++i) {
    const auto& e = elements[i];
    switch (traits(e.kind).drive) {
      case Drive::none:
        break;
      case Drive::voltage:
        rhs[branch_of_[i]] += e.ac_phasor();
        break;
      case Drive::current: {
        // The source draws its current out of its first node and into its second.
        const int plus = node_unknown(e.nodes[0]), minus = node_unknown(e.nodes[1]);
        if (plus >= 0) rhs[plus] -= e.ac_phasor();
        if (minus >= 0) rhs[minus] += e.ac_phasor();
        break;
      }
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
