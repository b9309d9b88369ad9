#include "tacet/circuit/circuit_text.hpp"

#include <fmt/format.h>

#include "tacet/common/format.hpp"

namespace tacet {

std::string connection_list(const Circuit& c, const Element& e) {
  auto name = [&](int n) { return c.node_names[static_cast<std::size_t>(n)]; };
  switch (traits(e.kind).pins) {
    case Pins::opamp:
      return fmt::format("(+{}, -{}, {})", name(e.nodes[0]), name(e.nodes[1]), name(e.nodes[2]));
    case Pins::two_pairs:
      return fmt::format("({}, {}; {}, {})", name(e.nodes[0]), name(e.nodes[1]), name(e.nodes[2]),
                         name(e.nodes[3]));
    case Pins::pair: break;
  }
  return fmt::format("({}, {})", name(e.nodes[0]), name(e.nodes[1]));
}

std::string element_value(const Circuit& c, const Element& e) {
  std::string out;
  switch (e.kind) {
    case ElementKind::resistor: out = format_si(e.value, 6) + "ohm"; break;
    case ElementKind::capacitor: out = format_si(e.value, 6) + "F"; break;
    case ElementKind::inductor: out = format_si(e.value, 6) + "H"; break;
    case ElementKind::vcvs: out = "gain=" + format_si(e.value, 6); break;
    case ElementKind::vccs: out = "gm=" + format_si(e.value, 6) + "S"; break;
    case ElementKind::opamp: out = c.model_of(e).name; break;
    case ElementKind::vsource:
    case ElementKind::isource: {
      const char* unit = traits(e.kind).drive == Drive::voltage ? "V" : "A";
      out = fmt::format("dc={}{} ac={}{}", format_si(e.dc, 6), unit, format_si(e.ac_magnitude, 6), unit);
      if (e.ac_phase != 0) out += fmt::format(" phase={}deg", format_si(e.ac_phase, 6));
      break;
    }
  }
  if (e.tolerance > 0) out += fmt::format(" tol={:g}%", e.tolerance * 100);
  if (!e.match.empty()) out += fmt::format(" match={} ratio={:g}%", e.match, e.ratio * 100);
  if (e.dist != Distribution::uniform) out += fmt::format(" dist={}", to_string(e.dist));
  if (e.rails) out += fmt::format(" rails={:+g}/{:+g}", e.rails->high, e.rails->low);
  if (e.noiseless) out += " noiseless";
  return out;
}

std::string model_line(const OpAmpModel& m) {
  std::string out = fmt::format("model {} opamp {{ gbw {}Hz aol {:.6g}dB", m.name, format_si(m.gbw, 6),
                                20 * std::log10(m.aol));
  auto add = [&](const char* key, double v, const char* unit) {
    if (v != 0) out += fmt::format(" {} {}{}", key, format_si(v, 6), unit);
  };
  add("fp2", m.fp2, "Hz");
  add("rout", m.rout, "ohm");
  add("rin", m.rin, "ohm");
  add("en", m.en, "V/rtHz");
  add("fce", m.fce, "Hz");
  add("in", m.in, "A/rtHz");
  add("fci", m.fci, "Hz");
  add("vos", m.vos, "V");
  add("ib", m.ib, "A");
  add("ios", m.ios, "A");
  add("swing", m.swing, "V");
  if (m.slew != 0) out += fmt::format(" slew {:g}V/us", m.slew * 1e-6);
  if (m.vcm_low) out += fmt::format(" vcm_low {}V", format_si(*m.vcm_low, 6));
  if (m.vcm_high) out += fmt::format(" vcm_high {}V", format_si(*m.vcm_high, 6));
  if (m.cmrr != 0) out += fmt::format(" cmrr {:.6g}dB", 20 * std::log10(m.cmrr));
  add("fcmrr", m.fcmrr, "Hz");
  add("cin_diff", m.cin_diff, "F");
  add("cin_cm", m.cin_cm, "F");
  if (m.psrr != 0) out += fmt::format(" psrr {:.6g}dB", 20 * std::log10(m.psrr));
  if (m.ib_max) out += fmt::format(" ib_max {}A", format_si(*m.ib_max, 6));
  add("vos_drift", m.vos_drift, "V/C");
  add("ib_double", m.ib_double, "C");
  add("iout_max", m.iout_max, "A");
  for (const ModelTolerance& t : m.tolerances) out += fmt::format(" {}_tol {:g}%", t.key, t.tolerance * 100);
  if (!m.tolerances.empty() && m.dist != Distribution::uniform) out += fmt::format(" dist {}", to_string(m.dist));
  return out + " }\n";
}

}  // namespace tacet
