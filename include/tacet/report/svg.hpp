#pragma once
// The SVG primitives every picture is written with: escaping, coordinates and
// an element writer that keeps the document well-formed by construction.
//
// Our own writer, not a library: a picture is a few hundred elements of five
// kinds (svg, g, path, line/rect, text), so what a library would add is
// escaping and nesting, both a screenful here and tested (docs/dependencies.md).
// Output is SVG 1.1 (W3C Recommendation, 2011) with presentation attributes
// only, so it renders the same standalone, inline in HTML and in print.

#include <initializer_list>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace tacet::svg {

/// `text` made safe as XML character data and as a quoted attribute value
/// (XML 1.0, section 2.4 and 3.3.3): & < > " ' become entity references, the
/// control characters XML 1.0 forbids (all below U+0020 except tab, LF, CR)
/// are dropped, and a byte that is not part of valid UTF-8 becomes U+FFFD.
std::string escape(std::string_view text);

/// A length in user units with two decimals ("12.35", "-3.00"): a hundredth of
/// a pixel is below what any screen or printer shows and keeps files small.
/// Values beyond +-1e6 are clamped (far outside any view box; still valid).
std::string number(double value);
/// number(value) appended to `out` (for path data, built point by point).
void append_number(std::string& out, double value);

/// One attribute: name and its (unescaped) value. Views, not copies: the
/// strings they see (often temporaries in the call's braces) outlive the call.
using Attribute = std::pair<std::string_view, std::string_view>;
using Attributes = std::initializer_list<Attribute>;

/// Writes elements in order. Every `open` is matched by a `close` (or by
/// `finish`), names and values are escaped, so the text is well-formed XML
/// whatever the labels contain.
class Writer {
 public:
  /// <NAME a="v" ...>
  void open(std::string_view name, Attributes attributes = {});
  /// </NAME> of the innermost open element.
  void close();
  /// <NAME a="v" .../>
  void empty(std::string_view name, Attributes attributes = {});
  /// <NAME a="v" ...>TEXT</NAME>, TEXT escaped.
  void element(std::string_view name, Attributes attributes, std::string_view text);
  /// Closes what is still open and returns the document.
  std::string finish();

 private:
  void start_tag(std::string_view name, Attributes attributes);
  std::string out_;
  std::vector<std::string> open_;
};

/// The XML declaration that makes a standalone .svg file.
inline constexpr std::string_view kXmlDeclaration = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
/// The namespace of every SVG root element.
inline constexpr std::string_view kNamespace = "http://www.w3.org/2000/svg";

}  // namespace tacet::svg
