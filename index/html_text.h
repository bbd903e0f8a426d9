// HTML to text: the visible text of an HTML document, as lines.
//
// The document is parsed with gumbo (an HTML5 parser following the WHATWG
// parsing algorithm, so tag soup is repaired the way browsers repair it and
// character references — &amp; &eacute; &#8212; — are decoded). Then:
//  - Not rendered, so left out (WHATWG HTML, Rendering §15.3.1 "Hidden elements"):
//    the contents of head (so title too: the title is NOT part of the text),
//    script, style, noscript, template, iframe, noembed, noframes, datalist,
//    rp, and of any element with a `hidden` attribute or a closed dialog.
//    Comments are left out. So are SVG and MathML (foreign content) with their
//    contents — chart labels and formulas are not page text here, and gumbo
//    0.10.1 aborts the process (assertion failure) on some foreign content in
//    tables; see html_text.cc. An svg/math tag without a match is dropped alone.
//  - Block-level elements (display: block, list-item, table, table-row, ... in
//    the Rendering section's style sheet: p, div, br, li, h1-h6, tr, table,
//    section, article, header, footer, nav, aside, main, blockquote, pre, ul,
//    ol, dl, dt, dd, hr, form, fieldset, figure, details, summary, option, ...)
//    start and end a line; td and th are separated by one space.
//  - Inside a line, runs of ASCII whitespace (TAB LF FF CR SP) collapse to one
//    space, as with CSS white-space: normal. Inside pre, textarea, listing,
//    plaintext and xmp a newline in the text starts a new line (other
//    whitespace still collapses). U+00A0 is kept.
//  - The result is the lines joined with '\n': no empty lines, no leading or
//    trailing whitespace on a line, no trailing newline. It is valid UTF-8
//    (gumbo replaces invalid input bytes with U+FFFD); the input should be UTF-8.
//
// Robustness: any byte string is accepted (binary junk gives some text or ""),
// the walk over the tree is iterative, and gumbo's error list is switched off
// (max_errors = 0: with it on, 20000 unclosed <div> cost gumbo 3 GB). Documents
// nested deeper than the HTML algorithm can handle in reasonable time (gumbo's
// tree construction is quadratic in the depth of the open-element stack: 100000
// unclosed <div> take minutes) are detected by a cheap pre-scan estimating the
// depth; above kMaxHtmlDepth they are first flattened (tags dropped, block tags
// turned into <br>, script/style/template contents removed) and the flat text is
// parsed instead, which keeps the text and line breaks but not hidden-attribute
// handling.
//
// Thread safety: reentrant; no shared state.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>

namespace shingleton {

// Open-element depth (as estimated by the pre-scan) above which a document is
// flattened before parsing. Real pages stay far below it.
constexpr size_t kMaxHtmlDepth = 512;

std::string HtmlToText(std::string_view html);

}  // namespace shingleton
