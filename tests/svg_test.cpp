#include <catch2/catch.hpp>

#include "tacet/report/svg.hpp"
#include "xml_dom.hpp"

using namespace tacet;

TEST_CASE("escaping turns markup characters in a label into entity references", "[svg]") {
  CHECK(svg::escape("a<b & \"c\" 'd'>") == "a&lt;b &amp; &quot;c&quot; &apos;d&apos;&gt;");
}

TEST_CASE("escaping drops the control characters XML forbids and keeps tab and newline", "[svg]") {
  CHECK(svg::escape(std::string("a\x01" "b\x1f" "c\td\ne", 9)) == "abc\td\ne");
  CHECK(svg::escape(std::string("x\0y", 3)) == "xy");
}

TEST_CASE("escaping keeps valid UTF-8 and replaces every invalid byte with U+FFFD", "[svg]") {
  CHECK(svg::escape("1 \xC2\xB5V, 10 k\xCE\xA9") == "1 \xC2\xB5V, 10 k\xCE\xA9");
  const std::string fffd = "\xEF\xBF\xBD";
  CHECK(svg::escape("a\xC3") == "a" + fffd);                 // truncated sequence
  CHECK(svg::escape("\xC0\xAF") == fffd + fffd);             // overlong '/'
  CHECK(svg::escape("\xED\xA0\x80") == fffd + fffd + fffd);  // a UTF-16 surrogate
  CHECK(svg::escape("\xEF\xBF\xBE") == fffd);                // U+FFFE is no XML character
  CHECK(svg::escape("\xF0\x9F\x8E\xB5") == "\xF0\x9F\x8E\xB5");  // beyond the BMP is fine
}

TEST_CASE("coordinates have two decimals and are never nan or inf", "[svg]") {
  CHECK(svg::number(12.345678) == "12.35");
  CHECK(svg::number(-0.001) == "0.00");
  CHECK(svg::number(3) == "3.00");
  CHECK(svg::number(1e300) == "1000000.00");
  CHECK(svg::number(-INFINITY) == "-1000000.00");
  CHECK(svg::number(NAN) == "-1000000.00");
}

TEST_CASE("the writer's output is well-formed XML whatever the labels hold", "[svg]") {
  svg::Writer w;
  const std::string nasty = "R<1> & \"U2\" \x01 \xFF</svg>";
  w.open("svg", {{"xmlns", std::string(svg::kNamespace)}, {"aria-label", nasty}});
  w.open("g", {{"class", "legend"}});
  w.element("text", {{"x", "1"}}, nasty);
  w.empty("line", {{"x1", "0"}, {"x2", "1"}});
  const std::string text = std::string(svg::kXmlDeclaration) + w.finish();  // g and svg left open
  const auto root = xml::parse(text);
  CHECK(root->name == "svg");
  CHECK(root->attribute("aria-label") == "R<1> & \"U2\"  \xEF\xBF\xBD</svg>");
  const auto texts = root->named("text");
  REQUIRE(texts.size() == 1);
  CHECK(texts[0]->text == "R<1> & \"U2\"  \xEF\xBF\xBD</svg>");
  CHECK(root->named("line").size() == 1);
}

TEST_CASE("the test's XML reader rejects what is not well-formed", "[svg]") {
  CHECK_THROWS(xml::parse("<a><b></a></b>"));
  CHECK_THROWS(xml::parse("<a x=1/>"));
  CHECK_THROWS(xml::parse("<a>1 < 2</a>"));
  CHECK_THROWS(xml::parse("<a>fish & chips</a>"));
  CHECK_THROWS(xml::parse("<a x=\"1\" x=\"2\"/>"));
  CHECK_THROWS(xml::parse("<a/><b/>"));
  CHECK_THROWS(xml::parse("<a>\xFF</a>"));
  CHECK_NOTHROW(xml::parse("<?xml version=\"1.0\"?>\n<a x='1'>&amp;&#181;<!-- c --><b/></a>\n"));
}
