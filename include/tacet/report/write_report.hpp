#pragma once
// The review page: one self-contained HTML document (inline CSS and SVG, no
// scripts, fonts, images or links to fetch) that a reviewer opens or prints:
// the title and file, the budget's verdict (every spec with PASS/FAIL, the
// measured value, the limit and the margin) first, then the responses the
// specs measure with the spec frequencies marked, the noise of each noise or
// snr spec with its largest contributors, the DC operating point with the
// headroom at the level, and the circuit listing.

#include <string>

#include "tacet/analysis/review.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

struct ReviewPage {
  ReviewResult review;
  std::string listing;  ///< circuit_listing() of the circuit reviewed
};

/// html.
const Writers<ReviewPage>& report_writers();

std::string report_html(const ReviewPage& page, const ReportContext& context);

}  // namespace tacet
