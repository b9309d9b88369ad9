#include "tacet/report/svg.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>

#include <fmt/format.h>

namespace tacet::svg {
namespace {

constexpr std::string_view kReplacement = "\xEF\xBF\xBD";  // U+FFFD

bool in(unsigned char c, unsigned char low, unsigned char high) { return c >= low && c <= high; }

// The length of the well-formed UTF-8 sequence at text[i] (Unicode 15, table
// 3-7), or 0 when the bytes there are not one.
std::size_t sequence_length(std::string_view text, std::size_t i) {
  auto at = [&](std::size_t k) -> unsigned char {
    return i + k < text.size() ? static_cast<unsigned char>(text[i + k]) : 0;
  };
  const unsigned char lead = at(0);
  auto continues = [&](std::size_t from, std::size_t to) {
    for (std::size_t k = from; k < to; ++k)
      if (!in(at(k), 0x80, 0xBF)) return false;
    return true;
  };
  if (lead < 0x80) return 1;
  if (in(lead, 0xC2, 0xDF)) return continues(1, 2) ? 2 : 0;
  if (in(lead, 0xE0, 0xEF)) {
    const unsigned char low = lead == 0xE0 ? 0xA0 : 0x80, high = lead == 0xED ? 0x9F : 0xBF;
    return in(at(1), low, high) && continues(2, 3) ? 3 : 0;
  }
  if (in(lead, 0xF0, 0xF4)) {
    const unsigned char low = lead == 0xF0 ? 0x90 : 0x80, high = lead == 0xF4 ? 0x8F : 0xBF;
    return in(at(1), low, high) && continues(2, 4) ? 4 : 0;
  }
  return 0;
}

// U+FFFE and U+FFFF are not XML characters (XML 1.0, production 2).
bool is_noncharacter(std::string_view sequence) {
  return sequence == "\xEF\xBF\xBE" || sequence == "\xEF\xBF\xBF";
}

}  // namespace

namespace {

bool needs_escaping(std::string_view text) {
  for (const char c : text) {
    const auto u = static_cast<unsigned char>(c);
    if (u < 0x20 || u >= 0x80 || c == '&' || c == '<' || c == '>' || c == '"' || c == '\'') return true;
  }
  return false;
}

void append_escaped(std::string& out, std::string_view text) {
  if (needs_escaping(text)) out += escape(text);
  else out += text;
}

}  // namespace

std::string escape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (std::size_t i = 0; i < text.size();) {
    const std::size_t length = sequence_length(text, i);
    if (length == 0) {
      out += kReplacement;
      ++i;
      continue;
    }
    const std::string_view sequence = text.substr(i, length);
    i += length;
    if (length > 1) {
      out += is_noncharacter(sequence) ? kReplacement : sequence;
      continue;
    }
    const char c = sequence[0];
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&apos;"; break;
      case '\t': case '\n': case '\r': out += c; break;
      default:
        if (static_cast<unsigned char>(c) >= 0x20) out += c;
    }
  }
  return out;
}

void append_number(std::string& out, double value) {
  constexpr double kLimit = 1e6;
  if (!std::isfinite(value)) value = value > 0 ? kLimit : -kLimit;  // NaN lands at -1e6
  value = std::clamp(value, -kLimit, kLimit);
  // Hundredths as an integer, then "units.hh": the sweep's every point passes here,
  // and integer text is several times faster than formatting a double.
  const auto hundredths = static_cast<long long>(std::llround(value * 100));
  const unsigned long long magnitude =
      static_cast<unsigned long long>(hundredths < 0 ? -hundredths : hundredths);
  if (hundredths < 0) out += '-';
  std::array<char, 24> digits{};
  const auto [end, ec] = std::to_chars(digits.data(), digits.data() + digits.size(), magnitude / 100);
  out.append(digits.data(), end);
  out += '.';
  out += static_cast<char>('0' + magnitude % 100 / 10);
  out += static_cast<char>('0' + magnitude % 10);
}

std::string number(double value) {
  std::string text;
  append_number(text, value);
  return text;
}

void Writer::start_tag(std::string_view name, Attributes attributes) {
  out_ += '<';
  out_ += name;
  for (const auto& [key, value] : attributes) {
    out_ += ' ';
    out_ += key;
    out_ += "=\"";
    append_escaped(out_, value);
    out_ += '"';
  }
}

void Writer::open(std::string_view name, Attributes attributes) {
  start_tag(name, attributes);
  out_ += ">\n";
  open_.emplace_back(name);
}

void Writer::close() {
  if (open_.empty()) return;
  out_ += "</" + open_.back() + ">\n";
  open_.pop_back();
}

void Writer::empty(std::string_view name, Attributes attributes) {
  start_tag(name, attributes);
  out_ += "/>\n";
}

void Writer::element(std::string_view name, Attributes attributes, std::string_view text) {
  start_tag(name, attributes);
  out_ += '>';
  append_escaped(out_, text);
  out_ += "</";
  out_ += name;
  out_ += ">\n";
}

std::string Writer::finish() {
  while (!open_.empty()) close();
  return std::move(out_);
}

}  // namespace tacet::svg
