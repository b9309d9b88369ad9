#pragma once
// The noise analysis written for people (table) and programs (csv, json).
//
// Table: the band totals with their dB re 1 V rms (or 1 A rms), the signal
// and signal-to-noise ratio when a level was given, the largest contributors
// with their shares in percent, the shares per mechanism, then the density
// at every sweep point. CSV: the points only (f_Hz, density, and with an
// input the input-referred density and the gain), at full precision; the
// band totals and contributors are in the table and the JSON.

#include <cstddef>
#include <string>

#include "tacet/analysis/noise.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json.
const Writers<NoiseResult>& noise_writers();

/// `top`: how many contributors get a row; the rest are summed on one line.
std::string noise_table(const NoiseResult& result, const ReportContext& context,
                        std::size_t top = 10);

/// Columns: f_Hz, density_U_rtHz, [input_density_U_rtHz, gain_re, gain_im], [nf_dB].
std::string noise_csv(const NoiseResult& result);

/// {"analysis":"noise","file","title","probe","unit","band":{"from","to"},
///  "temperature_K","weight" (with --weight),"total_rms","input","input_referred_rms"
///  (with --input), "signal":{"level","reference","signal_rms","snr_db"} (with --level),
///  "source","noise_figure" (with --source, dB),
///  "points":[{"f","density","input_density","nf"}],
///  "contributors":[{"source","mechanism","rms","share"}]}; null for non-finite.
std::string noise_json(const NoiseResult& result, const ReportContext& context);

}  // namespace tacet
