#pragma once
// The two cells every CSV writer makes (RFC 4180): a text field, quoted only
// when it holds a comma, a quote or a line break (a probe such as v(a,b)), and
// a number, exact to the last bit, left empty when it is not finite so that a
// spreadsheet reads a gap rather than the word "nan".

#include <string>

namespace tacet {

std::string csv_field(const std::string& text);
std::string csv_number(double value);

}  // namespace tacet
