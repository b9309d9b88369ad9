// The noise analysis as a picture: the total density and its largest contributors.

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {
namespace {

std::string density_unit(const std::string& unit) { return unit + "/\u221AHz"; }

std::string si(double value, const std::string& unit) {
  std::string text = format_si(value, 4);
  const auto u = text.find('u');
  if (u != std::string::npos) text.replace(u, 1, "\u00B5");
  return text + unit;
}

std::string percent(double share) { return fmt::format("{:.1f} %", 100 * share); }

std::string noise_subtitle(const NoiseResult& r, const ReportContext& context) {
  return fmt::format("{}: noise at {}, {} rms over {}..{}", context.file, r.probe.text,
                     si(r.total_rms, probe_unit(r.probe)), si(r.band.from, "Hz"),
                     si(r.band.to, "Hz"));
}

// The band's edges, where they fall inside the sweep (at its ends they add nothing).
std::vector<plot::VerticalLine> band_edges(const NoiseResult& r) {
  std::vector<plot::VerticalLine> edges;
  if (r.frequencies.empty()) return edges;
  const double low = r.frequencies.front(), high = r.frequencies.back();
  if (r.band.from > low && r.band.from < high) edges.push_back({r.band.from, "band from " + si(r.band.from, "Hz")});
  if (r.band.to > low && r.band.to < high) edges.push_back({r.band.to, "band to " + si(r.band.to, "Hz")});
  return edges;
}

plot::Axis density_axis(const std::string& title, const std::string& unit) {
  return plot::Axis{title, density_unit(unit), plot::Scale::log};
}

}  // namespace

plot::Figure noise_figure(const NoiseResult& r, const ReportContext& context) {
  plot::Figure figure =
      plot::over_frequency(context.title.empty() ? "Noise" : context.title, noise_subtitle(r, context), "noise");
  plot::Panel output;
  output.y = density_axis("output density", probe_unit(r.probe));
  output.traces.push_back({"total at " + r.probe.text, r.frequencies, r.density});
  for (std::size_t k = 0; k < r.contributor_density.size(); ++k) {
    const auto& c = r.contributor_density[k];
    const double share = k < r.contributors.size() ? r.contributors[k].share : 0;
    output.traces.push_back({fmt::format("{} {} ({})", c.source, to_string(c.mechanism), percent(share)),
                             r.frequencies, c.density});
  }
  output.verticals = band_edges(r);
  figure.panels.push_back(std::move(output));
  if (!r.input.empty()) {
    plot::Panel input;
    input.y = density_axis("input-referred", r.input_unit);
    // Its own style: the next after the output panel's traces.
    const int style = static_cast<int>(figure.panels[0].traces.size());
    input.traces.push_back({"referred to " + r.input, r.frequencies, r.input_density, style});
    input.verticals = band_edges(r);
    figure.panels.push_back(std::move(input));
  }
  return figure;
}

std::string noise_svg(const NoiseResult& r, const ReportContext& context) {
  return plot::document(noise_figure(r, context));
}

}  // namespace tacet
