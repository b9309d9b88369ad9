#pragma once
// What changed between two revisions: a table for people, JSON for programs.

#include <string>

#include "tacet/analysis/diff.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

struct DiffContext {
  ReportContext old_side;
  ReportContext new_side;
};

/// table, json.
const Writers<DiffResult, DiffContext>& diff_writers();

std::string diff_table(const DiffResult& result, const DiffContext& context);
/// {"analysis":"diff","old":{file,title},"new":{...},"circuit":[{"change","what","name","before","after"}],
///  "probes":[{"probe","max_db_change","db_at","max_deg_change","deg_at"}],
///  "specs":[{"name","before":{pass,value,margin}|null,"after":...}]}
std::string diff_json(const DiffResult& result, const DiffContext& context);

}  // namespace tacet
