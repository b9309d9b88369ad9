// The loop gain as a picture: |T| and its phase, each crossover and phase
// crossover marked with its margin.

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {
namespace {

std::string loop_subtitle(const LoopResult& result, const ReportContext& context) {
  const auto& f = result.frequencies;
  if (f.empty()) return context.file;
  return fmt::format("{}: {} op amp{}, {} points from {}Hz to {}Hz", context.file,
                     result.loops.size(), result.loops.size() == 1 ? "" : "s", f.size(),
                     format_si(f.front()), format_si(f.back()));
}

// The phase level -180 - 360k a phase crossover lies on (the unwrapped phase
// there, up to the bisection's last step).
double crossing_level(double deg_near) { return -180 - 360 * std::round((-180 - deg_near) / 360); }

}  // namespace

std::string loop_margin_label(const std::string& opamp, const LoopCrossover& c) {
  return fmt::format("{} PM {:.1f}\u00B0 at {}Hz", opamp, c.phase_margin, format_si(c.f));
}

std::string loop_margin_label(const std::string& opamp, const LoopPhaseCrossover& c) {
  return fmt::format("{} GM {:.1f} dB at {}Hz", opamp, c.gain_margin, format_si(c.f));
}

plot::Figure loop_figure(const LoopResult& result, const ReportContext& context) {
  plot::Figure figure = plot::over_frequency(context.title.empty() ? "Loop gain" : context.title,
                                             loop_subtitle(result, context), "loop");
  plot::Panel magnitude, phase;
  magnitude.y = plot::Axis{"|T|", "dB"};
  magnitude.y.si_labels = false;
  magnitude.horizontals.push_back({0, "|T| = 1"});
  phase.y = plot::Axis{"arg T", "deg"};
  phase.y.si_labels = false;
  phase.y.steps = {15, 30, 45, 90, 180, 360};
  phase.horizontals.push_back({-180, "-180\u00B0"});
  for (std::size_t k = 0; k < result.loops.size(); ++k) {
    const LoopTrace& loop = result.loops[k];
    std::vector<double> db;
    db.reserve(loop.t.size());
    for (const auto& t : loop.t) db.push_back(to_db(t));
    const int style = static_cast<int>(k);
    magnitude.traces.push_back({loop.opamp, result.frequencies, std::move(db), style});
    phase.traces.push_back({loop.opamp, result.frequencies, loop.deg, style});
    // Each margin is written once, on the panel where it is read: a phase
    // margin on the phase curve, a gain margin on the |T| curve; the other
    // panel marks the same frequency with an unlabelled dot.
    for (const auto& c : loop.crossovers) {
      magnitude.points.push_back({c.f, 0, ""});
      phase.points.push_back({c.f, c.phase_margin - 180, loop_margin_label(loop.opamp, c)});
    }
    for (const auto& c : loop.phase_crossovers) {
      magnitude.points.push_back({c.f, -c.gain_margin, loop_margin_label(loop.opamp, c)});
      const auto near = std::lower_bound(result.frequencies.begin(), result.frequencies.end(), c.f);
      const std::size_t i = std::min<std::size_t>(static_cast<std::size_t>(near - result.frequencies.begin()),
                                                  loop.deg.size() - 1);
      phase.points.push_back({c.f, crossing_level(loop.deg[i]), ""});
    }
  }
  figure.panels.push_back(std::move(magnitude));
  figure.panels.push_back(std::move(phase));
  return figure;
}

std::string loop_svg(const LoopResult& result, const ReportContext& context) {
  return plot::document(loop_figure(result, context));
}

}  // namespace tacet
