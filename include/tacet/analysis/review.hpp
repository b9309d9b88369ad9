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
// 20 a decade), with the spec's input and level for an snr.

#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/headroom.hpp"
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
};

/// Throws what the analyses throw, except that a bias or headroom failure is
/// kept in bias_problem so that the rest of the page is still written.
ReviewResult run_review(const Circuit& circuit);

}  // namespace tacet
