// The constants of Radau IIA (order 5) and the integrator on a problem with a
// closed form; each check names its source.

#include "tacet/solve/radau.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/pencil.hpp"

using namespace tacet;
using namespace tacet::testing;

TEST_CASE("the Radau IIA matrix is the collocation at (4 -+ sqrt 6)/10 and 1", "[radau]") {
  // Hairer and Wanner, vol. II, table IV.5.6: A's rows sum to the nodes c and
  // the last row is the weights b = ((16 - sqrt 6)/36, (16 + sqrt 6)/36, 1/9).
  const double s6 = std::sqrt(6.0);
  const double c[3] = {(4 - s6) / 10, (4 + s6) / 10, 1.0};
  for (int i = 0; i < 3; ++i) {
    CHECK_THAT(radau::kA[i][0] + radau::kA[i][1] + radau::kA[i][2], IsClose(c[i], 1e-15));
    CHECK_THAT(radau::kNodes[static_cast<std::size_t>(i)], IsClose(c[i], 1e-15));
  }
  CHECK_THAT(radau::kA[2][0], IsClose((16 - s6) / 36, 1e-15));
  CHECK_THAT(radau::kA[2][1], IsClose((16 + s6) / 36, 1e-15));
  CHECK_THAT(radau::kA[2][2], IsClose(1.0 / 9, 1e-15));
}

TEST_CASE("T^-1 A^-1 T is diag(gamma, [alpha -beta; beta alpha])", "[radau]") {
  // The transformation that splits the stage equations into one real and one
  // complex system (Hairer and Wanner, vol. II, section IV.8). A^-1 A = I is
  // checked through T: T^-1 A^-1 T = L means A T L = T.
  const double expected[3][3] = {{radau::kGamma, 0, 0},
                                 {0, radau::kAlpha, -radau::kBeta},
                                 {0, radau::kBeta, radau::kAlpha}};
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) {
      double atl = 0, identity = 0;
      for (int k = 0; k < 3; ++k) {
        double tl = 0;
        for (int m = 0; m < 3; ++m) tl += radau::kT[k][m] * expected[m][j];
        atl += radau::kA[i][k] * tl;
        identity += radau::kTInverse[i][k] * radau::kT[k][j];
      }
      CHECK(std::abs(atl - radau::kT[i][j]) < 1e-14);
      CHECK(std::abs(identity - (i == j ? 1.0 : 0.0)) < 1e-14);
    }
}

TEST_CASE("the sparse pencil gives an op amp's second pole a state of its own", "[radau]") {
  // One quadratic entry (the gain row's (1 + s/wp)(1 + s/wp2)/aol): one more
  // unknown; G + s C at s = 2 pi j f equals the MNA matrix there.
  OpAmpModel m = single_pole(10e6, 1e5);
  m.fp2 = 20e6;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "out", "out", m);
  b.add(ElementKind::resistor, "RL", {"out", "gnd"}, 1e3);
  const MnaSystem mna(b.circuit);
  const SparsePencil pencil = sparse_pencil(mna);
  CHECK(pencil.size() == mna.size() + 1);
  CHECK(pencil.has_storage());
}

TEST_CASE("Radau IIA integrates an RC charge to 1e-9 at the step ends", "[radau]") {
  // C v' + v / R = 1 / R: v = 1 - exp(-t / RC) (closed form).
  const Circuit circuit = rc_lowpass(1e3, 1e-6);
  const MnaSystem mna(circuit);
  const SparsePencil pencil = sparse_pencil(mna);
  std::vector<double> b(static_cast<std::size_t>(pencil.size()), 0.0);
  b[static_cast<std::size_t>(mna.branch_unknown(0))] = 1.0;
  RadauIntegrator radau(pencil, b, SolverKind::klu);
  std::vector<double> x0(b.size(), 0.0);
  x0[static_cast<std::size_t>(mna.node_unknown(circuit.find_node("in").value()))] = 1.0;
  radau.start(x0, 1e-6);
  const int out = mna.node_unknown(circuit.find_node("out").value());
  double worst = 0;
  while (radau.time() < 10e-3) {
    const RadauStep step = radau.advance([](const std::vector<double>& err) {
      double e = 0;
      for (double v : err) e = std::max(e, std::abs(v));
      return e / 1e-10;
    });
    const double t = step.t0 + step.h;
    worst = std::max(worst, std::abs((*step.stages[2])[static_cast<std::size_t>(out)] -
                                     (1 - std::exp(-t / 1e-3))));
  }
  CHECK(worst < 1e-9);
}
