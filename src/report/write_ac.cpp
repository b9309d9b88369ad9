#include "tacet/report/write_ac.hpp"

namespace tacet {

const Writers<AcResult>& ac_writers() {
  static const Writers<AcResult> writers{
      {OutputFormat::table, ac_table},
      {OutputFormat::csv, ac_csv},
      {OutputFormat::json, ac_json},
  };
  return writers;
}

}  // namespace tacet
