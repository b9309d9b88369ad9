#pragma once
// A small XML reader for the tests: checks the well-formedness rules a writer
// can break (XML 1.0, W3C Recommendation, 5th edition: one root element,
// matching start and end tags, quoted and unique attributes, no '<' or bare
// '&' in text or values, only the five predefined entities and character
// references, valid UTF-8) and gives back the element tree to query. It is a
// check, not a general parser: no DTD, no CDATA, no namespaces beyond names.

#include <cctype>
#include <cstddef>
#include <map>
#include <memory>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

namespace xml {

struct Element {
  std::string name;
  std::map<std::string, std::string> attributes;
  std::vector<std::unique_ptr<Element>> children;
  std::string text;  ///< all character data directly inside, entities decoded

  std::string attribute(const std::string& key) const {
    auto it = attributes.find(key);
    return it == attributes.end() ? std::string() : it->second;
  }
  bool has_class(const std::string& c) const {
    const std::string all = " " + attribute("class") + " ";
    return all.find(" " + c + " ") != std::string::npos;
  }
  /// Every element below (depth first, document order) for which `keep` is true.
  template <typename Keep>
  void collect(Keep keep, std::vector<const Element*>& out) const {
    for (const auto& c : children) {
      if (keep(*c)) out.push_back(c.get());
      c->collect(keep, out);
    }
  }
  template <typename Keep>
  std::vector<const Element*> all(Keep keep) const {
    std::vector<const Element*> out;
    collect(keep, out);
    return out;
  }
  std::vector<const Element*> with_class(const std::string& c) const {
    return all([&](const Element& e) { return e.has_class(c); });
  }
  std::vector<const Element*> named(const std::string& n) const {
    return all([&](const Element& e) { return e.name == n; });
  }
};

class Reader {
 public:
  explicit Reader(std::string_view text) : s_(text) {}

  std::unique_ptr<Element> document() {
    check_utf8();
    if (s_.substr(0, 5) == "<?xml") skip_past("?>");
    skip_misc();
    if (!at("<")) fail("no root element");
    auto root = element();
    skip_misc();
    if (i_ != s_.size()) fail("text after the root element");
    return root;
  }

 private:
  [[noreturn]] void fail(const std::string& what) const {
    throw std::runtime_error("not well-formed XML at byte " + std::to_string(i_) + ": " + what);
  }
  bool at(std::string_view t) const { return s_.substr(i_, t.size()) == t; }
  void skip_past(std::string_view t) {
    const auto k = s_.find(t, i_);
    if (k == std::string_view::npos) fail("unterminated markup");
    i_ = k + t.size();
  }
  void skip_space() {
    while (i_ < s_.size() && (s_[i_] == ' ' || s_[i_] == '\n' || s_[i_] == '\t' || s_[i_] == '\r')) ++i_;
  }
  void skip_misc() {
    for (;;) {
      skip_space();
      if (at("<!--")) skip_past("-->");
      else return;
    }
  }
  static bool name_char(char c) {
    return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == ':' || c == '.';
  }
  std::string name() {
    const std::size_t start = i_;
    if (i_ >= s_.size() || !(std::isalpha(static_cast<unsigned char>(s_[i_])) || s_[i_] == '_'))
      fail("a name must start with a letter");
    while (i_ < s_.size() && name_char(s_[i_])) ++i_;
    return std::string(s_.substr(start, i_ - start));
  }
  static void append_utf8(std::string& out, unsigned long c) {
    if (c < 0x80) {
      out += static_cast<char>(c);
    } else if (c < 0x800) {
      out += static_cast<char>(0xC0 | (c >> 6));
      out += static_cast<char>(0x80 | (c & 0x3F));
    } else if (c < 0x10000) {
      out += static_cast<char>(0xE0 | (c >> 12));
      out += static_cast<char>(0x80 | ((c >> 6) & 0x3F));
      out += static_cast<char>(0x80 | (c & 0x3F));
    } else {
      out += static_cast<char>(0xF0 | (c >> 18));
      out += static_cast<char>(0x80 | ((c >> 12) & 0x3F));
      out += static_cast<char>(0x80 | ((c >> 6) & 0x3F));
      out += static_cast<char>(0x80 | (c & 0x3F));
    }
  }
  void reference(std::string& out) {
    const auto end = s_.find(';', i_);
    if (end == std::string_view::npos || end - i_ > 10) fail("'&' that starts no reference");
    const std::string_view ref = s_.substr(i_ + 1, end - i_ - 1);
    if (ref == "amp") out += '&';
    else if (ref == "lt") out += '<';
    else if (ref == "gt") out += '>';
    else if (ref == "quot") out += '"';
    else if (ref == "apos") out += '\'';
    else if (ref.size() > 1 && ref[0] == '#')
      append_utf8(out, std::stoul(std::string(ref.substr(ref[1] == 'x' ? 2 : 1)), nullptr, ref[1] == 'x' ? 16 : 10));
    else fail("unknown entity '" + std::string(ref) + "'");
    i_ = end + 1;
  }
  void character(std::string& out) {
    const unsigned char c = static_cast<unsigned char>(s_[i_]);
    if (c < 0x20 && c != '\t' && c != '\n' && c != '\r') fail("a control character");
    out += s_[i_++];
  }
  std::string quoted() {
    if (i_ >= s_.size() || (s_[i_] != '"' && s_[i_] != '\'')) fail("an unquoted attribute value");
    const char quote = s_[i_++];
    std::string value;
    while (i_ < s_.size() && s_[i_] != quote) {
      if (s_[i_] == '<') fail("'<' in an attribute value");
      if (s_[i_] == '&') reference(value);
      else character(value);
    }
    if (i_ >= s_.size()) fail("unterminated attribute value");
    ++i_;
    return value;
  }
  std::unique_ptr<Element> element() {
    ++i_;  // '<'
    auto e = std::make_unique<Element>();
    e->name = name();
    for (;;) {
      const std::size_t before = i_;
      skip_space();
      if (at("/>")) {
        i_ += 2;
        return e;
      }
      if (at(">")) {
        ++i_;
        break;
      }
      if (i_ == before) fail("attributes must be separated by space");
      const std::string key = name();
      skip_space();
      if (!at("=")) fail("attribute '" + key + "' without a value");
      ++i_;
      skip_space();
      if (!e->attributes.emplace(key, quoted()).second) fail("attribute '" + key + "' twice");
    }
    content(*e);
    return e;
  }
  void content(Element& e) {
    for (;;) {
      if (i_ >= s_.size()) fail("element '" + e.name + "' is never closed");
      if (at("</")) {
        i_ += 2;
        if (name() != e.name) fail("end tag does not match '" + e.name + "'");
        skip_space();
        if (!at(">")) fail("malformed end tag");
        ++i_;
        return;
      }
      if (at("<!--")) skip_past("-->");
      else if (at("<")) e.children.push_back(element());
      else if (at("&")) reference(e.text);
      else character(e.text);
    }
  }
  void check_utf8() {
    for (std::size_t k = 0; k < s_.size();) {
      const unsigned char c = static_cast<unsigned char>(s_[k]);
      const std::size_t n = c < 0x80 ? 1 : (c >> 5) == 6 ? 2 : (c >> 4) == 14 ? 3 : (c >> 3) == 30 ? 4 : 0;
      if (n == 0 || k + n > s_.size()) {
        i_ = k;
        fail("invalid UTF-8");
      }
      for (std::size_t j = 1; j < n; ++j)
        if ((static_cast<unsigned char>(s_[k + j]) & 0xC0) != 0x80) {
          i_ = k;
          fail("invalid UTF-8");
        }
      k += n;
    }
  }

  std::string_view s_;
  std::size_t i_ = 0;
};

inline std::unique_ptr<Element> parse(std::string_view text) { return Reader(text).document(); }

}  // namespace xml
