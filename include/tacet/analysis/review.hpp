#pragma once
// review: every analysis a design review's page shows, run once: the budget
// (check), the responses the frequency specs measure, the noise of each noise
// and snr spec, and the DC operating point with the headroom at the level.
//
// The response sweep covers every frequency a spec names (at, ref, a
// flatness band's ends, and where each corner was found, not the corner's
// search range) from the decade below to the decade above, 40 points a
// decade; with no frequency spec there is none. Each noise or snr spec gets
// its own noise run over its band (the printed points a decade beyond it,
// 20 a decade), with the spec's input and level for an snr. Every op amp's
// loop gain and margins over tacet loop's default range, when there is one.

#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/analysis/loop.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/circuit/circuit.hpp"

namespace tacet {

struct ReviewNoise {
  std::string spec;    ///< the spec's name
  NoiseResult result;
};

struct ReviewResult {
  CheckResult check;
  std::optional<AcResult> response;  ///< the probes of gain, phase, flatness and corner specs
  std::vector<ReviewNoise> noise;    ///< one per noise or snr spec, in the order written
  std::optional<BiasResult> bias;
  std::optional<HeadroomResult> headroom;
  std::string bias_problem;          ///< why there is no bias section (the error's message)
  std::optional<LoopResult> loop;    ///< every op amp's loop; none without op amps
  std::string loop_problem;          ///< why the loop section is missing (the error's message)
};

/// Throws what the analyses throw, except that a bias, headroom or loop
/// failure is kept in bias_problem or loop_problem so that the rest of the
/// page is still written.
ReviewResult run_review(const Circuit& circuit);

}  // namespace tacet
