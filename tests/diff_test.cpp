#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>

#include "tacet/analysis/diff.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

Circuit circuit_of(const std::string& text) {
  auto r = elaborate_text(text);
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  return std::move(*r.circuit);
}

// A resistive divider: H = R2 / (R1 + R2) at every frequency (Ohm's law).
std::string divider(const char* r2) {
  return std::string("vsrc Vin (in, gnd) ac=1\nres R1 (in, out) 1k\nres R2 (out, gnd) ") + r2 +
         "\ncap C1 (out, gnd) 1p\n";
}

void write_file(const std::filesystem::path& p, const std::string& text) {
  std::ofstream(p) << text;
}

}  // namespace

TEST_CASE("a diff of revisions differing in one resistor shows exactly that element", "[diff]") {
  const Circuit old_c = circuit_of(divider("1k"));
  const Circuit new_c = circuit_of(divider("3k"));
  auto changes = diff_circuits(old_c, new_c);
  REQUIRE(changes.size() == 1);
  CHECK(changes[0].kind == ChangeKind::changed);
  CHECK(changes[0].what == "element");
  CHECK(changes[0].name == "R2");
  CHECK(changes[0].before == "res (out, gnd) 1kohm");
  CHECK(changes[0].after == "res (out, gnd) 3kohm");
}

TEST_CASE("a diff reports the change in gain a resistor makes", "[diff]") {
  // 1k/1k gives 1/2, 1k/3k gives 3/4: a change of 20 log10(1.5) = +3.5218 dB
  // (the 1 pF shunt moves this by less than 1e-9 below 1 kHz).
  DiffOptions options;
  options.ac.probes = {"out"};
  options.ac.sweep.kind = SweepKind::list;
  options.ac.sweep.at = {10, 100, 1000};
  auto result = run_diff(circuit_of(divider("1k")), circuit_of(divider("3k")), options);
  REQUIRE(result.probes.size() == 1);
  CHECK(result.probes[0].max_db_change == Approx(20 * std::log10(1.5)).epsilon(1e-9));
}

TEST_CASE("a diff lists added and removed elements and changed params", "[diff]") {
  const Circuit old_c = circuit_of("param g = 2\nvsrc V (a, gnd) ac=1\nres R1 (a, gnd) 1k\nres R9 (a, gnd) 5k\n");
  const Circuit new_c = circuit_of("param g = 3\nvsrc V (a, gnd) ac=1\nres R1 (a, gnd) 1k\ncap C1 (a, gnd) 1n\n");
  auto changes = diff_circuits(old_c, new_c);
  REQUIRE(changes.size() == 3);
  CHECK(changes[0].kind == ChangeKind::added);
  CHECK(changes[0].name == "C1");
  CHECK(changes[1].kind == ChangeKind::removed);
  CHECK(changes[1].name == "R9");
  CHECK(changes[2].what == "param");
  CHECK(changes[2].before == "2");
  CHECK(changes[2].after == "3");
}

TEST_CASE("a diff reports specs whose verdict moved", "[diff]") {
  const std::string spec = "spec half gain (out) at=100Hz min=0.45 max=0.55\n";
  auto result = run_diff(circuit_of(divider("1k") + spec), circuit_of(divider("3k") + spec), {});
  REQUIRE(result.specs.size() == 1);
  CHECK(result.specs[0].before->pass);
  CHECK_FALSE(result.specs[0].after->pass);
  // Without --probe the response is compared at the specs' probes.
  REQUIRE(result.probes.size() == 1);
  CHECK(result.probes[0].probe == "out");
}

TEST_CASE("a revision is read from git with its includes", "[diff][git]") {
  namespace fs = std::filesystem;
  const fs::path repo = fs::temp_directory_path() / "tacet_diff_git_test";
  fs::remove_all(repo);
  fs::create_directories(repo / "parts");
  write_file(repo / "parts" / "lib.tacet", "param r2 = 1k\n");
  write_file(repo / "chain.tacet", "include \"parts/lib.tacet\"\n" + divider("r2"));
  const fs::path here = fs::current_path();
  fs::current_path(repo);
  const std::string git = "git -c user.name=tacet -c user.email=tacet@localhost -c init.defaultBranch=main ";
  REQUIRE(std::system((git + "init -q . && " + git + "add -A && " + git + "commit -qm one").c_str()) == 0);
  write_file(repo / "parts" / "lib.tacet", "param r2 = 3k\n");  // changed in the work tree only
  const Circuit old_c = load_circuit("HEAD:chain.tacet", {});
  const Circuit new_c = load_circuit("chain.tacet", {});
  fs::current_path(here);
  auto changes = diff_circuits(old_c, new_c);
  fs::remove_all(repo);
  REQUIRE(changes.size() == 2);
  CHECK(changes[0].name == "R2");
  CHECK(changes[0].after == "res (out, gnd) 3kohm");
  CHECK(changes[1].name == "r2");
}

TEST_CASE("a missing revision is an input error", "[diff][git]") {
  CHECK_THROWS_WITH(load_circuit("no-such-revision-xyz:chain.tacet", {}),
                    Catch::Contains("cannot read 'no-such-revision-xyz:chain.tacet'"));
}

TEST_CASE("a diff reports DC node changes and noise totals over a band", "[diff][noise][bias]") {
  // Divider from 1 V DC: out = R2 / (R1 + R2): 0.5 V -> 0.75 V (Ohm's law). Its noise is
  // that of R1 || R2, 4kT (R1 || R2) over the band (Johnson 1928, Nyquist 1928):
  // 500 ohm -> 750 ohm, a ratio of sqrt(1.5) in rms.
  auto side = [](const char* r2) {
    return std::string("vsrc Vin (in, gnd) dc=1 ac=1\nres R1 (in, out) 1k\nres R2 (out, gnd) ") + r2 + "\n";
  };
  DiffOptions options;
  options.ac.probes = {"out"};
  options.band = Band{20, 20e3};
  auto result = run_diff(circuit_of(side("1k")), circuit_of(side("3k")), options);
  REQUIRE(result.dc.size() == 1);
  CHECK(result.dc[0].node == "out");
  CHECK(result.dc[0].old_nominal == Approx(0.5).epsilon(1e-9));
  CHECK(result.dc[0].new_nominal == Approx(0.75).epsilon(1e-9));
  REQUIRE(result.noise.size() == 1);
  CHECK(result.noise[0].new_rms / result.noise[0].old_rms == Approx(std::sqrt(1.5)).epsilon(1e-6));
  CHECK(result.noise[0].old_rms == Approx(std::sqrt(4 * 1.380649e-23 * 298.15 * 500 * (20e3 - 20))).epsilon(1e-6));
}

TEST_CASE("a diff of circuits without a DC path says why DC is not compared", "[diff][bias]") {
  const std::string hp = "vsrc Vin (in, gnd) ac=1\ncap C1 (in, out) 1n\ncap C2 (out, gnd) 1n\n";
  DiffOptions options;
  options.ac.probes = {"out"};
  auto result = run_diff(circuit_of(hp), circuit_of(hp), options);
  CHECK(result.dc.empty());
  CHECK(result.dc_note.find("no DC path to gnd") != std::string::npos);
}
