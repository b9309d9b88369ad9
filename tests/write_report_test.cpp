// The review page: what it holds, and that it needs nothing from outside.

#include "tacet/report/write_report.hpp"

#include <catch2/catch.hpp>
#include <regex>
#include <set>

#include "tacet/report/write_circuit.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

// A non-inverting gain of 10 (1 + 9k/1k) behind a 10 kHz RC, with a budget
// that passes on gain and noise and fails on the corner.
const char* kNetlist = R"(title "Review <test> & co"
model fast opamp {
  gbw 10MHz
  aol 100dB
  en  5nV/rtHz
  in  1pA/rtHz
}
vsrc Vin (in, gnd) ac=1
res Rs (in, p) 1k
opamp U1 (+p, -fb, out) fast
res Rf (out, fb) 9k
res Rg (fb, gnd) 1k
res Ro (out, f) 1.59k
cap Co (f, gnd) 10n
spec gain_1k gain (f) at=1kHz min=19.9dB max=20.1dB
spec corner upper_corner (f) ref=100Hz min=20kHz max=30kHz
spec hiss noise (f) from=20Hz to=20kHz max=100uV
)";

std::string page_of(const char* netlist) {
  auto elaborated = elaborate_text(netlist);
  INFO(elaborated.diagnostics);
  REQUIRE(elaborated.circuit);
  const ReportContext context{"review.tacet", elaborated.circuit->title};
  return report_html({run_review(*elaborated.circuit), circuit_listing(*elaborated.circuit, context)},
                     context);
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto k = text.find(what); k != std::string::npos; k = text.find(what, k + 1)) ++n;
  return n;
}

}  // namespace

TEST_CASE("the review page opens with the budget, every spec with its verdict", "[report]") {
  const std::string page = page_of(kNetlist);
  CHECK(page.rfind("<!DOCTYPE html>\n<html lang=\"en\">", 0) == 0);
  CHECK(page.find("<title>Review &lt;test&gt; &amp; co</title>") != std::string::npos);
  CHECK(page.find("<p class=\"summary fail\">3 specs: 2 pass, 1 fail</p>") != std::string::npos);
  CHECK(count(page, "<td class=\"pass\">PASS</td>") == 2);
  CHECK(count(page, "<td class=\"fail\">FAIL</td>") == 1);
  // Order: budget, response, noise, bias, circuit.
  const auto budget = page.find("<h2>Budget</h2>"), response = page.find("<h2>Frequency response</h2>"),
             noise = page.find("<h2>Noise</h2>"), bias = page.find("<h2>DC operating point"),
             circuit = page.find("<h2>Circuit</h2>");
  REQUIRE(circuit != std::string::npos);
  CHECK(budget < response);
  CHECK(response < noise);
  CHECK(noise < bias);
  CHECK(bias < circuit);
  CHECK(page.find("opamp  U1") != std::string::npos);  // the listing
}

TEST_CASE("the review page draws the specs' responses and noise inline, with unique ids", "[report]") {
  const std::string page = page_of(kNetlist);
  CHECK(count(page, "<svg xmlns=\"http://www.w3.org/2000/svg\"") == 3);  // response, noise of hiss, loop
  CHECK(page.find("<?xml") == std::string::npos);  // inline, not documents
  std::set<std::string> ids;
  const std::regex id("id=\"([^\"]+)\"");
  for (auto it = std::sregex_iterator(page.begin(), page.end(), id); it != std::sregex_iterator(); ++it)
    CHECK(ids.insert((*it)[1]).second);
  CHECK(ids.count("response-clip-0") == 1);
  CHECK(ids.count("noise-0-clip-0") == 1);
  CHECK(ids.count("loop-clip-0") == 1);
  // The spec frequencies are marked on the response.
  CHECK(page.find(">gain_1k</text>") != std::string::npos);
  CHECK(page.find(">corner</text>") != std::string::npos);
}

TEST_CASE("the review page lists every op amp's loop margins after bias, with the loop plot",
          "[report][loop]") {
  const std::string page = page_of(kNetlist);
  const auto bias = page.find("<h2>DC operating point"), loop = page.find("<h2>Loop gain and margins</h2>"),
             circuit = page.find("<h2>Circuit</h2>");
  REQUIRE(loop != std::string::npos);
  CHECK(bias < loop);
  CHECK(loop < circuit);
  // U1 closes a loop of noise gain 10 around a single-pole 10 MHz op amp:
  // T = 1e4 / (1 + jf/100Hz) crosses 1 at 100 Hz sqrt(1e8 - 1) = 1 MHz with
  // 180 - atan(1e4) = 90.006 degrees of margin, and one pole never reaches -180
  // (closed form of a single-pole loop; common practice calls it ample).
  const std::string row = page.substr(page.find("<tr><td>U1</td>", loop));
  CHECK(row.find("<td class=\"number\">1MHz</td><td class=\"number\">90.0 deg</td>"
                 "<td class=\"number\">none in range</td><td>ample</td>") == 15);
  CHECK(page.find("U1 PM 90.0\u00B0 at 1MHz", loop) != std::string::npos);
}

TEST_CASE("the review page fetches nothing: no scripts, links, images or fonts", "[report]") {
  const std::string page = page_of(kNetlist);
  for (const char* outside : {"<script", "<link", "<img", "src=", "href=", "@import", "url(http", "@font-face"})
    CHECK(page.find(outside) == std::string::npos);
  // The one URI is the SVG namespace name, which is never fetched.
  CHECK(count(page, "http") == count(page, "http://www.w3.org/2000/svg"));
}

TEST_CASE("a netlist without specs still gets a page with bias and the circuit", "[report]") {
  const std::string page = page_of("vsrc V1 (a, gnd) ac=1 dc=1\nres R1 (a, b) 1k\nres R2 (b, gnd) 1k\n");
  CHECK(page.find("The netlist has no spec lines.") != std::string::npos);
  CHECK(page.find("<h2>Frequency response</h2>") == std::string::npos);
  CHECK(page.find("<h2>DC operating point and headroom</h2>") != std::string::npos);
  CHECK(page.find("<h2>Circuit</h2>") != std::string::npos);
}

TEST_CASE("the review's response is from the one source every response spec names", "[report]") {
  // Two sources: V1 ac=1 through R1 and I2 (1 A into out); C1 to gnd. From V1 alone the
  // low-frequency gain is 1 (0 dB); superposed with I2's 1 kohm x 1 A it would be 1001.
  const std::string two =
      "vsrc V1 (a, gnd) ac=1\nisrc I2 (gnd, out) ac=1\nres R1 (a, out) 1k\ncap C1 (out, gnd) 100n\n";
  auto from_v1 = elaborate_text(two + "spec g gain (out) at=10Hz min=-0.1dB input=V1\n");
  REQUIRE(from_v1.circuit);
  const ReviewResult review = run_review(*from_v1.circuit);
  REQUIRE(review.response);
  CHECK(review.response->input == "V1");
  CHECK(std::abs(review.response->traces[0].values[0]) == Approx(1).epsilon(1e-3));
  auto mixed = elaborate_text(two + "spec g gain (out) at=10Hz min=-0.1dB input=V1\n"
                                    "spec h gain (out) at=10Hz min=-0.1dB\n");
  REQUIRE(mixed.circuit);
  const ReviewResult superposed = run_review(*mixed.circuit);
  REQUIRE(superposed.response);
  CHECK(superposed.response->input.empty());
}
