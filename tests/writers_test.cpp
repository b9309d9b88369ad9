#include <catch2/catch.hpp>

#include <stdexcept>
#include <string>
#include <vector>

#include "tacet/report/write_ac.hpp"
#include "tacet/report/write_bias.hpp"
#include "tacet/report/write_check.hpp"
#include "tacet/report/write_diff.hpp"
#include "tacet/report/write_noise.hpp"
#include "tacet/report/writers.hpp"

using namespace tacet;

namespace {

struct Tally {
  int count = 0;
};

std::string with_context(const Tally& t, const ReportContext& c) {
  return c.file + ":" + std::to_string(t.count);
}
std::string without_context(const Tally& t) { return "n=" + std::to_string(t.count); }

using F = OutputFormat;

}  // namespace

TEST_CASE("a writers table lists its formats in the order of its rows", "[writers]") {
  const Writers<Tally> writers{{F::json, with_context}, {F::table, with_context}};
  CHECK(writers.formats() == std::vector<F>{F::json, F::table});
}

TEST_CASE("a writer with or without the report context writes through the table", "[writers]") {
  const Writers<Tally> writers{{F::table, with_context}, {F::csv, without_context}};
  const ReportContext context{"a.tacet", ""};
  CHECK(writers.write(F::table, Tally{3}, context) == "a.tacet:3");
  CHECK(writers.write(F::csv, Tally{3}, context) == "n=3");
}

TEST_CASE("asking a writers table for a format it lacks is a bug, not a silent table",
          "[writers]") {
  const Writers<Tally> writers{{F::table, with_context}};
  CHECK_THROWS_AS(writers.write(F::svg, Tally{}, ReportContext{}), std::logic_error);
}

TEST_CASE("each analysis declares the formats it writes, table first", "[writers]") {
  const std::vector<F> all{F::table, F::csv, F::json};
  const std::vector<F> pictured{F::table, F::csv, F::json, F::svg};
  const std::vector<F> no_csv{F::table, F::json};
  CHECK(ac_writers().formats() == pictured);
  CHECK(noise_writers().formats() == pictured);
  CHECK(bias_writers().formats() == all);
  CHECK(check_writers().formats() == no_csv);
  CHECK(diff_writers().formats() == no_csv);
}
