#include "index/html_text.h"

#include <gumbo.h>

#include <algorithm>
#include <cstring>
#include <unordered_map>
#include <vector>

namespace shingleton {
namespace {

bool IsHtmlSpace(char c) {
  // WHATWG Infra: ASCII whitespace is U+0009 TAB, U+000A LF, U+000C FF, U+000D CR, U+0020 SPACE.
  return c == ' ' || c == '\t' || c == '\n' || c == '\f' || c == '\r';
}

char AsciiLower(char c) { return (c >= 'A' && c <= 'Z') ? static_cast<char>(c + 32) : c; }
bool IsAsciiAlpha(char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z'); }

bool EqualsIgnoreCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (size_t i = 0; i < a.size(); ++i) {
    if (AsciiLower(a[i]) != AsciiLower(b[i])) return false;
  }
  return true;
}

// Membership in a constant set (lengths known at compile time, so most
// comparisons stop at the size).
template <size_t N>
bool InSet(std::string_view name, const std::string_view (&names)[N]) {
  for (std::string_view n : names) {
    if (n == name) return true;
  }
  return false;
}

bool OneOf(std::string_view name, std::initializer_list<std::string_view> names) {
  for (std::string_view n : names) {
    if (n == name) return true;
  }
  return false;
}

// Collects text into lines: collapses whitespace, turns breaks into '\n', never
// emits empty lines or leading/trailing whitespace.
class TextBuilder {
 public:
  void Text(std::string_view s, bool preformatted) {
    size_t i = 0;
    while (i < s.size()) {
      if (IsHtmlSpace(s[i])) {
        if (preformatted && s[i] == '\n') {
          newline_ = true;
        } else {
          space_ = true;
        }
        ++i;
        continue;
      }
      size_t j = i;
      while (j < s.size() && !IsHtmlSpace(s[j])) ++j;
      if (!out_.empty()) {
        if (newline_) {
          out_.push_back('\n');
        } else if (space_) {
          out_.push_back(' ');
        }
      }
      newline_ = space_ = false;
      out_.append(s.data() + i, j - i);
      i = j;
    }
  }
  void Break() { newline_ = true; }
  void Space() { space_ = true; }
  std::string Take() { return std::move(out_); }

 private:
  std::string out_;
  bool space_ = false;
  bool newline_ = false;
};

// The tag name of an element gumbo does not know (GUMBO_TAG_UNKNOWN), lowercased.
std::string UnknownTagName(const GumboElement& el) {
  GumboStringPiece piece = el.original_tag;
  if (!piece.data || piece.length < 2 || piece.data[0] != '<') return "";
  gumbo_tag_from_original_text(&piece);
  std::string name(piece.data, piece.length);
  for (char& c : name) c = AsciiLower(c);
  return name;
}

// WHATWG HTML, Rendering §15.3.1 (hidden elements: display: none), plus noscript
// (hidden when scripting is enabled), iframe (its contents are fallback text that
// is never rendered) and elements with the `hidden` attribute.
bool IsHidden(const GumboNode* node) {
  if (node->type == GUMBO_NODE_TEMPLATE) return true;
  const GumboElement& el = node->v.element;
  switch (el.tag) {
    case GUMBO_TAG_HEAD:
    case GUMBO_TAG_TITLE:
    case GUMBO_TAG_SCRIPT:
    case GUMBO_TAG_STYLE:
    case GUMBO_TAG_NOSCRIPT:
    case GUMBO_TAG_TEMPLATE:
    case GUMBO_TAG_AREA:
    case GUMBO_TAG_BASE:
    case GUMBO_TAG_BASEFONT:
    case GUMBO_TAG_DATALIST:
    case GUMBO_TAG_LINK:
    case GUMBO_TAG_META:
    case GUMBO_TAG_NOEMBED:
    case GUMBO_TAG_NOFRAMES:
    case GUMBO_TAG_PARAM:
    case GUMBO_TAG_RP:
    case GUMBO_TAG_IFRAME:
      return true;
    case GUMBO_TAG_UNKNOWN:
      // dialog:not([open]) { display: none; } (gumbo 0.10 predates <dialog>).
      if (UnknownTagName(el) == "dialog" && !gumbo_get_attribute(&el.attributes, "open")) {
        return true;
      }
      break;
    default:
      break;
  }
  return gumbo_get_attribute(&el.attributes, "hidden") != nullptr;
}

enum class Layout { kInline, kBlock, kCell, kBreak };

// WHATWG HTML, Rendering §15.3.3-15.3.8 and §15.5: elements whose display is
// block, list-item, table, table-row(-group), table-caption or similar.
Layout LayoutOf(const GumboElement& el) {
  switch (el.tag) {
    case GUMBO_TAG_BR:
    case GUMBO_TAG_HR:
      return Layout::kBreak;
    case GUMBO_TAG_TD:
    case GUMBO_TAG_TH:
      return Layout::kCell;
    case GUMBO_TAG_HTML:
    case GUMBO_TAG_BODY:
    case GUMBO_TAG_ADDRESS:
    case GUMBO_TAG_ARTICLE:
    case GUMBO_TAG_ASIDE:
    case GUMBO_TAG_BLOCKQUOTE:
    case GUMBO_TAG_CAPTION:
    case GUMBO_TAG_CENTER:
    case GUMBO_TAG_DD:
    case GUMBO_TAG_DETAILS:
    case GUMBO_TAG_DIR:
    case GUMBO_TAG_DIV:
    case GUMBO_TAG_DL:
    case GUMBO_TAG_DT:
    case GUMBO_TAG_FIELDSET:
    case GUMBO_TAG_FIGCAPTION:
    case GUMBO_TAG_FIGURE:
    case GUMBO_TAG_FOOTER:
    case GUMBO_TAG_FORM:
    case GUMBO_TAG_FRAMESET:
    case GUMBO_TAG_FRAME:
    case GUMBO_TAG_H1:
    case GUMBO_TAG_H2:
    case GUMBO_TAG_H3:
    case GUMBO_TAG_H4:
    case GUMBO_TAG_H5:
    case GUMBO_TAG_H6:
    case GUMBO_TAG_HEADER:
    case GUMBO_TAG_HGROUP:
    case GUMBO_TAG_LEGEND:
    case GUMBO_TAG_LI:
    case GUMBO_TAG_LISTING:
    case GUMBO_TAG_MAIN:
    case GUMBO_TAG_MENU:
    case GUMBO_TAG_NAV:
    case GUMBO_TAG_OL:
    case GUMBO_TAG_OPTGROUP:
    case GUMBO_TAG_OPTION:
    case GUMBO_TAG_P:
    case GUMBO_TAG_PLAINTEXT:
    case GUMBO_TAG_PRE:
    case GUMBO_TAG_SECTION:
    case GUMBO_TAG_SUMMARY:
    case GUMBO_TAG_TABLE:
    case GUMBO_TAG_TBODY:
    case GUMBO_TAG_TFOOT:
    case GUMBO_TAG_THEAD:
    case GUMBO_TAG_TR:
    case GUMBO_TAG_UL:
    case GUMBO_TAG_XMP:
    case GUMBO_TAG_TEXTAREA:
    case GUMBO_TAG_SELECT:
      return Layout::kBlock;
    case GUMBO_TAG_UNKNOWN: {
      const std::string name = UnknownTagName(el);
      if (name == "dialog" || name == "search") return Layout::kBlock;
      return Layout::kInline;
    }
    default:
      return Layout::kInline;
  }
}

bool IsPreformatted(GumboTag tag) {
  return tag == GUMBO_TAG_PRE || tag == GUMBO_TAG_TEXTAREA || tag == GUMBO_TAG_LISTING ||
         tag == GUMBO_TAG_PLAINTEXT || tag == GUMBO_TAG_XMP;
}

const GumboVector* ChildrenOf(const GumboNode* node) {
  switch (node->type) {
    case GUMBO_NODE_DOCUMENT: return &node->v.document.children;
    case GUMBO_NODE_ELEMENT:
    case GUMBO_NODE_TEMPLATE: return &node->v.element.children;
    default: return nullptr;
  }
}

// Walks the tree without recursion.
std::string TreeText(const GumboNode* root) {
  TextBuilder text;
  struct Frame {
    const GumboNode* node;
    unsigned next;
  };
  std::vector<Frame> stack;
  stack.push_back({root, 0});
  int preformatted = 0;
  while (!stack.empty()) {
    Frame& top = stack.back();
    const GumboVector* children = ChildrenOf(top.node);
    if (children && top.next < children->length) {
      const GumboNode* child = static_cast<const GumboNode*>(children->data[top.next++]);
      switch (child->type) {
        case GUMBO_NODE_TEXT:
        case GUMBO_NODE_CDATA:
        case GUMBO_NODE_WHITESPACE:
          text.Text(child->v.text.text ? std::string_view(child->v.text.text) : std::string_view(),
                    preformatted > 0);
          break;
        case GUMBO_NODE_ELEMENT:
        case GUMBO_NODE_TEMPLATE: {
          if (IsHidden(child)) break;
          const GumboElement& el = child->v.element;
          switch (LayoutOf(el)) {
            case Layout::kBreak: text.Break(); break;
            case Layout::kBlock: text.Break(); break;
            case Layout::kCell: text.Space(); break;
            case Layout::kInline: break;
          }
          if (IsPreformatted(el.tag)) ++preformatted;
          stack.push_back({child, 0});  // invalidates `top`
          break;
        }
        default:  // comments, documents
          break;
      }
      continue;
    }
    if (top.node->type == GUMBO_NODE_ELEMENT || top.node->type == GUMBO_NODE_TEMPLATE) {
      const GumboElement& el = top.node->v.element;
      switch (LayoutOf(el)) {
        case Layout::kBreak:
        case Layout::kBlock: text.Break(); break;
        case Layout::kCell: text.Space(); break;
        case Layout::kInline: break;
      }
      if (IsPreformatted(el.tag)) --preformatted;
    }
    stack.pop_back();
  }
  return text.Take();
}

// ---------------------------------------------------------------------------
// A light tokenizer after the WHATWG tokenization states (data, tag open, end
// tag open, comments, RCDATA/RAWTEXT/PLAINTEXT elements), approximate but total:
// it only decides whether a document is too deep for the tree builder, and
// flattens such documents.

struct TagToken {
  std::string name;  // lowercased
  bool end = false;
  bool self_closing = false;
  size_t begin = 0;  // the tag's bytes in the input: [begin, end_offset)
  size_t end_offset = 0;
};

// WHATWG HTML §13.1.2: void elements (and the obsolete ones the parser treats alike).
constexpr std::string_view kIsVoidNames[] = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta",
                   "source", "track", "wbr", "basefont", "bgsound", "frame", "keygen", "param",
                   "image", "isindex", "menuitem"};
bool IsVoid(std::string_view n) { return InSet(n, kIsVoidNames); }

// Elements whose contents the tokenizer reads as text up to their end tag
// (WHATWG HTML §13.2.5: RCDATA, RAWTEXT and script data states).
constexpr std::string_view kIsRawTextNames[] = {"script", "style", "textarea", "title", "xmp", "iframe", "noembed",
                   "noframes", "noscript"};
bool IsRawText(std::string_view n) { return InSet(n, kIsRawTextNames); }

// Calls on_text(view) for text (with a lone '<' passed as "<") and
// on_tag(TagToken, raw_text_contents) for tags; for raw-text elements the second
// argument is their contents (up to the matching end tag).
template <typename OnText, typename OnTag>
void Tokenize(std::string_view h, OnText on_text, OnTag on_tag) {
  const size_t n = h.size();
  size_t i = 0;
  TagToken tag;
  while (i < n) {
    size_t lt = h.find('<', i);
    if (lt == std::string_view::npos) lt = n;
    if (lt > i && !on_text(h.substr(i, lt - i))) return;
    if (lt >= n) return;
    const size_t j = lt + 1;
    if (j < n && h[j] == '!') {
      if (h.compare(j, 3, "!--") == 0) {  // comment, up to "-->" (or the end)
        const size_t e = h.find("-->", lt + 2);
        i = e == std::string_view::npos ? n : e + 3;
      } else {  // doctype, CDATA, bogus comment: up to '>'
        const size_t e = h.find('>', j);
        i = e == std::string_view::npos ? n : e + 1;
      }
      continue;
    }
    if (j < n && h[j] == '?') {  // bogus comment
      const size_t e = h.find('>', j);
      i = e == std::string_view::npos ? n : e + 1;
      continue;
    }
    const bool end = j < n && h[j] == '/';
    const size_t name_at = end ? j + 1 : j;
    if (name_at >= n || !IsAsciiAlpha(h[name_at])) {
      if (end && name_at < n && h[name_at] == '>') {  // "</>" is dropped
        i = name_at + 1;
        continue;
      }
      if (!on_text("<")) return;
      i = j;
      continue;
    }
    size_t k = name_at;
    while (k < n && !IsHtmlSpace(h[k]) && h[k] != '/' && h[k] != '>') ++k;
    tag.name.assign(h.data() + name_at, k - name_at);
    for (char& c : tag.name) c = AsciiLower(c);
    tag.end = end;
    // Attributes: up to '>' outside a quoted value.
    while (k < n && h[k] != '>') {
      if (h[k] == '=') {
        ++k;
        while (k < n && IsHtmlSpace(h[k])) ++k;
        if (k < n && (h[k] == '"' || h[k] == '\'')) {
          const size_t q = h.find(h[k], k + 1);
          k = q == std::string_view::npos ? n : q + 1;
          continue;
        }
        continue;
      }
      ++k;
    }
    if (k >= n) return;  // EOF in a tag: the tag is dropped
    tag.self_closing = k > name_at && h[k - 1] == '/';
    i = k + 1;
    tag.begin = lt;
    tag.end_offset = i;
    std::string_view contents;
    if (!end && IsRawText(tag.name)) {
      // Contents end at "</name" followed by whitespace, '/' or '>'.
      size_t e = i;
      for (;;) {
        e = h.find("</", e);
        if (e == std::string_view::npos) {
          e = n;
          break;
        }
        const size_t after = e + 2 + tag.name.size();
        if (after <= n && EqualsIgnoreCase(h.substr(e + 2, tag.name.size()), tag.name) &&
            (after == n || IsHtmlSpace(h[after]) || h[after] == '/' || h[after] == '>')) {
          break;
        }
        e += 2;
      }
      contents = h.substr(i, e - i);
      i = e;
    } else if (!end && tag.name == "plaintext") {
      contents = h.substr(i);
      i = n;
    }
    if (!on_tag(tag, contents)) return;
  }
}

// WHATWG HTML §13.2.4.2: the element types that bound "has an element in scope".
constexpr std::string_view kIsScopeMarkerNames[] = {"applet", "caption", "html", "table", "td", "th", "marquee", "object",
                   "template"};
bool IsScopeMarker(std::string_view n) { return InSet(n, kIsScopeMarkerNames); }

// §13.2.4.3: the formatting elements (kept in the list of active formatting
// elements and reconstructed after being closed implicitly).
constexpr std::string_view kIsFormattingNames[] = {"a", "b", "big", "code", "em", "font", "i", "nobr", "s", "small", "strike",
                   "strong", "tt", "u"};
bool IsFormatting(std::string_view n) { return InSet(n, kIsFormattingNames); }

// §13.2.4.2: the "special" category (HTML namespace part).
constexpr std::string_view kIsSpecialNames[] = {"address", "applet", "area", "article", "aside", "base", "basefont",
                   "bgsound", "blockquote", "body", "br", "button", "caption", "center", "col",
                   "colgroup", "dd", "details", "dir", "div", "dl", "dt", "embed", "fieldset",
                   "figcaption", "figure", "footer", "form", "frame", "frameset", "h1", "h2",
                   "h3", "h4", "h5", "h6", "head", "header", "hgroup", "hr", "html", "iframe",
                   "img", "input", "keygen", "li", "link", "listing", "main", "marquee", "menu",
                   "meta", "nav", "noembed", "noframes", "noscript", "object", "ol", "p",
                   "param", "plaintext", "pre", "script", "search", "section", "select",
                   "source", "style", "summary", "table", "tbody", "td", "template",
                   "textarea", "tfoot", "th", "thead", "title", "tr", "track", "ul", "wbr",
                   "xmp"};
bool IsSpecial(std::string_view n) { return InSet(n, kIsSpecialNames); }

// §13.2.6.4.7 ("in body"): start tags that close an open p element (in button
// scope) and are inserted without reconstructing the active formatting elements.
constexpr std::string_view kClosesPNames[] = {"address", "article", "aside", "blockquote", "center", "details", "dialog",
                   "dir", "div", "dl", "fieldset", "figcaption", "figure", "footer", "header",
                   "hgroup", "main", "menu", "nav", "ol", "p", "search", "section", "summary",
                   "ul", "h1", "h2", "h3", "h4", "h5", "h6", "pre", "listing", "form", "li",
                   "dd", "dt", "plaintext", "table", "hr", "xmp"};
bool ClosesP(std::string_view n) { return InSet(n, kClosesPNames); }

constexpr std::string_view kTablePartNames[] = {"caption", "col",   "colgroup", "tbody", "td",
                                                "tfoot",   "th",    "thead",    "tr"};
bool IsTablePart(std::string_view n) { return InSet(n, kTablePartNames); }

// A model of the tree builder's stack of open elements, good enough to bound its
// depth: implied end tags of p/li/dd/dt/td/th/tr/option, end tags popping to
// their match in scope, and formatting elements closed implicitly coming back
// (reconstruction, at most three alike as by the Noah's Ark clause) with the
// next text or phrasing start tag.
class DepthModel {
 public:
  explicit DepthModel(size_t limit) : limit_(limit) {}

  // Each returns false once the depth has gone above the limit.
  bool Text(std::string_view s) {
    for (char c : s) {
      if (!IsHtmlSpace(c)) return Reconstruct();
    }
    return true;
  }

  bool Tag(const TagToken& tag) {
    const std::string_view n = tag.name;
    if (n == "html" || n == "head" || n == "body") return true;
    if (tag.end) {
      EndTag(n);
      return true;
    }
    if (IsRawText(n)) return true;  // pushed and popped with its contents
    if (tables_ == 0 && IsTablePart(n)) {
      return true;  // "in body": table parts outside a table are ignored
    }
    if (IsVoid(n)) return ClosesP(n) ? true : Reconstruct();
    ImpliedEnds(n);
    if (!ClosesP(n) && !Reconstruct()) return false;
    if (n == "a" || n == "nobr") {  // an open a / nobr is closed first (adoption agency)
      const size_t d = Find(n, /*stop_at_special=*/false);
      if (d != kNone) PopTo(d);
      RemovePending(n);
    }
    return Push(n);
  }

 private:
  static constexpr size_t kNone = static_cast<size_t>(-1);

  // The index of the topmost `n` in scope, or kNone.
  // How many elements named `n` are open (lets most searches stop at once).
  int Count(std::string_view n) const {
    const auto it = counts_.find(std::string(n));
    return it == counts_.end() ? 0 : it->second;
  }

  size_t Find(std::string_view n, bool stop_at_special) const {
    if (Count(n) == 0) return kNone;
    for (size_t d = stack_.size(); d-- > 0;) {
      if (stack_[d] == n) return d;
      if (IsScopeMarker(stack_[d])) return kNone;
      if (stop_at_special && IsSpecial(stack_[d]) && stack_[d] != "address" &&
          stack_[d] != "div" && stack_[d] != "p") {
        return kNone;
      }
    }
    return kNone;
  }

  size_t FindAny(std::initializer_list<std::string_view> names,
                 std::initializer_list<std::string_view> stops) const {
    int open = 0;
    for (std::string_view n : names) open += Count(n);
    if (open == 0) return kNone;
    for (size_t d = stack_.size(); d-- > 0;) {
      if (OneOf(stack_[d], names)) return d;
      if (OneOf(stack_[d], stops)) return kNone;
    }
    return kNone;
  }

  void ImpliedEnds(std::string_view n) {
    size_t d = kNone;
    if (ClosesP(n)) {
      // "close a p element" if one is in button scope.
      d = FindAny({"p"}, {"applet", "caption", "html", "table", "td", "th", "marquee",
                          "object", "template", "button"});
      if (d != kNone) PopTo(d);
    }
    if (n == "li") {
      d = Find("li", true);
    } else if (n == "dd" || n == "dt") {
      d = FindAny({"dd", "dt"}, {"applet", "caption", "html", "table", "td", "th", "marquee",
                                 "object", "template", "ol", "ul", "dl", "li", "blockquote",
                                 "section", "article", "aside", "nav", "header", "footer"});
    } else if (n == "td" || n == "th") {
      d = FindAny({"td", "th"}, {"html", "table", "template", "tr"});
    } else if (n == "tr") {
      d = FindAny({"tr"}, {"html", "table", "template"});
    } else if (n == "thead" || n == "tbody" || n == "tfoot") {
      d = FindAny({"thead", "tbody", "tfoot"}, {"html", "table", "template"});
    } else if (n == "option" || n == "optgroup") {
      if (!stack_.empty() && stack_.back() == "option") d = stack_.size() - 1;
      if (n == "optgroup" && d == kNone && !stack_.empty() && stack_.back() == "optgroup") {
        d = stack_.size() - 1;
      }
    }
    if (d != kNone) PopTo(d);
  }

  void EndTag(std::string_view n) {
    // Table parts close in table scope (through open cells), others in scope.
    const size_t d = OneOf(n, {"table", "tbody", "thead", "tfoot", "tr", "td", "th", "caption"})
                         ? FindAny({n}, {"html", "table", "template"})
                         : Find(n, false);
    if (d != kNone) {
      PopTo(d);
    } else if (IsFormatting(n)) {
      RemovePending(n);
    }
    if (IsFormatting(n)) RemovePending(n);
  }

  // Removes stack_[d..]; formatting elements above d stay active (pending
  // reconstruction) unless a scope marker above them is popped too.
  void PopTo(size_t d) {
    std::vector<std::string> kept;
    for (size_t k = stack_.size(); k-- > d;) {
      const std::string& name = stack_[k];
      if (name == "table") --tables_;
      --counts_[name];
      if (IsScopeMarker(name)) {
        kept.clear();      // the list is cleared up to the marker
        pending_.clear();
      } else if (k > d && IsFormatting(name)) {
        kept.push_back(name);
      }
    }
    stack_.resize(d);
    for (size_t k = kept.size(); k-- > 0;) AddPending(kept[k]);
  }

  void AddPending(std::string_view n) {
    int same = 0;
    for (const auto& p : pending_) same += p == n;
    if (same < 3) pending_.emplace_back(n);
  }

  void RemovePending(std::string_view n) {
    for (size_t k = pending_.size(); k-- > 0;) {
      if (pending_[k] == n) {
        pending_.erase(pending_.begin() + static_cast<std::ptrdiff_t>(k));
        return;
      }
    }
  }

  bool Reconstruct() {
    std::vector<std::string> p;
    p.swap(pending_);
    for (const auto& n : p) {
      if (!Push(n)) return false;
    }
    return true;
  }

  bool Push(std::string_view n) {
    stack_.emplace_back(n);
    ++counts_[stack_.back()];
    if (n == "table") ++tables_;
    return stack_.size() <= limit_;
  }

  size_t limit_;
  std::vector<std::string> stack_;
  std::vector<std::string> pending_;
  std::unordered_map<std::string, int> counts_;  // open elements by name
  int tables_ = 0;  // table elements open
};

// Whether the tree builder's stack of open elements would grow beyond `limit`.
bool TooDeep(std::string_view html, size_t limit) {
  DepthModel model(limit);
  bool too_deep = false;
  Tokenize(
      html,
      [&](std::string_view s) {
        too_deep = !model.Text(s);
        return !too_deep;
      },
      [&](const TagToken& tag, std::string_view) {
        too_deep = !model.Tag(tag);
        return !too_deep;
      });
  return too_deep;
}

constexpr std::string_view kFlatBlockNames[] = {"address", "article", "aside", "blockquote", "br", "caption", "center", "dd",
                   "details", "dialog", "dir", "div", "dl", "dt", "fieldset", "figcaption",
                   "figure", "footer", "form", "frameset", "frame", "h1", "h2", "h3", "h4", "h5",
                   "h6", "header", "hgroup", "hr", "legend", "li", "listing", "main", "menu",
                   "nav", "ol", "optgroup", "option", "p", "plaintext", "pre", "search",
                   "section", "select", "summary", "table", "tbody", "textarea", "tfoot",
                   "thead", "tr", "ul", "xmp"};
bool FlatBlock(std::string_view n) { return InSet(n, kFlatBlockNames); }

// The document without its structure: text (character references still
// encoded), "<br>" for block boundaries, " " between table cells.
std::string Flatten(std::string_view html) {
  std::string out;
  out.reserve(html.size());
  int skip = 0;  // template elements open
  int pre = 0;   // pre and listing elements open: newlines are line breaks
  // Consecutive breaks make one line break anyway; emit one.
  auto add_break = [&out] {
    if (out.size() < 4 || out.compare(out.size() - 4, 4, "<br>") != 0) out += "<br>";
  };
  auto append_escaped = [&out, &add_break](std::string_view s) {
    for (char c : s) {
      if (c == '<') {
        out += "&lt;";
      } else if (c == '&') {
        out += "&amp;";
      } else if (c == '\n') {
        add_break();
      } else {
        out.push_back(c);
      }
    }
  };
  Tokenize(
      html,
      [&](std::string_view s) {
        if (skip > 0) return true;
        if (s == "<") {
          out += "&lt;";
        } else if (pre > 0) {
          for (char c : s) {
            if (c == '\n') {
              add_break();
            } else {
              out.push_back(c);
            }
          }
        } else {
          out.append(s.data(), s.size());
        }
        return true;
      },
      [&](const TagToken& tag, std::string_view contents) {
        const std::string_view name = tag.name;
        if (name == "template") {
          skip += tag.end ? (skip > 0 ? -1 : 0) : 1;
          return true;
        }
        if (skip > 0) return true;
        if (name == "pre" || name == "listing") {
          pre += tag.end ? (pre > 0 ? -1 : 0) : 1;
        }
        if (name == "td" || name == "th") {
          out.push_back(' ');
        } else if (FlatBlock(name)) {
          add_break();
        }
        if (!tag.end) {
          if (name == "textarea") {  // RCDATA: references are decoded
            for (char c : contents) {
              if (c == '<') {
                out += "&lt;";
              } else if (c == '\n') {
                add_break();
              } else {
                out.push_back(c);
              }
            }
          } else if (name == "xmp" || name == "plaintext") {  // RAWTEXT: literal
            append_escaped(contents);
          }
        }
        return true;
      });
  return out;
}

// ---------------------------------------------------------------------------
// Foreign content. gumbo 0.10.1 (Debian 12, built with assertions) aborts the
// process on some inputs with svg or math inside tables, e.g.
//   <table><svg><foreignObject><![CDATA[>]]>t
//   <table><caption><svg><select><desc><table><table>
// (found by fuzzing; without svg/math no abort was found). So gumbo never sees
// foreign content: svg and math elements are cut out with their contents, and
// any "<svg"/"<math" tag left over (unmatched, or where this tokenizer and
// gumbo's disagree) is renamed to an unknown element, x-svg / x-math. The HTML
// parser enters foreign content only at an svg or math start tag (WHATWG HTML
// §13.2.6.4.7), and its tokenizer only makes one from those literal bytes.

// True at h[i] == '<' starting "<svg", "</svg", "<math" or "</math" followed by a
// tag-name terminator (§13.2.5.8: whitespace, '/', '>'; CR becomes LF).
bool IsForeignTagAt(std::string_view h, size_t i, size_t* name_at) {
  size_t j = i + 1;
  if (j < h.size() && h[j] == '/') ++j;
  for (std::string_view name : {std::string_view("svg"), std::string_view("math")}) {
    const size_t after = j + name.size();
    if (after < h.size() && EqualsIgnoreCase(h.substr(j, name.size()), name) &&
        (IsHtmlSpace(h[after]) || h[after] == '/' || h[after] == '>')) {
      *name_at = j;
      return true;
    }
  }
  return false;
}

bool MayHaveForeignContent(std::string_view h) {
  size_t name_at;
  for (size_t i = h.find('<'); i != std::string_view::npos; i = h.find('<', i + 1)) {
    if (IsForeignTagAt(h, i, &name_at)) return true;
  }
  return false;
}

std::string WithoutForeignContent(std::string_view h) {
  struct Range {
    size_t begin, end;
  };
  struct Open {
    std::string name;
    Range tag;
  };
  std::vector<Range> cut;
  std::vector<Open> open;
  Tokenize(
      h, [](std::string_view) { return true; },
      [&](const TagToken& tag, std::string_view) {
        const std::string_view name = tag.name;
        if (name != "svg" && name != "math") return true;
        const Range r{tag.begin, tag.end_offset};
        if (!tag.end) {
          if (tag.self_closing) {
            cut.push_back(r);
          } else {
            open.push_back({std::string(name), r});
          }
          return true;
        }
        for (size_t k = open.size(); k-- > 0;) {
          if (open[k].name == name) {
            cut.push_back({open[k].tag.begin, r.end});  // the element with its contents
            open.resize(k);
            return true;
          }
        }
        cut.push_back(r);  // an unmatched end tag
        return true;
      });
  for (const Open& o : open) cut.push_back(o.tag);  // unmatched start tags
  std::sort(cut.begin(), cut.end(), [](const Range& a, const Range& b) { return a.begin < b.begin; });
  std::string out;
  out.reserve(h.size());
  size_t pos = 0;
  for (const Range& r : cut) {
    if (r.end <= pos) continue;  // inside a range already cut
    if (r.begin > pos) out.append(h.data() + pos, r.begin - pos);
    pos = std::max(pos, r.end);
  }
  out.append(h.data() + pos, h.size() - pos);
  // Whatever still reads as an svg/math tag is renamed.
  std::string safe;
  safe.reserve(out.size());
  size_t copied = 0, name_at = 0;
  for (size_t i = out.find('<'); i != std::string::npos; i = out.find('<', i + 1)) {
    if (!IsForeignTagAt(out, i, &name_at)) continue;
    safe.append(out, copied, name_at - copied);
    safe += "x-";
    copied = name_at;
  }
  if (copied == 0) return out;
  safe.append(out, copied, std::string::npos);
  return safe;
}

std::string ParseAndWalk(std::string_view html) {
  GumboOptions options = kGumboDefaultOptions;
  options.max_errors = 0;  // see the header: the error list can cost gigabytes
  GumboOutput* output = gumbo_parse_with_options(&options, html.data(), html.size());
  if (!output) return "";
  std::string text = TreeText(output->document);
  gumbo_destroy_output(&options, output);
  return text;
}

}  // namespace

std::string HtmlToText(std::string_view html) {
  std::string without_foreign;
  if (MayHaveForeignContent(html)) {
    without_foreign = WithoutForeignContent(html);
    html = without_foreign;
  }
  if (TooDeep(html, kMaxHtmlDepth)) return ParseAndWalk(Flatten(html));
  return ParseAndWalk(html);
}

}  // namespace shingleton
