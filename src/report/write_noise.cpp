// Writers for the noise analysis: table, csv and json.

#include "tacet/report/write_noise.hpp"

#include <array>
#include <cmath>

#include <fmt/format.h>
#include "tacet/report/json_output.hpp"

#include "tacet/common/format.hpp"
#include "tacet/report/csv.hpp"
#include "tacet/report/text_table.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {
namespace {

using json = json_output::Json;
using json_output::number;

const char* unit_of(const NoiseResult& r) { return probe_unit(r.probe); }

// 6.225e-7, "V" -> "622.5 nV"; unit "" -> "622.5n" (for columns whose header has the unit).
std::string si_cell(double v, const std::string& unit) {
  if (!std::isfinite(v)) return v > 0 ? "unbounded" : "-";
  const std::string text = format_si(v, 4);
  if (unit.empty()) return text;
  const auto prefix = text.find_first_not_of("0123456789.-+");
  return prefix == std::string::npos ? text + " " + unit
                                     : text.substr(0, prefix) + " " + text.substr(prefix) + unit;
}

// A magnitude of 0 has no dB figure: "none" (a gain that does not reach the probe).
std::string db_cell(double rms) {
  if (rms == 0) return "none";
  const double db = 20 * std::log10(rms);
  return std::isfinite(db) ? fmt::format("{:.1f}", db) : std::string("-");
}

// No dB figure for 0: it has none.
std::string total_line(const char* what, double rms, const std::string& unit) {
  if (rms == 0) return fmt::format("{:<18}0 {} rms\n", what, unit);
  return fmt::format("{:<18}{} rms  ({} dB re 1 {} rms)\n", what, si_cell(rms, unit),
                     db_cell(rms), unit);
}

std::string snr_text(const SignalToNoise& s) {
  if (std::isfinite(s.ratio_db)) return fmt::format("{:.1f} dB", s.ratio_db);
  if (s.signal_rms == 0) return "none: the signal does not reach the probe";
  return "unbounded: no noise reaches the probe";
}

// The weighting, said once above the figures it changes.
std::string weighting_line(const NoiseResult& r) {
  switch (r.weight) {
    case Weighting::none: return {};
    case Weighting::a:
      return fmt::format("{:<18}A (IEC 61672-1, 0 dB at 1 kHz): totals, rms and shares are weighted\n",
                         "weighting");
    case Weighting::itu468:
      return fmt::format(
          "{:<18}ITU-R BS.468-4 (0 dB at 1 kHz, rms): totals, rms and shares are weighted\n",
          "weighting");
  }
  return {};
}

// A noise figure in dB; unbounded where the source's noise does not reach.
std::string figure_cell(double db) {
  return std::isfinite(db) ? fmt::format("{:.2f}", db) : std::string("unbounded");
}

std::string figure_line(const NoiseResult& r) {
  if (!r.noise_figure_db) return {};
  const std::string value = std::isfinite(*r.noise_figure_db)
                                ? fmt::format("{:.2f} dB", *r.noise_figure_db)
                                : std::string("unbounded");
  return fmt::format("{:<18}{}  (against the thermal noise of {}{})\n", "noise figure", value,
                     r.source, r.weight == Weighting::none ? "" : ", weighted");
}

std::string totals(const NoiseResult& r) {
  std::string out = weighting_line(r);
  out += total_line(r.weight == Weighting::none ? "output noise" : "weighted noise", r.total_rms,
                    unit_of(r));
  if (r.input_referred_rms)
    out += total_line("input-referred", *r.input_referred_rms, r.input_unit);
  else if (!r.input.empty())
    out += fmt::format("{:<18}unbounded\n", "input-referred");
  out += figure_line(r);
  for (const auto& note : r.notes) out += "note: " + note + "\n";
  if (r.signal) {
    out += fmt::format("{:<18}{} rms  ({} rms at {} x gain at {} Hz)\n", "signal at probe",
                       si_cell(r.signal->signal_rms, unit_of(r)),
                       si_cell(r.signal->level, r.input_unit), r.input,
                       format_si(r.signal->reference));
    out += fmt::format("{:<18}{}\n", "signal-to-noise", snr_text(*r.signal));
  }
  return out;
}

std::string percent(double share) { return fmt::format("{:.2f} %", 100 * share); }

// A share of no noise is no share.
std::string share_cell(const NoiseResult& r, double share) {
  return r.total_rms > 0 ? percent(share) : std::string("-");
}

std::string contributor_rows(const NoiseResult& r, std::size_t top) {
  if (r.contributors.empty()) return "no noise sources (every part is noiseless)\n";
  Table table({"source", "mechanism", r.weight == Weighting::none ? "rms" : "weighted rms", "share"},
              Table::Align::left);
  for (std::size_t k = 0; k < r.contributors.size() && k < top; ++k) {
    const auto& c = r.contributors[k];
    table.add({c.source, to_string(c.mechanism), si_cell(c.rms, unit_of(r)), share_cell(r, c.share)});
  }
  std::string out = table.render();
  if (r.contributors.size() > top) {
    double rest = 0;
    for (std::size_t k = top; k < r.contributors.size(); ++k) rest += r.contributors[k].share;
    out += fmt::format("and {} more, {} together\n", r.contributors.size() - top, share_cell(r, rest));
  }
  return out;
}

std::string mechanism_line(const NoiseResult& r) {
  if (!(r.total_rms > 0)) return {};
  std::array<double, 4> share{};
  std::array<bool, 4> present{};  // a circuit without op amps has no en or in rows to show
  for (const auto& c : r.contributors) {
    share[static_cast<std::size_t>(c.mechanism)] += c.share;
    present[static_cast<std::size_t>(c.mechanism)] = true;
  }
  std::string out = "by mechanism:";
  const char* separator = " ";
  for (auto m : {NoiseMechanism::thermal, NoiseMechanism::en, NoiseMechanism::in_plus,
                 NoiseMechanism::in_minus}) {
    if (!present[static_cast<std::size_t>(m)]) continue;
    out += fmt::format("{}{} {}", separator, to_string(m), percent(share[static_cast<std::size_t>(m)]));
    separator = ", ";
  }
  return out + "\n";
}

std::string point_rows(const NoiseResult& r) {
  const std::string unit = std::string(unit_of(r)) + "/rtHz";
  std::vector<std::string> header{"f [Hz]", "density [" + unit + "]"};
  const bool input = !r.input.empty();
  if (input) {
    header.push_back("input density [" + r.input_unit + "/rtHz]");
    header.push_back("gain [dB]");
  }
  const bool figure = !r.spot_noise_figure_db.empty();
  if (figure) header.push_back("NF [dB]");
  Table table(header);
  for (std::size_t k = 0; k < r.frequencies.size(); ++k) {
    std::vector<std::string> row{format_si_fixed(r.frequencies[k]), si_cell(r.density[k], "")};
    if (input) {
      row.push_back(si_cell(r.input_density[k], ""));
      row.push_back(db_cell(std::abs(r.gain[k])));
    }
    if (figure) row.push_back(figure_cell(r.spot_noise_figure_db[k]));
    table.add(std::move(row));
  }
  return table.render();
}

}  // namespace

const Writers<NoiseResult>& noise_writers() {
  static const Writers<NoiseResult> writers{
      {OutputFormat::table,
       [](const NoiseResult& r, const ReportContext& c) { return noise_table(r, c); }},
      {OutputFormat::csv, noise_csv},
      {OutputFormat::json, noise_json},
      {OutputFormat::svg, noise_svg},
  };
  return writers;
}

std::string noise_table(const NoiseResult& r, const ReportContext& context, std::size_t top) {
  std::string out = report_header(context);
  out += fmt::format("Noise at {} over {}Hz..{}Hz, {:.2f} C ({:.2f} K){}\n\n", r.probe.text,
                     format_si(r.band.from), format_si(r.band.to), r.temperature_kelvin - 273.15,
                     r.temperature_kelvin, r.input.empty() ? "" : "; input " + r.input);
  out += totals(r) + "\n" + contributor_rows(r, top) + mechanism_line(r) + "\n";
  return out + point_rows(r);
}

std::string noise_csv(const NoiseResult& r) {
  const std::string unit = unit_of(r);
  std::string out = "f_Hz,density_" + unit + "_rtHz";
  const bool input = !r.input.empty();
  if (input) out += ",input_density_" + r.input_unit + "_rtHz,gain_re,gain_im";
  const bool figure = !r.spot_noise_figure_db.empty();
  if (figure) out += ",nf_dB";
  out += "\n";
  for (std::size_t k = 0; k < r.frequencies.size(); ++k) {
    out += csv_number(r.frequencies[k]) + "," + csv_number(r.density[k]);
    if (input)
      out += "," + csv_number(r.input_density[k]) + "," + csv_number(r.gain[k].real()) + "," +
             csv_number(r.gain[k].imag());
    if (figure) out += "," + csv_number(r.spot_noise_figure_db[k]);
    out += "\n";
  }
  return out;
}

std::string noise_json(const NoiseResult& r, const ReportContext& context) {
  json d = json_output::header("noise", context);
  d["probe"] = r.probe.text;
  d["unit"] = unit_of(r);
  d["band"] = {{"from", number(r.band.from)}, {"to", number(r.band.to)}};
  d["temperature_K"] = number(r.temperature_kelvin);
  if (r.weight != Weighting::none) d["weight"] = to_string(r.weight);
  d["total_rms"] = number(r.total_rms);
  if (!r.input.empty()) {
    d["input"] = r.input;
    d["input_referred_rms"] = number(r.input_referred_rms);
  }
  if (r.signal)
    d["signal"] = {{"level", number(r.signal->level)}, {"reference", number(r.signal->reference)},
                   {"signal_rms", number(r.signal->signal_rms)},
                   {"snr_db", number(r.signal->ratio_db)}};
  if (r.noise_figure_db) {
    d["source"] = r.source;
    d["noise_figure"] = number(*r.noise_figure_db);
  }
  json points = json::array();
  for (std::size_t k = 0; k < r.frequencies.size(); ++k) {
    json point{{"f", number(r.frequencies[k])}, {"density", number(r.density[k])}};
    if (!r.input.empty()) point["input_density"] = number(r.input_density[k]);
    if (!r.spot_noise_figure_db.empty()) point["nf"] = number(r.spot_noise_figure_db[k]);
    points.push_back(point);
  }
  d["points"] = points;
  json contributors = json::array();
  for (const auto& c : r.contributors)
    contributors.push_back({{"source", c.source}, {"mechanism", to_string(c.mechanism)},
                            {"rms", number(c.rms)},
                            {"share", r.total_rms > 0 ? number(c.share) : json(nullptr)}});
  d["contributors"] = contributors;
  if (!r.notes.empty()) d["notes"] = r.notes;
  return json_output::text(d);
}

}  // namespace tacet
