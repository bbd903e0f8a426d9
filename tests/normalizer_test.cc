// The normaliser against the Unicode Character Database as shipped by Debian's
// unicode-data package (/usr/share/unicode): NormalizationTest.txt (UAX #15
// conformance), DerivedNormalizationProps.txt (NFKC_Casefold), CaseFolding.txt,
// UnicodeData.txt (general categories, decompositions), DerivedAge.txt; and
// ValidateUtf8 against the Unicode Standard, ch. 3, Table 3-7.
#include "index/normalizer.h"

#include <gtest/gtest.h>
#include <utf8proc.h>

#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <unordered_set>
#include <vector>

namespace shingleton {
namespace {

constexpr char kUcdDir[] = "/usr/share/unicode";
constexpr uint32_t kMaxCodePoint = 0x10FFFF;

bool IsSurrogate(uint32_t cp) { return cp >= 0xD800 && cp <= 0xDFFF; }

// UTF-8 encoding by definition (Unicode Standard ch. 3, Table 3-6).
std::string EncodeUtf8(uint32_t cp) {
  std::string out;
  if (cp < 0x80) {
    out.push_back(static_cast<char>(cp));
  } else if (cp < 0x800) {
    out.push_back(static_cast<char>(0xC0 | (cp >> 6)));
    out.push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else if (cp < 0x10000) {
    out.push_back(static_cast<char>(0xE0 | (cp >> 12)));
    out.push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out.push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else {
    out.push_back(static_cast<char>(0xF0 | (cp >> 18)));
    out.push_back(static_cast<char>(0x80 | ((cp >> 12) & 0x3F)));
    out.push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out.push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  }
  return out;
}

std::string EncodeUtf8(const std::vector<uint32_t>& cps) {
  std::string out;
  for (uint32_t cp : cps) out += EncodeUtf8(cp);
  return out;
}

// "0044 0307" -> {0x44, 0x307}.
std::vector<uint32_t> ParseHexList(const std::string& field) {
  std::vector<uint32_t> out;
  std::istringstream in(field);
  std::string word;
  while (in >> word) out.push_back(static_cast<uint32_t>(std::stoul(word, nullptr, 16)));
  return out;
}

std::string Trim(const std::string& s) {
  const size_t b = s.find_first_not_of(" \t");
  if (b == std::string::npos) return "";
  const size_t e = s.find_last_not_of(" \t\r\n");
  return s.substr(b, e - b + 1);
}

std::vector<std::string> SplitFields(const std::string& line) {
  std::vector<std::string> fields;
  std::string field;
  std::istringstream in(line);
  while (std::getline(in, field, ';')) fields.push_back(field);
  return fields;
}

// "0041..005A" or "00DF" -> [first, last].
void ParseRange(const std::string& field, uint32_t* first, uint32_t* last) {
  const std::string f = Trim(field);
  const size_t dots = f.find("..");
  *first = static_cast<uint32_t>(std::stoul(f.substr(0, dots), nullptr, 16));
  *last = dots == std::string::npos
              ? *first
              : static_cast<uint32_t>(std::stoul(f.substr(dots + 2), nullptr, 16));
}

bool FileReadable(const std::string& path) { return std::ifstream(path).good(); }

// General categories from UnicodeData.txt (UAX #44 §5.7.1 "First>/Last>" ranges);
// unlisted code points are Cn.
class GeneralCategories {
 public:
  bool Load(const std::string& path) {
    std::ifstream in(path);
    if (!in) return false;
    gc_.assign(kMaxCodePoint + 1, "Cn");
    std::string line;
    uint32_t range_first = 0;
    while (std::getline(in, line)) {
      const std::vector<std::string> f = SplitFields(line);
      if (f.size() < 3) continue;
      const uint32_t cp = static_cast<uint32_t>(std::stoul(f[0], nullptr, 16));
      if (f[1].find(", First>") != std::string::npos) {
        range_first = cp;
        continue;
      }
      const uint32_t first = f[1].find(", Last>") != std::string::npos ? range_first : cp;
      for (uint32_t c = first; c <= cp; ++c) gc_[c] = f[2];
    }
    return true;
  }
  const std::string& Of(uint32_t cp) const { return gc_[cp]; }
  // Rule 3 of normalizer.h: letters (L*), marks (M*) and numbers (N*).
  bool IsTokenChar(uint32_t cp) const {
    const char major = gc_[cp][0];
    return major == 'L' || major == 'M' || major == 'N';
  }

 private:
  std::vector<std::string> gc_;
};

// Rules 3-4 of normalizer.h applied to a code point sequence, with the
// categories of UnicodeData.txt: tokens joined by one space.
std::string Tokenize(const std::vector<uint32_t>& cps, const GeneralCategories& gc) {
  std::string out;
  bool in_token = false;
  for (uint32_t cp : cps) {
    if (gc.IsTokenChar(cp)) {
      if (!in_token && !out.empty()) out.push_back(' ');
      in_token = true;
      out += EncodeUtf8(cp);
    } else {
      in_token = false;
    }
  }
  return out;
}

std::string Hex(const std::string& s) {
  static const char kDigits[] = "0123456789ABCDEF";
  std::string out;
  for (unsigned char c : s) {
    if (!out.empty()) out.push_back(' ');
    out.push_back(kDigits[c >> 4]);
    out.push_back(kDigits[c & 15]);
  }
  return out;
}

std::string NfkcOrError(const std::string& s) {
  StatusOr<std::string> r = Nfkc(s);
  return r.ok() ? r.value() : "<error: " + r.status().message() + ">";
}

// ---------------------------------------------------------------------------
// NFKC conformance: NormalizationTest.txt (UAX #15 §"Conformance Testing").

struct NormalizationTestData {
  std::vector<std::vector<std::vector<uint32_t>>> lines;  // 5 columns per line
  std::vector<std::string> comments;
  std::unordered_set<uint32_t> part1;  // code points listed in Part 1
  std::string header;
};

bool ReadNormalizationTest(NormalizationTestData* data, std::string* error) {
  const std::string path = std::string(kUcdDir) + "/NormalizationTest.txt.bz2";
  if (!FileReadable(path)) {
    *error = path + " is missing (Debian package unicode-data)";
    return false;
  }
  const std::string cmd = "bzcat " + path;
  FILE* pipe = popen(cmd.c_str(), "r");
  if (pipe == nullptr) {
    *error = "cannot run " + cmd;
    return false;
  }
  std::string line;
  std::string part;
  char buf[4096];
  while (std::fgets(buf, sizeof(buf), pipe) != nullptr) {
    line = buf;
    if (line.rfind("# NormalizationTest", 0) == 0) data->header = Trim(line);
    if (line.empty() || line[0] == '#') continue;
    if (line[0] == '@') {
      part = line.substr(0, line.find(' '));
      continue;
    }
    const size_t hash = line.find('#');
    const std::vector<std::string> f = SplitFields(line.substr(0, hash));
    if (f.size() < 5) continue;
    std::vector<std::vector<uint32_t>> cols;
    for (int i = 0; i < 5; ++i) cols.push_back(ParseHexList(f[i]));
    if (part == "@Part1" && cols[0].size() == 1) data->part1.insert(cols[0][0]);
    data->lines.push_back(std::move(cols));
    data->comments.push_back(hash == std::string::npos ? "" : Trim(line.substr(hash)));
  }
  const int rc = pclose(pipe);
  if (rc != 0 || data->lines.empty()) {
    *error = cmd + " failed (status " + std::to_string(rc) + ")";
    return false;
  }
  return true;
}

TEST(NfkcConformanceTest, NormalizationTestTxt) {
  NormalizationTestData data;
  std::string error;
  if (!ReadNormalizationTest(&data, &error)) GTEST_SKIP() << error;
  std::printf("%s; utf8proc implements Unicode %s\n", data.header.c_str(),
              utf8proc_unicode_version());

  // UAX #15 conformance: c4 == NFKC(c1) == NFKC(c2) == NFKC(c3) == NFKC(c4) == NFKC(c5).
  int checked = 0, skipped = 0, failures = 0;
  for (size_t i = 0; i < data.lines.size(); ++i) {
    const auto& cols = data.lines[i];
    bool assigned = true;
    for (const auto& col : cols) {
      for (uint32_t cp : col) {
        // Not yet assigned in utf8proc's (possibly older) Unicode version.
        if (utf8proc_category(static_cast<utf8proc_int32_t>(cp)) ==
            UTF8PROC_CATEGORY_CN) {
          assigned = false;
        }
      }
    }
    if (!assigned) {
      ++skipped;
      continue;
    }
    ++checked;
    const std::string c4 = EncodeUtf8(cols[3]);
    for (int c = 0; c < 5; ++c) {
      const std::string got = NfkcOrError(EncodeUtf8(cols[c]));
      if (got != c4) {
        if (++failures <= 10) {
          ADD_FAILURE() << "NFKC(c" << c + 1 << ") = [" << Hex(got) << "], c4 = ["
                        << Hex(c4) << "] " << data.comments[i];
        }
      }
    }
  }
  std::printf(
      "NormalizationTest: %d lines checked, %d skipped (unassigned in utf8proc)\n",
      checked, skipped);
  EXPECT_GT(checked, 15000);
  EXPECT_EQ(failures, 0);
}

// NormalizationTest.txt, Part 1 header: every code point assigned in this
// version that is not listed in Part 1 is its own NFKC.
TEST(NfkcConformanceTest, CodePointsNotInPart1AreStable) {
  NormalizationTestData data;
  std::string error;
  if (!ReadNormalizationTest(&data, &error)) GTEST_SKIP() << error;
  GeneralCategories gc;
  if (!gc.Load(std::string(kUcdDir) + "/UnicodeData.txt"))
    GTEST_SKIP() << "UnicodeData.txt missing";
  ASSERT_GT(data.part1.size(), 10000u);
  int checked = 0, failures = 0;
  for (uint32_t cp = 0; cp <= kMaxCodePoint; ++cp) {
    if (IsSurrogate(cp) || data.part1.count(cp)) continue;
    if (gc.Of(cp) == "Cn") continue;  // unassigned in the data's version
    if (utf8proc_category(static_cast<utf8proc_int32_t>(cp)) == UTF8PROC_CATEGORY_CN)
      continue;
    ++checked;
    const std::string x = EncodeUtf8(cp);
    const std::string got = NfkcOrError(x);
    if (got != x && ++failures <= 10) {
      ADD_FAILURE() << "NFKC(U+" << std::hex << cp << ") = [" << Hex(got) << "]";
    }
  }
  std::printf("Part 1 rule: %d code points checked\n", checked);
  EXPECT_GT(checked, 200000);
  EXPECT_EQ(failures, 0);
}

// The skip rule above reads "Cn in utf8proc" as "not assigned in utf8proc's
// Unicode version". DerivedAge.txt is the outside source of when each code point
// was assigned: everything assigned up to that version (noncharacters excepted,
// which are Cn by definition, Unicode ch. 23.7) must be known to utf8proc.
TEST(NfkcConformanceTest, Utf8procKnowsEveryCodePointOfItsVersion) {
  std::ifstream in(std::string(kUcdDir) + "/DerivedAge.txt");
  if (!in) GTEST_SKIP() << "DerivedAge.txt missing (Debian package unicode-data)";
  int major = 0, minor = 0;
  ASSERT_EQ(std::sscanf(utf8proc_unicode_version(), "%d.%d", &major, &minor), 2);
  std::string line;
  int checked = 0, failures = 0;
  while (std::getline(in, line)) {
    const std::string content = line.substr(0, line.find('#'));
    const std::vector<std::string> f = SplitFields(content);
    if (f.size() < 2) continue;
    int age_major = 0, age_minor = 0;
    if (std::sscanf(Trim(f[1]).c_str(), "%d.%d", &age_major, &age_minor) != 2) continue;
    if (age_major > major || (age_major == major && age_minor > minor)) continue;
    uint32_t first, last;
    ParseRange(f[0], &first, &last);
    for (uint32_t cp = first; cp <= last; ++cp) {
      const bool noncharacter = (cp >= 0xFDD0 && cp <= 0xFDEF) || (cp & 0xFFFE) == 0xFFFE;
      if (noncharacter) continue;
      ++checked;
      if (utf8proc_category(static_cast<utf8proc_int32_t>(cp)) == UTF8PROC_CATEGORY_CN &&
          ++failures <= 10) {
        ADD_FAILURE() << "U+" << std::hex << cp << " has age " << Trim(f[1])
                      << " but is unassigned in utf8proc " << utf8proc_unicode_version();
      }
    }
  }
  EXPECT_GT(checked, 100000);
  EXPECT_EQ(failures, 0);
}

// ---------------------------------------------------------------------------
// The whole normaliser on every single code point, against
// DerivedNormalizationProps.txt's NFKC_Casefold (NFKC_CF) mapping followed by
// rules 3-4 with UnicodeData.txt categories. NFKC_CF deletes
// Default_Ignorable_Code_Point characters (mapping to the empty string), and so
// does rule 2 (utf8proc IGNORE): those are compared too.
TEST(NormalizerTest, SingleCodePointsMatchNfkcCasefoldThenTokenize) {
  GeneralCategories gc;
  if (!gc.Load(std::string(kUcdDir) + "/UnicodeData.txt"))
    GTEST_SKIP() << "UnicodeData.txt missing";
  std::ifstream in(std::string(kUcdDir) + "/DerivedNormalizationProps.txt");
  if (!in)
    GTEST_SKIP() << "DerivedNormalizationProps.txt missing (Debian package unicode-data)";

  // @missing: 0000..10FFFF; NFKC_CF; <code point>  (identity unless listed).
  std::vector<std::vector<uint32_t>> mapping(kMaxCodePoint + 1);
  std::vector<bool> listed(kMaxCodePoint + 1, false);
  std::string line;
  while (std::getline(in, line)) {
    const std::string content = line.substr(0, line.find('#'));
    const std::vector<std::string> f = SplitFields(content);
    if (f.size() < 3 || Trim(f[1]) != "NFKC_CF") continue;
    uint32_t first, last;
    ParseRange(f[0], &first, &last);
    const std::vector<uint32_t> to = ParseHexList(f[2]);
    for (uint32_t cp = first; cp <= last; ++cp) {
      mapping[cp] = to;
      listed[cp] = true;
    }
  }
  ASSERT_GT(std::count(listed.begin(), listed.end(), true), 5000);

  Normalizer normalizer;
  NormalizedText out;
  int checked = 0, ignorable = 0, failures = 0;
  for (uint32_t cp = 0; cp <= kMaxCodePoint; ++cp) {
    if (IsSurrogate(cp)) continue;
    if (utf8proc_category(static_cast<utf8proc_int32_t>(cp)) == UTF8PROC_CATEGORY_CN &&
        gc.Of(cp) != "Cn") {
      continue;  // assigned after utf8proc's Unicode version
    }
    if (listed[cp] && mapping[cp].empty()) ++ignorable;
    const std::vector<uint32_t> folded =
        listed[cp] ? mapping[cp] : std::vector<uint32_t>{cp};
    const std::string expected = Tokenize(folded, gc);
    normalizer.NormalizeUnicode(EncodeUtf8(cp), &out);
    ++checked;
    if (out.text != expected && ++failures <= 10) {
      ADD_FAILURE() << "U+" << std::hex << cp << " (" << gc.Of(cp) << "): got ["
                    << Hex(out.text) << "], NFKC_CF+tokenize gives [" << Hex(expected)
                    << "]";
    }
  }
  std::printf("NFKC_CF: %d code points checked, %d of them default-ignorable\n", checked,
              ignorable);
  EXPECT_GT(checked, 1000000);
  EXPECT_EQ(failures, 0);
}

// ---------------------------------------------------------------------------
// Individual rules of normalizer.h, with the UCD entry that decides each.

std::string Norm(const std::string& s) {
  Normalizer n;
  NormalizedText out;
  n.Normalize(s, &out);
  return out.text;
}

TEST(NormalizerTest, CaseFolding) {
  // CaseFolding.txt: "00DF; F; 0073 0073; # LATIN SMALL LETTER SHARP S".
  EXPECT_EQ(Norm("Stra\xC3\x9F"
                 "e"),
            "strasse");
  // CaseFolding.txt: "1E9E; F; 0073 0073; # LATIN CAPITAL LETTER SHARP S".
  EXPECT_EQ(Norm("STRA\xE1\xBA\x9E"
                 "E"),
            "strasse");
  // CaseFolding.txt: "03A3; C; 03C3" and "03C2; C; 03C3" (final sigma folds to sigma).
  EXPECT_EQ(Norm("\xCE\xA3\xCE\xBF\xCF\x86\xCE\xBF\xCF\x82"),
            "\xCF\x83\xCE\xBF\xCF\x86\xCE\xBF\xCF\x83");
  // CaseFolding.txt: "0130; F; 0069 0307" (U+0307 is Mn, so it stays in the token).
  EXPECT_EQ(Norm("\xC4\xB0stanbul"), "i\xCC\x87stanbul");
  // CaseFolding.txt: "212A; C; 006B; # KELVIN SIGN".
  EXPECT_EQ(Norm("\xE2\x84\xAA"), "k");
  // CaseFolding.txt: "0041; C; 0061" ... "005A; C; 007A" (ASCII fast path).
  EXPECT_EQ(Norm("HeLLo WORLD"), "hello world");
}

TEST(NormalizerTest, CompatibilityForms) {
  // UnicodeData.txt: FB01 LATIN SMALL LIGATURE FI, decomposition "<compat> 0066 0069".
  EXPECT_EQ(Norm("\xEF\xAC\x81"), "fi");
  // UnicodeData.txt: FF26 "<wide> 0046", FF49 "<wide> 0069" (fullwidth F, i).
  EXPECT_EQ(Norm("\xEF\xBC\xA6\xEF\xBD\x89"), "fi");
  EXPECT_EQ(Norm("FI"), "fi");
  // UnicodeData.txt: 00B2 SUPERSCRIPT TWO "<super> 0032".
  EXPECT_EQ(Norm("x\xC2\xB2"), "x2");
  // UnicodeData.txt: 216B ROMAN NUMERAL TWELVE (Nl) "<compat> 0058 0049 0049".
  EXPECT_EQ(Norm("\xE2\x85\xAB"), "xii");
  // UnicodeData.txt: 00BD "<fraction> 0031 2044 0032"; 2044 FRACTION SLASH is Sm.
  EXPECT_EQ(Norm("\xC2\xBD"), "1 2");
  // NFC composition (UAX #15): e + U+0301 COMBINING ACUTE ACCENT -> U+00E9.
  EXPECT_EQ(Norm("cafe\xCC\x81"), "caf\xC3\xA9");
}

TEST(NormalizerTest, PunctuationAndWhitespaceSeparateTokens) {
  // ASCII: space, tab, newline (Cc/Zs) and punctuation (P*) all separate.
  EXPECT_EQ(Norm("  Hello,\tworld!\n\nfoo--bar...baz  "), "hello world foo bar baz");
  // U+2014 EM DASH (Pd), U+00A0 NO-BREAK SPACE ("<noBreak> 0020"), U+3000
  // IDEOGRAPHIC SPACE ("<wide> 0020"), U+2028 LINE SEPARATOR (Zl), U+3001
  // IDEOGRAPHIC COMMA (Po), all from UnicodeData.txt, separate. U+200B ZERO WIDTH
  // SPACE is Default_Ignorable_Code_Point (DerivedCoreProperties.txt) and is
  // removed like NFKC_Casefold removes it, so "e" and "f" join.
  EXPECT_EQ(Norm("a\xE2\x80\x94"
                 "b\xC2\xA0"
                 "c\xE3\x80\x80"
                 "d\xE2\x80\xA8"
                 "e\xE2\x80\x8B"
                 "f\xE3\x80\x81g"),
            "a b c d ef g");
  // Symbols separate too: $ (Sc), + (Sm), U+20AC EURO SIGN (Sc), U+00A9 (So),
  // U+1F600 GRINNING FACE (So).
  EXPECT_EQ(Norm("1$2+3\xE2\x82\xAC"
                 "4\xC2\xA9"
                 "5\xF0\x9F\x98\x80"
                 "6"),
            "1 2 3 4 5 6");
  EXPECT_EQ(Norm(""), "");
  EXPECT_EQ(Norm(" \t.,;!? "), "");
  EXPECT_EQ(Norm("\xE2\x80\x94\xE3\x80\x80"), "");
}

TEST(NormalizerTest, LettersMarksNumbersAreTokenCharacters) {
  // Devanagari (UnicodeData.txt: 0939 Lo, 093F Mc, 0928 Lo, 094D Mn, 0926 Lo, 0940 Mc).
  const std::string hindi =
      "\xE0\xA4\xB9\xE0\xA4\xBF\xE0\xA4\xA8\xE0\xA5\x8D\xE0\xA4\xA6\xE0\xA5\x80";
  EXPECT_EQ(Norm(hindi + " " + hindi), hindi + " " + hindi);
  // Arabic-Indic digits U+0663, U+0664 (Nd).
  EXPECT_EQ(Norm("\xD9\xA3\xD9\xA4"), "\xD9\xA3\xD9\xA4");
  // CJK ideographs (Lo) 4E16 754C; no word segmentation inside a run.
  EXPECT_EQ(Norm("\xE4\xB8\x96\xE7\x95\x8C!"), "\xE4\xB8\x96\xE7\x95\x8C");
  // A combining mark after a space (Mn) is a token character by itself.
  EXPECT_EQ(Norm(" \xCC\x81x"), "\xCC\x81x");
  // U+2167 ROMAN NUMERAL EIGHT (Nl) "<compat> 0056 0049 0049 0049".
  EXPECT_EQ(Norm("chapter \xE2\x85\xA7"), "chapter viii");
}

TEST(NormalizerTest, TokenOffsets) {
  Normalizer n;
  NormalizedText out;
  n.Normalize("  Hello,   World!  ", &out);
  EXPECT_EQ(out.text, "hello world");
  ASSERT_EQ(out.num_tokens(), 2u);
  EXPECT_EQ(out.starts[0], 0u);
  EXPECT_EQ(out.starts[1], 6u);
  EXPECT_EQ(out.TokenEnd(0), 5u);
  EXPECT_EQ(out.TokenEnd(1), 11u);

  // U+FF28.. fullwidth "Hello", U+3001, 4E16 754C, U+FF01 ("<wide> 0021").
  n.Normalize(
      "\xEF\xBC\xA8\xEF\xBD\x85\xEF\xBD\x8C\xEF\xBD\x8C\xEF\xBD\x8F\xE3\x80\x81"
      "\xE4\xB8\x96\xE7\x95\x8C\xEF\xBC\x81",
      &out);
  EXPECT_EQ(out.text, "hello \xE4\xB8\x96\xE7\x95\x8C");
  ASSERT_EQ(out.num_tokens(), 2u);
  EXPECT_EQ(out.starts[1], 6u);
  EXPECT_EQ(out.TokenEnd(1), 12u);

  // Every token is text[starts[i], TokenEnd(i)), separated by exactly one space.
  n.Normalize("a  bb,,ccc\xC3\xA9  d", &out);
  ASSERT_EQ(out.num_tokens(), 4u);
  std::string rebuilt;
  for (size_t i = 0; i < out.num_tokens(); ++i) {
    if (i) rebuilt.push_back(' ');
    rebuilt += out.text.substr(out.starts[i], out.TokenEnd(i) - out.starts[i]);
  }
  EXPECT_EQ(rebuilt, out.text);
  EXPECT_EQ(out.text, "a bb ccc\xC3\xA9 d");

  n.Normalize("", &out);
  EXPECT_EQ(out.num_tokens(), 0u);
  EXPECT_EQ(out.text, "");
}

// The ASCII fast path yields exactly what the general path yields (normalizer.h).
void ExpectAsciiPathsAgree(const std::string& input) {
  Normalizer n;
  NormalizedText fast, general;
  n.Normalize(input, &fast);
  n.NormalizeUnicode(input, &general);
  ASSERT_EQ(fast.text, general.text) << "input [" << Hex(input) << "]";
  ASSERT_EQ(fast.starts, general.starts) << "input [" << Hex(input) << "]";
}

TEST(NormalizerTest, AsciiFastPathEqualsUnicodePathOnPrintableAscii) {
  std::mt19937_64 rng(20240601);
  std::uniform_int_distribution<int> len(0, 80);
  std::uniform_int_distribution<int> ch(0x20, 0x7E);
  for (int trial = 0; trial < 20000; ++trial) {
    std::string s(static_cast<size_t>(len(rng)), ' ');
    for (char& c : s) c = static_cast<char>(ch(rng));
    ExpectAsciiPathsAgree(s);
  }
}

TEST(NormalizerTest, AsciiFastPathEqualsUnicodePathOnAllAscii) {
  // Every single ASCII character, then random strings over 0x00..0x7F.
  for (int c = 0; c < 0x80; ++c)
    ExpectAsciiPathsAgree(std::string(1, static_cast<char>(c)));
  std::mt19937_64 rng(7);
  std::uniform_int_distribution<int> len(0, 40);
  std::uniform_int_distribution<int> ch(0x00, 0x7F);
  for (int trial = 0; trial < 5000; ++trial) {
    std::string s(static_cast<size_t>(len(rng)), ' ');
    for (char& c : s) c = static_cast<char>(ch(rng));
    ExpectAsciiPathsAgree(s);
  }
}

// ---------------------------------------------------------------------------
// ValidateUtf8 against the Unicode Standard, ch. 3, Table 3-7 (well-formed
// UTF-8 byte sequences):
//   00..7F | C2..DF 80..BF | E0 A0..BF 80..BF | E1..EC 80..BF 80..BF |
//   ED 80..9F 80..BF | EE..EF 80..BF 80..BF | F0 90..BF 80..BF 80..BF |
//   F1..F3 80..BF 80..BF 80..BF | F4 80..8F 80..BF 80..BF
// Returns the offset of the first ill-formed sequence, or npos.
size_t FirstIllFormed(const std::string& s) {
  const auto* p = reinterpret_cast<const unsigned char*>(s.data());
  const size_t n = s.size();
  size_t i = 0;
  auto in = [](unsigned char c, unsigned lo, unsigned hi) { return c >= lo && c <= hi; };
  while (i < n) {
    const unsigned char b0 = p[i];
    size_t len;
    unsigned lo1 = 0x80, hi1 = 0xBF;
    if (b0 <= 0x7F) {
      len = 1;
    } else if (in(b0, 0xC2, 0xDF)) {
      len = 2;
    } else if (in(b0, 0xE0, 0xEF)) {
      len = 3;
      if (b0 == 0xE0) lo1 = 0xA0;
      if (b0 == 0xED) hi1 = 0x9F;
    } else if (in(b0, 0xF0, 0xF4)) {
      len = 4;
      if (b0 == 0xF0) lo1 = 0x90;
      if (b0 == 0xF4) hi1 = 0x8F;
    } else {
      return i;  // 80..C1, F5..FF never start a well-formed sequence
    }
    if (i + len > n) return i;
    if (len >= 2 && !in(p[i + 1], lo1, hi1)) return i;
    for (size_t k = 2; k < len; ++k) {
      if (!in(p[i + k], 0x80, 0xBF)) return i;
    }
    i += len;
  }
  return std::string::npos;
}

// The offset named in the message: the number after "byte ".
long OffsetInMessage(const Status& s) {
  const size_t pos = s.message().find("byte ");
  if (pos == std::string::npos) return -1;
  return std::strtol(s.message().c_str() + pos + 5, nullptr, 10);
}

void ExpectValidation(const std::string& s) {
  const size_t bad = FirstIllFormed(s);
  const Status st = ValidateUtf8(s);
  if (bad == std::string::npos) {
    ASSERT_TRUE(st.ok()) << "[" << Hex(s) << "] is well-formed: " << st.message();
  } else {
    ASSERT_FALSE(st.ok()) << "[" << Hex(s) << "] is ill-formed at byte " << bad;
    ASSERT_EQ(st.code(), Status::Code::kBadInput);
    ASSERT_EQ(OffsetInMessage(st), static_cast<long>(bad))
        << "[" << Hex(s) << "]: " << st.message();
  }
}

TEST(ValidateUtf8Test, NamedCases) {
  struct Case {
    std::string bytes;
    long offset;  // -1: well-formed
  };
  const std::vector<Case> cases = {
      {"", -1},
      {"plain ascii", -1},
      {"\xC3\xA9t\xC3\xA9", -1},  // U+00E9
      {"\xEF\xBF\xBF", -1},       // U+FFFF (noncharacter, still well-formed)
      {"\xF4\x8F\xBF\xBF", -1},   // U+10FFFF
      {"\xED\x9F\xBF", -1},       // U+D7FF, last before the surrogates
      {"\xEE\x80\x80", -1},       // U+E000, first after them
      {"ab\xC0\x80", 2},          // overlong U+0000 (C0 never occurs)
      {"\xC1\xBF", 0},            // overlong U+007F
      {"x\xE0\x80\xAF", 1},       // overlong 3-byte '/'
      {"\xF0\x80\x80\xAF", 0},    // overlong 4-byte '/'
      {"ok\xED\xA0\x80", 2},      // surrogate U+D800
      {"\xED\xBF\xBF", 0},        // surrogate U+DFFF
      {"\xF4\x90\x80\x80", 0},    // U+110000, above U+10FFFF
      {"\xF5\x80\x80\x80", 0},
      {"abc\xFF", 3},
      {"\xFE", 0},
      {"\xF8\x88\x80\x80\x80", 0},  // old 5-byte form
      {"abc\xE2\x82", 3},           // truncated U+20AC at the end
      {"\xE2\x82"
       "abc",
       0},                  // truncated in the middle
      {"\xC3\xA9\xC3", 2},  // truncated 2-byte
      {"\xF0\x9F\x98", 0},  // truncated 4-byte
      {"a\x80"
       "b",
       1},                  // lone continuation byte
      {"\xC3\xA9\xBF", 2},  // continuation after a complete sequence
  };
  for (const Case& c : cases) {
    // The oracle itself agrees with the hand-made expectation.
    const size_t bad = FirstIllFormed(c.bytes);
    ASSERT_EQ(bad == std::string::npos ? -1L : static_cast<long>(bad), c.offset)
        << Hex(c.bytes);
    ExpectValidation(c.bytes);
  }
}

TEST(ValidateUtf8Test, ExhaustiveShortSequences) {
  std::string s;
  // Every 1- and 2-byte string.
  for (int a = 0; a < 256; ++a) {
    s.assign(1, static_cast<char>(a));
    ExpectValidation(s);
    for (int b = 0; b < 256; ++b) {
      s.assign({static_cast<char>(a), static_cast<char>(b)});
      ExpectValidation(s);
    }
  }
  // Every 3-byte string whose first byte is a lead byte C0..FF (ASCII leads are
  // the 2-byte cases above shifted by one), with an ASCII prefix so the offset is 1.
  for (int a = 0xC0; a < 256; ++a) {
    for (int b = 0; b < 256; ++b) {
      for (int c = 0; c < 256; ++c) {
        s.assign({'z', static_cast<char>(a), static_cast<char>(b), static_cast<char>(c)});
        ExpectValidation(s);
      }
    }
  }
}

TEST(ValidateUtf8Test, FourByteBoundaries) {
  const int kTail[] = {0x00, 0x7F, 0x80, 0x8F, 0x90, 0x9F, 0xA0, 0xBF, 0xC0, 0xFF};
  std::string s;
  for (int a = 0xF0; a <= 0xF7; ++a) {
    for (int b = 0; b < 256; ++b) {
      for (int c : kTail) {
        for (int d : kTail) {
          s.assign({static_cast<char>(a), static_cast<char>(b), static_cast<char>(c),
                    static_cast<char>(d)});
          ExpectValidation(s);
        }
      }
    }
  }
}

}  // namespace
}  // namespace shingleton
