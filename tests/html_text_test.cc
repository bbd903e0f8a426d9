// HtmlToText against the WHATWG HTML Living Standard: which elements are not
// rendered (Rendering §15.3.1 "Hidden elements"), which are block-level
// (Rendering §15.3.3-15.3.8 style sheet), how tag soup is repaired (Parsing
// §13.2), and how character references decode (§13.5 "Named character
// references" table; §13.2.5.80 "Numeric character reference end state" for
// numeric ones). Code points of named references are quoted from that table from
// memory. Also: total on junk input (random bytes, random tag soup, pathological
// nesting) with the output always valid UTF-8 in the documented line shape.
#include "index/html_text.h"

#include <gtest/gtest.h>

#include <random>
#include <string>
#include <vector>

#include "index/normalizer.h"

namespace shingleton {
namespace {

TEST(HtmlTextTest, ScriptStyleNoscriptTemplateAndHeadAreNotText) {
  // Rendering §15.3.1: head, title, script, style, template ... { display: none }.
  const std::string html =
      "<!DOCTYPE html><html><head><title>The title</title>"
      "<style>p { color: red }</style><script>var a = '<p>not text</p>';</script>"
      "<meta charset=utf-8></head><body>"
      "<p>visible</p><script type=module>alert(1)</script>"
      "<noscript>enable scripts</noscript><template><p>inert</p></template>"
      "<style>.x{}</style><p>also visible</p></body></html>";
  EXPECT_EQ(HtmlToText(html), "visible\nalso visible");
}

TEST(HtmlTextTest, TitleIsNotPartOfTheText) {
  EXPECT_EQ(HtmlToText("<title>Only a title</title>"), "");
  EXPECT_EQ(HtmlToText("<title>T</title><h1>Heading</h1>"), "Heading");
}

TEST(HtmlTextTest, HiddenAttributeAndCommentsAreNotText) {
  // HTML §6.1 "The hidden attribute"; Rendering §15.3.1: [hidden] { display: none }.
  EXPECT_EQ(HtmlToText("<p hidden>secret</p><p>shown<!-- a comment -->!</p>"), "shown!");
  EXPECT_EQ(HtmlToText("<div hidden><p>deep</p><p>hidden</p></div>after"), "after");
}

TEST(HtmlTextTest, BlockElementsBreakLines) {
  // Rendering §15.3.3 (div, p, blockquote, pre, ...), §15.3.6 (h1-h6, section,
  // article, header, footer), §15.3.7 (ul, ol, li, dl, dt, dd), §15.3.8 (table
  // rows); br is a line break (§15.5.x "The br element").
  EXPECT_EQ(HtmlToText("<p>One</p><p>Two</p><div>Three<br>Four</div>"), "One\nTwo\nThree\nFour");
  EXPECT_EQ(HtmlToText("<h1>Title</h1><section>s</section><article>a</article>"
                       "<header>h</header><footer>f</footer><blockquote>q</blockquote>"),
            "Title\ns\na\nh\nf\nq");
  EXPECT_EQ(HtmlToText("<ul><li>a</li><li>b</li></ul><ol><li>c</ol><dl><dt>t<dd>d</dl>"),
            "a\nb\nc\nt\nd");
  // (Text directly inside <form> is misplaced by gumbo 0.10.1, after the form
  // element, so the check puts it in a p.)
  EXPECT_EQ(HtmlToText("above<hr>below<form><p>in form</p></form>x"), "above\nbelow\nin form\nx");
  // Repeated breaks give one line break: there are no empty lines.
  EXPECT_EQ(HtmlToText("a<br><br><br><p></p><div></div>b"), "a\nb");
}

TEST(HtmlTextTest, InlineElementsDoNotBreak) {
  EXPECT_EQ(HtmlToText("<p>in<b>line</b> <i>text</i>, <a href=x>link</a><span>!</span></p>"),
            "inline text, link!");
}

TEST(HtmlTextTest, TableCellsAreSeparatedAndRowsBreak) {
  EXPECT_EQ(HtmlToText("<table><tr><td>a</td><td>b</td></tr><tr><th>c</th><td>d</td></tr>"
                       "</table>after"),
            "a b\nc d\nafter");
}

TEST(HtmlTextTest, WhitespaceCollapses) {
  // CSS white-space: normal; HTML's ASCII whitespace is TAB, LF, FF, CR, SPACE.
  EXPECT_EQ(HtmlToText("<p>  a \n\t b \f\r c  </p>\n\n  <p>\td </p>"), "a b c\nd");
  // U+00A0 (&nbsp;) is not ASCII whitespace and is kept.
  EXPECT_EQ(HtmlToText("<p>a&nbsp;&nbsp;b</p>"), "a\xC2\xA0\xC2\xA0" "b");
}

TEST(HtmlTextTest, PreKeepsLineBreaks) {
  // HTML §13.2.6.4.7: a newline right after <pre> is dropped by the parser.
  EXPECT_EQ(HtmlToText("<pre>\nline 1\nline  2\n</pre>after"), "line 1\nline 2\nafter");
}

TEST(HtmlTextTest, CharacterReferencesAreDecoded) {
  // §13.5 named character references: &amp; U+0026, &eacute; U+00E9, &lt; U+003C,
  // &gt; U+003E, &quot; U+0022, &copy; U+00A9, &mdash; U+2014, &hellip; U+2026.
  EXPECT_EQ(HtmlToText("<p>&amp; &eacute; &lt;tag&gt; &quot;q&quot; &copy; &mdash; &hellip;</p>"),
            "& \xC3\xA9 <tag> \"q\" \xC2\xA9 \xE2\x80\x94 \xE2\x80\xA6");
  // Numeric references by definition: &#8212; and &#x2014; are U+2014.
  EXPECT_EQ(HtmlToText("<p>&#8212;&#x2014;&#X2014;&#65;</p>"), "\xE2\x80\x94\xE2\x80\x94\xE2\x80\x94" "A");
  // §13.2.5.80: 0x80 maps to U+20AC by the table there; 0, surrogates and values
  // above U+10FFFF become U+FFFD.
  EXPECT_EQ(HtmlToText("<p>&#128;|&#0;|&#xD800;|&#x110000;</p>"),
            "\xE2\x82\xAC|\xEF\xBF\xBD|\xEF\xBF\xBD|\xEF\xBF\xBD");
  // Legacy references without ';' (e.g. "amp", "copy") are still recognised in text.
  EXPECT_EQ(HtmlToText("<p>fish &amp chips &copy 2024</p>"), "fish & chips \xC2\xA9 2024");
  // §13.2.5.73 example (from memory): "I'm &notit; I tell you" -> "I'm ¬it; I tell you".
  EXPECT_EQ(HtmlToText("<p>I'm &notit; I tell you</p>"), "I'm \xC2\xACit; I tell you");
  // Not a reference: left as typed.
  EXPECT_EQ(HtmlToText("<p>AT&T &nosuchthing; 5 &lt 6</p>"), "AT&T &nosuchthing; 5 < 6");
}

TEST(HtmlTextTest, TagSoupIsRepairedAsTheStandardSays) {
  // §13.2.6.4.7: a p start tag closes an open p; the adoption agency algorithm
  // repairs misnested formatting elements.
  EXPECT_EQ(HtmlToText("<p>one<p>two<li>three"), "one\ntwo\nthree");
  EXPECT_EQ(HtmlToText("<b>bold<i>both</b>italic</i> plain"), "boldbothitalic plain");
  EXPECT_EQ(HtmlToText("text before any tag<p>and a paragraph"), "text before any tag\nand a paragraph");
  EXPECT_EQ(HtmlToText("a < b and c > d"), "a < b and c > d");
}

TEST(HtmlTextTest, NonHtmlInput) {
  EXPECT_EQ(HtmlToText(""), "");
  EXPECT_EQ(HtmlToText("just some plain text\nover two lines"),
            "just some plain text over two lines");
  EXPECT_EQ(HtmlToText("{\"json\": [1, 2, 3]}"), "{\"json\": [1, 2, 3]}");
  // Invalid UTF-8 becomes U+FFFD (gumbo), so the result is valid UTF-8.
  const std::string text = HtmlToText("<p>caf\xE9 \xFF\xFE ok</p>");
  EXPECT_TRUE(ValidateUtf8(text).ok()) << text;
  EXPECT_NE(text.find("ok"), std::string::npos);
}

// SVG and MathML (WHATWG HTML §13.2.6.5, foreign content) are not part of the
// text; the inputs gumbo 0.10.1 aborts on (found by fuzzing) are handled.
TEST(HtmlTextTest, ForeignContentIsLeftOut) {
  EXPECT_EQ(HtmlToText("<p>before<svg viewBox='0 0 1 1'><text>chart label</text><path d=x/>"
                       "</svg>after</p>"),
            "beforeafter");
  EXPECT_EQ(HtmlToText("<p>x = <math><mi>y</mi><mo>+</mo><mn>1</mn></math>.</p><SVG/>end"),
            "x = .\nend");
  // An svg start tag without an end: the tag alone is dropped, the rest is HTML.
  EXPECT_EQ(HtmlToText("<div><svg><p>para</p></div>"), "para");
  // Outside foreign content "<![CDATA[>" is a bogus comment ending at the first
  // '>' (§13.2.5.42), so "]]>t" is text.
  EXPECT_EQ(HtmlToText("<table><svg><foreignObject><![CDATA[>]]>t"), "]]>t");
  EXPECT_EQ(HtmlToText("<table><caption><svg><select><desc><table><table>"), "");
  EXPECT_EQ(HtmlToText("<p title='<svg>'>attr</p><script>'<svg>'</script>ok"), "attr\nok");
}

// Output shape: valid UTF-8, no empty line, no space at either end of a line.
void ExpectWellShaped(const std::string& text, const std::string& what) {
  EXPECT_TRUE(ValidateUtf8(text).ok()) << what;
  EXPECT_EQ(text.find("\n\n"), std::string::npos) << what;
  EXPECT_EQ(text.find(" \n"), std::string::npos) << what;
  EXPECT_EQ(text.find("\n "), std::string::npos) << what;
  if (!text.empty()) {
    EXPECT_NE(text.front(), ' ') << what;
    EXPECT_NE(text.back(), ' ') << what;
    EXPECT_NE(text.front(), '\n') << what;
    EXPECT_NE(text.back(), '\n') << what;
  }
}

// Nesting far deeper than any page, which makes the tree builder quadratic: the
// documented flattening keeps the text and line breaks.
TEST(HtmlTextTest, PathologicalNestingKeepsTextAndFinishes) {
  std::string divs;
  for (int i = 0; i < 100000; ++i) divs += "<div>";
  EXPECT_EQ(HtmlToText(divs + "x"), "x");
  std::string lines;
  for (int i = 0; i < 600; ++i) lines += "<div>line" + std::to_string(i);
  std::string expected;
  for (int i = 0; i < 600; ++i) expected += (i ? "\n" : "") + ("line" + std::to_string(i));
  EXPECT_EQ(HtmlToText(lines), expected);
  // Hidden contents, comments and references behave as in the normal path.
  const std::string deep = lines + "<script>var s = '<p>no';</script><!-- c --><p>&amp; &eacute;" +
                           "<style>p{}</style><template><p>t</p></template><pre>a\nb</pre>";
  EXPECT_EQ(HtmlToText(deep), expected + "\n& \xC3\xA9\na\nb");
  std::string spans, formatting, lists;
  for (int i = 0; i < 50000; ++i) spans += "<span></div>";
  for (int i = 0; i < 20000; ++i) formatting += "<b><i><u><s>x</b>";
  for (int i = 0; i < 20000; ++i) lists += "<ul><li>";
  ExpectWellShaped(HtmlToText(spans + "end"), "spans");
  EXPECT_EQ(HtmlToText(spans + "end"), "end");
  const std::string f = HtmlToText(formatting);
  EXPECT_EQ(f, std::string(20000, 'x'));
  EXPECT_EQ(HtmlToText(lists + "item"), "item");
}

// Fuzz-style: random bytes and random tag soup never crash and always give
// well-shaped UTF-8. Seeds are fixed so failures reproduce.
TEST(HtmlTextTest, RandomInputNeverCrashes) {
  std::mt19937 rng(20240601);
  for (int iter = 0; iter < 1500; ++iter) {
    std::string junk(rng() % 3000, '\0');
    for (char& c : junk) c = static_cast<char>(rng() & 0xFF);
    ExpectWellShaped(HtmlToText(junk), "random bytes #" + std::to_string(iter));
  }
  const std::vector<std::string> pieces = {
      "<", ">", "</", "/>", "<!--", "-->", "<!", "<?", "&", "&#", "&#x", ";", "amp", "eacute",
      "123", "x", "p", "div", "table", "td", "tr", "li", "ul", "b", "i", "a", "script", "style",
      "template", "svg", "math", "pre", "textarea", "title", "select", "option", "frameset",
      "plaintext", "xmp", "noscript", "iframe", "head", "body", "html", " ", "\n", "\t", "=",
      "<svg>", "</svg>", "<math>", "<foreignObject>", "<desc>", "<mi>", "<![CDATA[", "]]>",
      "<table>", "<caption>", "<select>", "<td>", "<annotation-xml>", "<SVG ", "<math/>",
      "\"", "'", "hidden", "\xC3\xA9", "\xFF", std::string(1, '\0'), "\xE2\x80", "text", "<br>", "<hr>"};
  std::string deep;  // deeper than kMaxHtmlDepth: the flattening path
  for (size_t i = 0; i <= kMaxHtmlDepth; ++i) deep += "<div>";
  for (int iter = 0; iter < 1500; ++iter) {
    std::string soup;
    const int n = static_cast<int>(rng() % 400);
    for (int k = 0; k < n; ++k) soup += pieces[rng() % pieces.size()];
    ExpectWellShaped(HtmlToText(soup), "tag soup #" + std::to_string(iter));
    ExpectWellShaped(HtmlToText(deep + soup), "deep tag soup #" + std::to_string(iter));
  }
}

}  // namespace
}  // namespace shingleton
