// The review page: the budget first, then the pictures, bias and the circuit.

#include "tacet/report/write_report.hpp"

#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/plot.hpp"
#include "tacet/report/svg.hpp"
#include "tacet/report/write_bias.hpp"
#include "tacet/report/write_check.hpp"
#include "tacet/report/write_loop.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {
namespace {

using svg::escape;

// Screen: a column a laptop shows whole; print: black on white, no figure cut
// across a page. System fonts only (nothing to fetch).
constexpr const char* kStyle = R"(
body { font-family: "DejaVu Sans", Helvetica, Arial, sans-serif; color: #222; background: #fff;
       max-width: 980px; margin: 1.5em auto; padding: 0 1em; line-height: 1.4; }
h1 { font-size: 1.5em; margin-bottom: 0.1em; }
h2 { font-size: 1.2em; border-bottom: 1px solid #bbb; margin-top: 1.8em; }
h3 { font-size: 1.05em; margin-bottom: 0.3em; }
.file { color: #555; margin-top: 0; }
table { border-collapse: collapse; margin: 0.5em 0; font-size: 0.92em; }
th, td { border: 1px solid #ccc; padding: 0.2em 0.6em; text-align: left; vertical-align: top; }
th { background: #f0f0f0; }
td.number { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.pass { font-weight: bold; color: #005a8c; }
td.fail { font-weight: bold; color: #fff; background: #b33c00; }
.summary { font-weight: bold; }
.summary.fail { color: #b33c00; }
figure { margin: 0.8em 0; page-break-inside: avoid; break-inside: avoid; }
figure svg { max-width: 100%; height: auto; }
pre { font-size: 0.82em; background: #f7f7f7; border: 1px solid #ddd; padding: 0.6em;
      overflow-x: auto; }
.note { color: #555; }
@media print {
  body { max-width: none; margin: 0; }
  td.fail { color: #000; background: none; text-decoration: underline; }
  pre { white-space: pre-wrap; background: none; }
  h2 { page-break-after: avoid; break-after: avoid; }
}
)";

std::string cell(const std::string& text, const char* css = nullptr) {
  return css ? fmt::format("<td class=\"{}\">{}</td>", css, escape(text))
             : "<td>" + escape(text) + "</td>";
}

std::string spec_row(const SpecResult& r) {
  std::string row = "<tr>" + cell(r.spec.name) + cell(to_string(r.spec.kind)) +
                    cell(r.spec.probe.empty() ? "" : r.spec.probe);
  row += cell(r.value ? format_spec_value(*r.value, r.spec.unit) : "not measured", "number");
  row += cell(format_spec_limit(r.spec), "number");
  row += cell(r.value ? format_spec_value(r.margin, r.spec.unit) : "", "number");
  row += r.pass ? cell("PASS", "pass") : cell("FAIL", "fail");
  return row + cell(r.note) + "</tr>\n";
}

std::string spec_section(const CheckResult& check) {
  std::string out = "<h2>Budget</h2>\n";
  if (check.specs.empty()) return out + "<p class=\"note\">The netlist has no spec lines.</p>\n";
  const int failed = check.failed();
  const int total = static_cast<int>(check.specs.size());
  out += fmt::format("<p class=\"summary{}\">{} spec{}: {} pass, {} fail</p>\n",
                     failed ? " fail" : "", total, total == 1 ? "" : "s", total - failed, failed);
  out += "<table>\n<tr><th>spec</th><th>kind</th><th>probe</th><th>measured</th><th>limit</th>"
         "<th>margin</th><th>result</th><th>note</th></tr>\n";
  for (const SpecResult& r : check.specs) out += spec_row(r);
  return out + "</table>\n";
}

std::string figure(const plot::Figure& f, const std::string& caption) {
  return "<figure>\n" + plot::render(f) + "<figcaption class=\"note\">" + escape(caption) +
         "</figcaption>\n</figure>\n";
}

// The frequencies the specs name, as markers on the magnitude panel.
std::vector<plot::VerticalLine> spec_markers(const CheckResult& check) {
  std::vector<plot::VerticalLine> lines;
  for (const SpecResult& r : check.specs) {
    const Spec& s = r.spec;
    switch (s.kind) {
      case SpecKind::gain:
      case SpecKind::phase: lines.push_back({s.at, s.name}); break;
      case SpecKind::flatness:
      case SpecKind::deviation:
      case SpecKind::mask:
        lines.push_back({s.from, s.name + " from"});
        lines.push_back({s.to, s.name + " to"});
        break;
      case SpecKind::upper_corner:
      case SpecKind::lower_corner:
        if (r.value) lines.push_back({*r.value, s.name});
        break;
      case SpecKind::peaking:
        if (r.value) lines.push_back({r.where, s.name});
        break;
      default: break;
    }
  }
  return lines;
}

std::string response_section(const ReviewResult& review, const ReportContext& context) {
  if (!review.response) return "";
  plot::Figure f = ac_figure(*review.response, context);
  f.id = "response";
  f.title = "Responses the specs measure";
  f.panels[0].verticals = spec_markers(review.check);
  return "<h2>Frequency response</h2>\n" +
         figure(f, "Dashed lines: the frequencies the gain, phase, flatness and corner specs name "
                   "(a corner at its measured frequency).");
}

std::string si(double value, const std::string& unit) { return format_si(value, 4) + unit; }

std::string contributors_table(const NoiseResult& r, std::size_t top) {
  std::string out = "<table>\n<tr><th>source</th><th>mechanism</th><th>rms</th><th>share</th></tr>\n";
  for (std::size_t k = 0; k < r.contributors.size() && k < top; ++k) {
    const auto& c = r.contributors[k];
    out += "<tr>" + cell(c.source) + cell(to_string(c.mechanism)) +
           cell(si(c.rms, probe_unit(r.probe)), "number") +
           cell(fmt::format("{:.2f} %", 100 * c.share), "number") + "</tr>\n";
  }
  out += "</table>\n";
  if (r.contributors.size() > top)
    out += fmt::format("<p class=\"note\">and {} more.</p>\n", r.contributors.size() - top);
  return out;
}

std::string noise_section(const ReviewResult& review, const ReportContext& context) {
  if (review.noise.empty()) return "";
  std::string out = "<h2>Noise</h2>\n";
  for (std::size_t k = 0; k < review.noise.size(); ++k) {
    const auto& [spec, r] = review.noise[k];
    plot::Figure f = noise_figure(r, context);
    f.id = fmt::format("noise-{}", k);
    f.title = fmt::format("{}: noise at {}", spec, r.probe.text);
    out += fmt::format("<h3>{}</h3>\n<p>{} rms at {} over {}..{}", escape(spec),
                       escape(si(r.total_rms, probe_unit(r.probe))), escape(r.probe.text),
                       escape(si(r.band.from, "Hz")), escape(si(r.band.to, "Hz")));
    if (r.signal)
      out += fmt::format("; signal {} rms, signal-to-noise {:.1f} dB",
                         escape(si(r.signal->signal_rms, probe_unit(r.probe))), r.signal->ratio_db);
    out += ".</p>\n" + figure(f, "The total density and the largest contributors; shares are of "
                                 "the band's total power.");
    out += contributors_table(r, 8);
  }
  return out;
}

// A text report without the title and file lines the page already shows.
std::string without_header(const std::string& text, const ReportContext& context) {
  const std::string header = report_header(context);
  return text.rfind(header, 0) == 0 ? text.substr(header.size()) : text;
}

std::string bias_section(const ReviewResult& review, const ReportContext& context) {
  std::string out = "<h2>DC operating point and headroom</h2>\n";
  if (!review.bias || !review.headroom)
    return out + "<p class=\"note\">Not computed: " + escape(review.bias_problem) + "</p>\n";
  const std::string text = bias_table(BiasReport{*review.bias, *review.headroom}, context);
  return out + "<pre>" + escape(without_header(text, context)) + "</pre>\n";
}

std::string margin_cell(const std::optional<double>& margin, const char* unit) {
  return cell(margin ? fmt::format("{:.1f} {}", *margin, unit) : "none in range", "number");
}

std::string crossover_cell(const LoopTrace& loop) {
  std::string text;
  for (const auto& c : loop.crossovers) text += (text.empty() ? "" : ", ") + si(c.f, "Hz");
  return cell(text.empty() ? "none in range" : text, "number");
}

// Every op amp's margins, the verdict word, and |T| with its phase.
std::string loop_section(const ReviewResult& review, const ReportContext& context) {
  if (!review.loop && review.loop_problem.empty()) return "";
  std::string out = "<h2>Loop gain and margins</h2>\n";
  if (!review.loop)
    return out + "<p class=\"note\">Not computed: " + escape(review.loop_problem) + "</p>\n";
  out += "<table>\n<tr><th>op amp</th><th>crossover</th><th>phase margin</th><th>gain margin</th>"
         "<th>verdict</th></tr>\n";
  for (const LoopTrace& loop : review.loop->loops)
    out += "<tr>" + cell(loop.opamp) + crossover_cell(loop) + margin_cell(loop.phase_margin, "deg") +
           margin_cell(loop.gain_margin, "dB") + cell(loop_verdict(loop)) + "</tr>\n";
  out += "</table>\n";
  plot::Figure f = loop_figure(*review.loop, context);
  f.id = "loop";
  f.title = "Loop gain of each op amp";
  return out + figure(f, "Each op amp's return ratio T with the loop closed; dots mark where |T| = 1 "
                         "(phase margin written on the phase curve) and where the phase reaches "
                         "-180 deg (gain margin on the |T| curve). Verdict: common practice, 45 deg "
                         "and 6 dB.");
}

}  // namespace

const Writers<ReviewPage>& report_writers() {
  static const Writers<ReviewPage> writers{{OutputFormat::html, report_html}};
  return writers;
}

std::string report_html(const ReviewPage& page, const ReportContext& context) {
  const std::string title = context.title.empty() ? context.file : context.title;
  std::string out = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  out += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  out += "<title>" + escape(title) + "</title>\n<style>" + kStyle + "</style>\n</head>\n<body>\n";
  out += "<h1>" + escape(title) + "</h1>\n";
  out += "<p class=\"file\">" + escape(context.file) + " \u00B7 tacet " + TACET_VERSION + "</p>\n";
  out += spec_section(page.review.check);
  out += response_section(page.review, context);
  out += noise_section(page.review, context);
  out += bias_section(page.review, context);
  out += loop_section(page.review, context);
  out += "<h2>Circuit</h2>\n<pre>" + escape(without_header(page.listing, context)) + "</pre>\n";
  return out + "</body>\n</html>\n";
}

}  // namespace tacet
