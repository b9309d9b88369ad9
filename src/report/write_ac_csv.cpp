#include "tacet/report/write_ac.hpp"

#include <cmath>

#include "tacet/common/format.hpp"

namespace tacet {

namespace {

std::string quoted(const std::string& field) {
  if (field.find_first_of(",\"\n") == std::string::npos) return field;
  std::string out = "\"";
  for (char c : field) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

std::string number(double v) { return std::isfinite(v) ? format_exact(v) : std::string(); }

}  // namespace

std::string ac_csv(const AcResult& result) {
  std::string out = "f_Hz";
  for (const auto& trace : result.traces)
    for (const char* part : {"_re", "_im", "_dB", "_deg"}) {
      out += ',';
      out += quoted(trace.probe.text + part);
    }
  out += "\n";
  for (std::size_t i = 0; i < result.frequencies.size(); ++i) {
    out += number(result.frequencies[i]);
    for (const auto& trace : result.traces) {
      const auto z = trace.values[i];
      for (double v : {z.real(), z.imag(), to_db(z), to_degrees(z)}) {
        out += ',';
        out += number(v);
      }
    }
    out += "\n";
  }
  return out;
}

}  // namespace tacet
