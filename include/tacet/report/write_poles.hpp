#pragma once
// The poles analysis written for people (table) and programs (csv, json).
//
// Table: the poles sorted by frequency with Re and Im of s/(2 pi), f0 and Q,
// then the zeros, then a plain-words verdict (and which op amp's loop has a
// negative margin when the circuit is unstable). CSV: kind,re_Hz,im_Hz,f0_Hz,q.

#include <string>

#include "tacet/analysis/poles.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json.
const Writers<PolesResult>& poles_writers();

std::string poles_table(const PolesResult& result, const ReportContext& context);
std::string poles_csv(const PolesResult& result);
/// {"analysis":"poles","file","title","poles":[{"re","im","f0","q"}],"zeros":[...],"stable"};
/// re, im in Hz (parts of s / 2 pi); q null on the imaginary axis.
std::string poles_json(const PolesResult& result, const ReportContext& context);

}  // namespace tacet
