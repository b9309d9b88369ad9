#include "tacet/report/write_ac.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {

const Writers<AcResult>& ac_writers() {
  static const Writers<AcResult> writers{
      {OutputFormat::table, ac_table},
      {OutputFormat::csv, ac_csv},
      {OutputFormat::json, ac_json},
      {OutputFormat::svg, ac_svg},
  };
  return writers;
}

}  // namespace tacet
