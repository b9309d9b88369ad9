// Runs what a review page shows; each analysis as its own command would.

#include "tacet/analysis/review.hpp"

#include <algorithm>
#include <cmath>

#include "tacet/common/errors.hpp"

namespace tacet {
namespace {

bool measures_response(SpecKind kind) {
  return kind == SpecKind::gain || kind == SpecKind::phase || kind == SpecKind::flatness ||
         kind == SpecKind::upper_corner || kind == SpecKind::lower_corner ||
         kind == SpecKind::deviation || kind == SpecKind::mask ||
         kind == SpecKind::peaking;
}

void add_positive(std::vector<double>& out, double f) {
  if (std::isfinite(f) && f > 0) out.push_back(f);
}

std::optional<AcResult> response_for(const Circuit& circuit, const CheckResult& check) {
  AcOptions options;
  std::vector<double> frequencies;
  for (const SpecResult& r : check.specs) {
    if (!measures_response(r.spec.kind)) continue;
    if (std::find(options.probes.begin(), options.probes.end(), r.spec.probe) == options.probes.end())
      options.probes.push_back(r.spec.probe);
    // A corner's from..to is where it is searched for, often decades wide: its
    // reference and where it was found are what the picture needs.
    const bool corner = r.spec.kind == SpecKind::upper_corner || r.spec.kind == SpecKind::lower_corner;
    for (double f : {r.spec.at, r.spec.ref}) add_positive(frequencies, f);
    if (!corner) {
      add_positive(frequencies, r.spec.from);
      add_positive(frequencies, r.spec.to);
    }
    if (corner && r.value) add_positive(frequencies, *r.value);
  }
  if (options.probes.empty() || frequencies.empty()) return std::nullopt;
  // When every response spec measures from the same source (input=), so does the picture.
  std::optional<std::string> input;
  for (const SpecResult& r : check.specs) {
    if (!measures_response(r.spec.kind)) continue;
    if (!input) input = r.spec.input;
    if (*input != r.spec.input) input = std::string();
  }
  options.input = input.value_or(std::string());
  const auto [low, high] = std::minmax_element(frequencies.begin(), frequencies.end());
  options.sweep.from = std::pow(10.0, std::floor(std::log10(*low) - 1e-9));
  options.sweep.to = std::pow(10.0, std::ceil(std::log10(*high) + 1e-9));
  options.sweep.per_decade = 40;
  return run_ac(circuit, options);
}

NoiseOptions noise_options(const Spec& spec) {
  NoiseOptions options;
  options.probe = spec.probe;
  options.band = Band{spec.from, spec.to};
  options.sweep.from = spec.from / 10;
  options.sweep.to = spec.to * 10;
  if (spec.kind == SpecKind::snr) {
    options.input = spec.input;
    options.level = spec.level;
    if (spec.ref > 0) options.reference = spec.ref;
  }
  return options;
}

}  // namespace

ReviewResult run_review(const Circuit& circuit) {
  ReviewResult review;
  review.check = run_check(circuit);
  review.response = response_for(circuit, review.check);
  for (const SpecResult& r : review.check.specs)
    if (r.spec.kind == SpecKind::noise || r.spec.kind == SpecKind::snr)
      review.noise.push_back({r.spec.name, run_noise(circuit, noise_options(r.spec))});
  try {
    review.bias = run_bias(circuit);
    review.headroom = run_headroom(circuit, *review.bias);
  } catch (const Error& e) {
    review.bias_problem = e.what();
  }
  const bool has_opamp = std::any_of(circuit.elements.begin(), circuit.elements.end(),
                                     [](const Element& e) { return e.kind == ElementKind::opamp; });
  if (has_opamp) try {
      review.loop = run_loop(circuit, LoopOptions{});
    } catch (const Error& e) {
      review.loop_problem = e.what();
    }
  return review;
}

}  // namespace tacet
