#pragma once
// The pictures of the analyses: each result as a plot::Figure (for a page
// that holds several) and as a standalone SVG document (`--format svg`).
//
// ac: a magnitude panel (dB re 1 V, or 1 A for a current probe; a gain when
// the source has ac=1) over a phase panel (degrees), one trace per probe.
// The phase is unwrapped along the sweep (a step of more than 180 degrees
// between neighbouring points is taken as a wrap), so a trace is continuous
// where the table prints (-180, 180].
// noise: the total output density and the largest contributors' densities
// on log axes, the band's edges marked when inside the sweep; with an input,
// a second panel with the input-referred density.

#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/loop.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/plot.hpp"

namespace tacet {

plot::Figure ac_figure(const AcResult& result, const ReportContext& context);
std::string ac_svg(const AcResult& result, const ReportContext& context);

plot::Figure noise_figure(const NoiseResult& result, const ReportContext& context);
std::string noise_svg(const NoiseResult& result, const ReportContext& context);

/// loop: |T| in dB over the unwrapped phase, one trace per op amp (the same
/// style in both panels), 0 dB and -180 deg drawn; each crossover's phase
/// margin labelled on the phase curve and each phase crossover's gain margin
/// on the |T| curve, with a dot at the same frequency on the other panel.
plot::Figure loop_figure(const LoopResult& result, const ReportContext& context);
std::string loop_svg(const LoopResult& result, const ReportContext& context);
/// The annotations: "U1 PM 51.8° at 1.23MHz", "U1 GM 12.1 dB at 4.5MHz".
std::string loop_margin_label(const std::string& opamp, const LoopCrossover& c);
std::string loop_margin_label(const std::string& opamp, const LoopPhaseCrossover& c);

/// Degrees made continuous: each value moved by a multiple of 360 to within
/// 180 of the previous finite one. Non-finite values stay as they are.
std::vector<double> unwrap_degrees(const std::vector<double>& degrees);

}  // namespace tacet
