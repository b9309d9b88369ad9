#pragma once
// Which output formats an analysis has, declared once beside its writers.
//
// Each analysis keeps one Writers table in its report/write_X.cpp, a row per
// format it can write, and exposes it as `X_writers()`. The command line reads
// that same table for its --help, to refuse a format the analysis lacks before
// any work is done (exit 2, naming the ones it has), and to write the report.
// Adding a format to an analysis is one row:
//
//     {OutputFormat::svg, ac_svg},
//
// A writer takes the result and the report context, or only the result (csv
// has no header that would name the file).

#include <functional>
#include <initializer_list>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "tacet/report/output.hpp"

namespace tacet {

template <class Result, class Context = ReportContext>
class Writers {
 public:
  using Write = std::function<std::string(const Result&, const Context&)>;

  struct Row {
    template <class Writer>
    Row(OutputFormat format_, Writer writer) : format(format_), write(adapt(std::move(writer))) {}
    OutputFormat format;
    Write write;
  };

  Writers(std::initializer_list<Row> rows) : rows_(rows) {}

  /// In the order of the rows; the first is the default.
  std::vector<OutputFormat> formats() const {
    std::vector<OutputFormat> out;
    for (const auto& row : rows_) out.push_back(row.format);
    return out;
  }

  /// The report in `format`; the command line has already refused a format
  /// without a row, so a missing one is a bug in tacet, not in the input.
  std::string write(OutputFormat format, const Result& result, const Context& context) const {
    for (const auto& row : rows_)
      if (row.format == format) return row.write(result, context);
    throw std::logic_error(std::string("no writer for format ") + to_string(format));
  }

 private:
  template <class Writer>
  static Write adapt(Writer writer) {
    if constexpr (std::is_invocable_r_v<std::string, Writer, const Result&, const Context&>)
      return Write(std::move(writer));
    else
      return [writer = std::move(writer)](const Result& result, const Context&) {
        return writer(result);
      };
  }

  std::vector<Row> rows_;
};

}  // namespace tacet
