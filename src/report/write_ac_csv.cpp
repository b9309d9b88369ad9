#include "tacet/report/write_ac.hpp"

#include <cmath>

#include "tacet/common/format.hpp"
#include "tacet/report/csv.hpp"

namespace tacet {


std::string ac_csv(const AcResult& result) {
  std::string out = "f_Hz";
  for (const auto& trace : result.traces)
    for (const char* part : {"_re", "_im", "_dB", "_deg"}) {
      out += ',';
      out += csv_field(trace.probe.text + part);
    }
  out += "\n";
  for (std::size_t i = 0; i < result.frequencies.size(); ++i) {
    out += csv_number(result.frequencies[i]);
    for (const auto& trace : result.traces) {
      const auto z = trace.values[i];
      for (double v : {z.real(), z.imag(), to_db(z), to_degrees(z)}) {
        out += ',';
        out += csv_number(v);
      }
    }
    out += "\n";
  }
  return out;
}

}  // namespace tacet
