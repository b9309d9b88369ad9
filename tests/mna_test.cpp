// The MNA system: numbering, the stamp of each element, the fixed pattern and
// the structural checks that run before any solve.

#include "tacet/solve/mna.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

// The assembled matrix entry (row, col) at s; 0 when outside the pattern.
cplx entry(const MnaSystem& mna, cplx s, int row, int col) {
  std::vector<cplx> values(static_cast<std::size_t>(mna.pattern().nonzeros()));
  mna.assemble(s, values.data());
  const int k = mna.slot(row, col);
  return k < 0 ? cplx{} : values[static_cast<std::size_t>(k)];
}

int count_entries(const MnaSystem& mna) { return mna.pattern().nonzeros(); }

const cplx kS{0, 2 * kPi * 1e3};

}  // namespace

TEST_CASE("unknowns are node voltages, then internal nodes, then branch currents", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1);
  OpAmpModel model = single_pole(1e6, 1e5);
  model.rout = 50;
  b.opamp("U1", "in", "out", "out", model);
  b.add(ElementKind::inductor, "L1", {"out", "gnd"}, 1e-3);
  const MnaSystem mna(b.circuit);
  REQUIRE(mna.size() == 6);
  CHECK(mna.unknown_name(0) == "node in");
  CHECK(mna.unknown_name(1) == "node out");
  CHECK(mna.unknown_name(2) == "internal node of U1");
  CHECK(mna.unknown_name(3) == "current in V1");
  CHECK(mna.unknown_name(4) == "current in U1");
  CHECK(mna.unknown_name(5) == "current in L1");
  CHECK(mna.node_unknown(0) == -1);
  CHECK(mna.branch_unknown(0) == 3);
  CHECK(mna.branch_unknown(1) == 4);
  CHECK(mna.opamp_gain_row(1) == 4);
  CHECK(mna.opamp_gain_row(0) == -1);
}

TEST_CASE("a resistor stamps 1/R between its nodes and nothing to gnd", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 1);
  b.add(ElementKind::resistor, "R1", {"a", "b"}, 2e3);
  b.add(ElementKind::resistor, "R2", {"b", "gnd"}, 4e3);
  const MnaSystem mna(b.circuit);
  CHECK_THAT(entry(mna, kS, 0, 0), IsClose(0.5e-3, 1e-15));
  CHECK_THAT(entry(mna, kS, 0, 1), IsClose(-0.5e-3, 1e-15));
  CHECK_THAT(entry(mna, kS, 1, 0), IsClose(-0.5e-3, 1e-15));
  CHECK_THAT(entry(mna, kS, 1, 1), IsClose(0.75e-3, 1e-15));  // both resistors summed in one slot
  CHECK(count_entries(mna) == 4 + 2);                         // plus V1's two incidence entries
}

TEST_CASE("a capacitor stamps sC and an inductor a branch with -sL", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 1);
  b.add(ElementKind::capacitor, "C1", {"a", "b"}, 1e-9);
  b.add(ElementKind::inductor, "L1", {"b", "gnd"}, 1e-3);
  const MnaSystem mna(b.circuit);
  const int l = mna.branch_unknown(2);
  CHECK_THAT(entry(mna, kS, 0, 1), IsClose(-kS * 1e-9, 1e-15));
  CHECK_THAT(entry(mna, kS, 1, 1), IsClose(kS * 1e-9, 1e-15));
  CHECK_THAT(entry(mna, kS, 1, l), IsClose(1.0, 1e-15));
  CHECK_THAT(entry(mna, kS, l, 1), IsClose(1.0, 1e-15));
  CHECK_THAT(entry(mna, kS, l, l), IsClose(-kS * 1e-3, 1e-15));
}

TEST_CASE("a vcvs stamps its incidence and -gain on its controlling nodes", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "p", "n", 1);
  b.add(ElementKind::resistor, "R1", {"n", "gnd"}, 1e3);
  b.add(ElementKind::vcvs, "E1", {"o", "gnd", "p", "n"}, 7.0);
  b.add(ElementKind::resistor, "R2", {"o", "gnd"}, 1e3);
  const MnaSystem mna(b.circuit);
  const int e = mna.branch_unknown(2);
  const int p = mna.node_unknown(1), n = mna.node_unknown(2), o = mna.node_unknown(3);
  CHECK_THAT(entry(mna, kS, o, e), IsClose(1.0, 1e-15));
  CHECK_THAT(entry(mna, kS, e, o), IsClose(1.0, 1e-15));
  CHECK_THAT(entry(mna, kS, e, p), IsClose(-7.0, 1e-15));
  CHECK_THAT(entry(mna, kS, e, n), IsClose(7.0, 1e-15));
}

TEST_CASE("a vccs stamps +-gm from its controlling nodes into its output rows", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "p", "gnd", 1);
  b.add(ElementKind::vccs, "G1", {"o", "gnd", "p", "gnd"}, 2e-3);
  b.add(ElementKind::resistor, "R1", {"o", "gnd"}, 1e3);
  const MnaSystem mna(b.circuit);
  CHECK_THAT(entry(mna, kS, mna.node_unknown(2), mna.node_unknown(1)), IsClose(2e-3, 1e-15));
  CHECK(mna.slot(mna.node_unknown(1), mna.node_unknown(2)) == -1);
}

TEST_CASE("an op amp's gain row is v_out/A(s) - (v+ - v-) with both poles", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "p", "gnd", 1);
  OpAmpModel model = single_pole(10e6, 1e5);
  model.fp2 = 40e6;
  b.opamp("U1", "p", "m", "o", model);
  b.add(ElementKind::resistor, "R1", {"o", "m"}, 1e3);
  b.add(ElementKind::resistor, "R2", {"m", "gnd"}, 1e3);
  const MnaSystem mna(b.circuit);
  const int row = mna.opamp_gain_row(1);
  const int p = mna.node_unknown(1), m = mna.node_unknown(2), o = mna.node_unknown(3);
  const double wp = 2 * kPi * 10e6 / 1e5, wp2 = 2 * kPi * 40e6;
  const cplx s{0, 2 * kPi * 3e6};
  CHECK_THAT(entry(mna, s, row, o), IsClose((1.0 + s / wp) * (1.0 + s / wp2) / 1e5, 1e-14));
  CHECK_THAT(entry(mna, s, row, p), IsClose(-1.0, 1e-15));
  CHECK_THAT(entry(mna, s, row, m), IsClose(1.0, 1e-15));
  CHECK_THAT(entry(mna, s, o, row), IsClose(1.0, 1e-15));
}

TEST_CASE("an op amp with rout drives its pin from an internal node, rin across its inputs",
          "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "p", "gnd", 1);
  OpAmpModel model = single_pole(1e6, 1e5);
  model.rout = 50;
  model.rin = 1e6;
  b.opamp("U1", "p", "o", "o", model);
  const MnaSystem mna(b.circuit);
  const int p = mna.node_unknown(1), o = mna.node_unknown(2), x = 2;
  REQUIRE(mna.unknown_name(x) == "internal node of U1");
  const int row = mna.opamp_gain_row(1);
  CHECK_THAT(entry(mna, kS, x, row), IsClose(1.0, 1e-15));
  CHECK(mna.slot(o, row) == -1);
  CHECK_THAT(entry(mna, kS, x, o), IsClose(-1.0 / 50, 1e-15));
  CHECK_THAT(entry(mna, kS, o, o), IsClose(1.0 / 50 + 1e-6, 1e-15));
  CHECK_THAT(entry(mna, kS, p, o), IsClose(-1e-6, 1e-15));
  CHECK(mna.slot(row, x) >= 0);
}

TEST_CASE("the excitation holds vsrc phasors on branch rows and isrc currents on node rows",
          "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 2.0).ac_phase = 90;
  b.add(ElementKind::resistor, "R1", {"a", "b"}, 1e3);
  b.isrc("I1", "b", "c", 1e-3);
  b.add(ElementKind::resistor, "R2", {"c", "gnd"}, 1e3);
  const MnaSystem mna(b.circuit);
  std::vector<cplx> rhs(static_cast<std::size_t>(mna.size()), 99.0);
  mna.excitation(rhs.data());
  CHECK_THAT(rhs[static_cast<std::size_t>(mna.branch_unknown(0))], IsClose(cplx(0, 2), 1e-15));
  CHECK(rhs[static_cast<std::size_t>(mna.node_unknown(2))] == cplx(-1e-3));
  CHECK(rhs[static_cast<std::size_t>(mna.node_unknown(3))] == cplx(1e-3));
  CHECK(rhs[0] == cplx(0));
}

TEST_CASE("the pattern is fixed at construction and assemble only rewrites values", "[mna]") {
  const MnaSystem mna(twin_t_notch(10e3, 10e-9));
  const CscPattern before = mna.pattern();
  std::vector<cplx> low(static_cast<std::size_t>(before.nonzeros()));
  std::vector<cplx> high(low.size());
  mna.assemble({0, 1.0}, low.data());
  mna.assemble({0, 1e9}, high.data());
  CHECK(mna.pattern().col_ptr == before.col_ptr);
  CHECK(mna.pattern().row_index == before.row_index);
  CHECK(low != high);
  for (int c = 0; c < before.n; ++c)  // rows sorted within each column, as KLU expects
    for (int k = before.col_ptr[c] + 1; k < before.col_ptr[c + 1]; ++k)
      CHECK(before.row_index[k - 1] < before.row_index[k]);
}

TEST_CASE("restamping after a change of values gives the matrix built anew, bit for bit", "[mna]") {
  // tacet spread changes values on one pattern; the result must be what a new
  // system of the changed circuit assembles (sums in the same term order).
  CircuitBuilder b;
  b.vsrc("V1", "p", "gnd", 1);
  OpAmpModel model = single_pole(1e6, 1e5);
  model.rout = 50;
  model.fp2 = 3e6;
  b.add(ElementKind::resistor, "R1", {"p", "a"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"a", "gnd"}, 1e-9);
  b.add(ElementKind::capacitor, "C2", {"a", "o"}, 2e-9);
  b.opamp("U1", "a", "o", "o", model);
  Circuit circuit = b.circuit;
  MnaSystem reused(circuit);
  circuit.elements[1].value = 1.013e3;
  circuit.elements[3].value = 2.2e-9;
  circuit.models[0].gbw = 1.3e6;
  reused.restamp();
  const MnaSystem fresh(circuit);
  REQUIRE(fresh.pattern().row_index == reused.pattern().row_index);
  std::vector<cplx> a(static_cast<std::size_t>(fresh.pattern().nonzeros())), c(a.size());
  fresh.assemble(kS, a.data());
  reused.assemble(kS, c.data());
  CHECK(a == c);
}

TEST_CASE("a node reached only through op-amp inputs is reported as floating", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1);
  b.opamp("U1", "x", "out", "out", single_pole(1e6, 1e5));
  b.add(ElementKind::resistor, "R1", {"in", "out"}, 1e3);
  CHECK_THROWS_MATCHES(
      MnaSystem(b.circuit), SolveError,
      Catch::Message("error: circuit cannot be solved: node 'x' has no connection to gnd\n"
                     "hint: every node needs a path to gnd through resistors, capacitors, inductors or "
                     "voltage sources; op-amp inputs and current sources are no such path\n"));
}

TEST_CASE("an island of several nodes fed by a current source names them all", "[mna]") {
  CircuitBuilder b;
  b.isrc("I1", "gnd", "p", 1e-3);
  b.add(ElementKind::resistor, "R1", {"p", "q"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"q", "p"}, 1e-9);
  CHECK_THROWS_MATCHES(
      MnaSystem(b.circuit), SolveError,
      Catch::Message("error: circuit cannot be solved: nodes 'p', 'q' have no connection "
                     "to gnd\n"
                     "hint: every node needs a path to gnd through resistors, capacitors, inductors or "
                     "voltage sources; op-amp inputs and current sources are no such path\n"));
}

TEST_CASE("a vccs output conducts only when it is wired across its own control pair", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1);
  b.add(ElementKind::resistor, "R1", {"in", "gnd"}, 1e3);
  b.add(ElementKind::vccs, "G1", {"o", "gnd", "in", "gnd"}, 1e-3);  // a current source into o
  CHECK_THROWS_MATCHES(
      MnaSystem(b.circuit), SolveError,
      Catch::Message("error: circuit cannot be solved: node 'o' has no connection to gnd\n"
                     "hint: every node needs a path to gnd through resistors, capacitors, inductors or "
                     "voltage sources; op-amp inputs and current sources are no such path\n"));
  b.add(ElementKind::vccs, "G2", {"o", "gnd", "o", "gnd"}, 1e-3);  // a 1 mS conductance
  CHECK_NOTHROW(MnaSystem(b.circuit));
}

TEST_CASE("at DC a node reached only through a capacitor has no path to gnd", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1);
  b.add(ElementKind::capacitor, "C1", {"in", "x"}, 1e-9);
  b.add(ElementKind::capacitor, "C2", {"x", "gnd"}, 1e-9);
  CHECK_NOTHROW(check_solvable(b.circuit, AnalysisKind::ac));
  CHECK_THROWS_MATCHES(
      check_solvable(b.circuit, AnalysisKind::dc), SolveError,
      Catch::Message("error: circuit cannot be solved at DC: node 'x' has no DC path to gnd\n"
                     "hint: at DC capacitors are open; give the node a resistor to a biased "
                     "node or to gnd\n"));
}

TEST_CASE("two voltage sources across the same node pair are named", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 1);
  b.vsrc("V2", "gnd", "a", 1);
  CHECK_THROWS_MATCHES(
      MnaSystem(b.circuit), SolveError,
      Catch::Message("error: circuit cannot be solved: 'V1' and 'V2' both set the voltage "
                     "between nodes 'gnd' and 'a'\n"));
}

TEST_CASE("a loop of voltage-defining elements names every element on it", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 1);
  b.add(ElementKind::resistor, "R0", {"a", "b"}, 1e3);  // not part of the loop
  b.add(ElementKind::vcvs, "E1", {"c", "a", "b", "gnd"}, 2.0);
  b.opamp("U1", "b", "c", "c", single_pole(1e6, 1e5));  // output c to gnd closes the loop
  CHECK_THROWS_MATCHES(
      MnaSystem(b.circuit), SolveError,
      Catch::Message("error: circuit cannot be solved: 'V1', 'E1', 'U1' form a loop of "
                     "elements that each set a voltage\n"));
}

TEST_CASE("an op amp with rout does not close a voltage loop", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "out", "gnd", 1);
  OpAmpModel model = single_pole(1e6, 1e5);
  model.rout = 10;
  b.opamp("U1", "gnd", "out", "out", model);
  CHECK_NOTHROW(MnaSystem(b.circuit));
}

TEST_CASE("inductors close voltage loops at DC only", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 1);
  b.add(ElementKind::inductor, "L1", {"a", "gnd"}, 1e-3);
  CHECK_NOTHROW(check_solvable(b.circuit, AnalysisKind::ac));
  CHECK_THROWS_MATCHES(
      check_solvable(b.circuit, AnalysisKind::dc), SolveError,
      Catch::Message("error: circuit cannot be solved at DC: 'V1' and 'L1' both set the "
                     "voltage between nodes 'a' and 'gnd'\n"));
}

TEST_CASE("a source with both terminals on one node is reported", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "a", 1);
  b.add(ElementKind::resistor, "R1", {"a", "gnd"}, 1e3);
  CHECK_THROWS_MATCHES(
      MnaSystem(b.circuit), SolveError,
      Catch::Message("error: circuit cannot be solved: 'V1' sets a voltage between node "
                     "'a' and itself\n"));
}

TEST_CASE("rewriting only the s-dependent entries gives the full matrix", "[mna]") {
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1);
  b.add(ElementKind::resistor, "R1", {"in", "a"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"a", "gnd"}, 1e-9);
  b.add(ElementKind::inductor, "L1", {"a", "b"}, 1e-3);
  b.add(ElementKind::resistor, "R2", {"b", "gnd"}, 50);
  b.opamp("U1", "b", "out", "out", single_pole(1e6, 1e5));
  const MnaSystem mna(b.circuit);
  const auto n = static_cast<std::size_t>(mna.pattern().nonzeros());
  std::vector<std::complex<double>> full(n), kept(n);
  mna.assemble(0.0, kept.data());
  for (double f : {1.0, 1e3, 1e6}) {
    const std::complex<double> s(0, 2 * 3.141592653589793 * f);
    mna.assemble(s, full.data());
    mna.assemble_varying(s, kept.data());
    CHECK(kept == full);
  }
}

TEST_CASE("each parameter's stamp derivative is the central difference of its stamp", "[mna]") {
  // dY/dx from MnaSystem::derivative against (Y(x(1+h)) - Y(x(1-h)))/(2 h x) of the
  // assembled polynomials, entry by entry, for every element kind and op-amp entry.
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1);
  b.add(ElementKind::resistor, "R1", {"in", "a"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"a", "gnd"}, 1e-9);
  b.add(ElementKind::inductor, "L1", {"a", "b"}, 1e-3);
  b.add(ElementKind::vcvs, "E1", {"c", "gnd", "b", "gnd"}, 3);
  b.add(ElementKind::vccs, "G1", {"d", "gnd", "c", "b"}, 1e-3);
  b.add(ElementKind::resistor, "R2", {"d", "gnd"}, 1e3);
  OpAmpModel m = single_pole(1e6, 1e5);
  m.fp2 = 5e6, m.rout = 50, m.rin = 1e6;
  b.opamp("U1", "d", "out", "out", m);
  const Circuit& nominal = b.circuit;
  const MnaSystem mna(nominal);
  const auto parameters = mna.parameters();
  REQUIRE(parameters.size() == 11);  // R1 C1 L1 E1 G1 R2, U1 gbw aol fp2 rout rin: 6 + 5
  std::vector<MnaSystem::EntryPolynomial> derivative;
  const auto nominal_polys = mna.polynomials();
  for (const Parameter& p : parameters) {
    mna.derivative(p, derivative);
    auto scaled = [&](double factor) {
      Circuit c = nominal;
      Element& e = c.elements[p.element];
      OpAmpModel& model = c.models[0];
      double* field = p.key == ParameterKey::value ? &e.value
                      : p.key == ParameterKey::gbw ? &model.gbw
                      : p.key == ParameterKey::aol ? &model.aol
                      : p.key == ParameterKey::fp2 ? &model.fp2
                      : p.key == ParameterKey::rout ? &model.rout
                                                    : &model.rin;
      *field *= factor;
      return MnaSystem(c).polynomials();  // same pattern: only values changed
    };
    constexpr double h = 1e-6;
    const auto up = scaled(1 + h), down = scaled(1 - h);
    REQUIRE(up.size() == down.size());
    REQUIRE(up.size() == nominal_polys.size());
    CAPTURE(nominal.elements[p.element].name, to_string(p.key));
    std::size_t nonzero = 0;
    for (std::size_t k = 0; k < up.size(); ++k) {
      const double fd[3] = {(up[k].c0 - down[k].c0) / (2 * h * p.value),
                            (up[k].c1 - down[k].c1) / (2 * h * p.value),
                            (up[k].c2 - down[k].c2) / (2 * h * p.value)};
      double exact[3] = {0, 0, 0};
      for (const auto& d : derivative)
        if (d.row == up[k].row && d.col == up[k].col)
          exact[0] += d.c0, exact[1] += d.c1, exact[2] += d.c2;
      const double nominal_c[3] = {nominal_polys[k].c0, nominal_polys[k].c1, nominal_polys[k].c2};
      for (int j = 0; j < 3; ++j) {
        // Normalised, x dc/dx against the entry itself: an entry that does not depend on
        // x (c2 of the op amp on aol) may come out as rounding noise of either sign.
        CHECK(std::abs(exact[j] - fd[j]) * p.value <= 1e-6 * std::abs(nominal_c[j]));
        nonzero += std::abs(exact[j]) * p.value > 1e-6 * std::abs(nominal_c[j]);
      }
    }
    CHECK(nonzero > 0);
  }
}
