// shingleton-demo-gen: writes a synthetic, deterministic web-crawl corpus for
// exercising Shingleton's near-duplicate detection.
//
// The scenario is invented: a crawl of the community web of the Vellory Isles,
// a fictional island chain. Pages are ferry timetables, co-op notices, weather
// bulletins, a regional gazette that is syndicated to mirror sites, forum
// threads, shop pages, council minutes and events listings. Every hostname is
// under the reserved .example TLD; every name is made up.
//
// About --family-share of the documents belong to planted near-duplicate
// families: one base document plus variants that are each derived from the
// base (never from another variant), so each variant's distance to its base is
// known. The rest of the documents are unique. The optional --truth TSV records
// family, role, variant kind and edit rate for every document.
//
// Determinism contract: the output bytes are a pure function of the arguments.
// All randomness comes from a self-contained xoshiro256** generator with
// integer-only sampling (no std::*_distribution, no floating point after the
// --family-share option is converted to parts per million), and generation is
// single-threaded, so results are identical across machines and libraries.

#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <deque>
#include <memory>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <CLI/CLI.hpp>

#include "index/json_writer.h"

namespace shingleton_demo {
namespace {

// ---------------------------------------------------------------------------
// Pseudo-random numbers.

uint64_t SplitMix64(uint64_t* state) {
  uint64_t z = (*state += 0x9E3779B97F4A7C15ULL);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

// Derives an independent seed for sub-stream `b` of stream `a`.
uint64_t MixSeed(uint64_t a, uint64_t b) {
  uint64_t state = a ^ (b * 0xD1B54A32D192ED03ULL);
  SplitMix64(&state);
  return SplitMix64(&state);
}

// xoshiro256** with exact, integer-only bounded sampling.
class Rng {
 public:
  explicit Rng(uint64_t seed) {
    for (uint64_t& word : s_) word = SplitMix64(&seed);
  }

  uint64_t Next() {
    const uint64_t result = Rotl(s_[1] * 5, 7) * 9;
    const uint64_t t = s_[1] << 17;
    s_[2] ^= s_[0];
    s_[3] ^= s_[1];
    s_[1] ^= s_[2];
    s_[0] ^= s_[3];
    s_[2] ^= t;
    s_[3] = Rotl(s_[3], 45);
    return result;
  }

  // Uniform in [0, n) for n > 0, exactly (Lemire's multiply-and-reject; the
  // division only runs on the rare slow path).
  uint64_t Below(uint64_t n) {
    uint64_t high, low;
    Multiply(Next(), n, &high, &low);
    if (low < n) {
      const uint64_t threshold = (0 - n) % n;
      while (low < threshold) Multiply(Next(), n, &high, &low);
    }
    return high;
  }

  // Uniform in [lo, hi], lo <= hi.
  int64_t Between(int64_t lo, int64_t hi) {
    return lo + static_cast<int64_t>(Below(static_cast<uint64_t>(hi - lo) + 1));
  }

  bool Percent(uint32_t p) { return Below(100) < p; }

  template <typename T>
  const T& Pick(const std::vector<T>& v) {
    return v[Below(v.size())];
  }

 private:
  static uint64_t Rotl(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

  // Full 128-bit product of a and b, in standard C++ (no __int128).
  static void Multiply(uint64_t a, uint64_t b, uint64_t* high, uint64_t* low) {
    const uint64_t a_lo = a & 0xFFFFFFFFULL, a_hi = a >> 32;
    const uint64_t b_lo = b & 0xFFFFFFFFULL, b_hi = b >> 32;
    const uint64_t p0 = a_lo * b_lo;
    const uint64_t p1 = a_lo * b_hi;
    const uint64_t p2 = a_hi * b_lo;
    const uint64_t mid =
        (p0 >> 32) + (p1 & 0xFFFFFFFFULL) + (p2 & 0xFFFFFFFFULL);
    *low = (mid << 32) | (p0 & 0xFFFFFFFFULL);
    *high = a_hi * b_hi + (p1 >> 32) + (p2 >> 32) + (mid >> 32);
  }
  uint64_t s_[4];
};

// Picks an index with probability proportional to weights[i].
size_t PickWeighted(const std::vector<uint32_t>& weights, Rng* rng) {
  uint64_t total = 0;
  for (uint32_t w : weights) total += w;
  uint64_t r = rng->Below(total);
  for (size_t i = 0; i < weights.size(); ++i) {
    if (r < weights[i]) return i;
    r -= weights[i];
  }
  return weights.size() - 1;
}

template <typename T>
void Shuffle(std::vector<T>* v, Rng* rng) {
  for (size_t i = v->size(); i > 1; --i) {
    std::swap((*v)[i - 1], (*v)[rng->Below(i)]);
  }
}

// ---------------------------------------------------------------------------
// Output bytes.

// Append-only byte buffer with inline appends; the hot rendering path writes
// hundreds of millions of short pieces, where std::string's out-of-line
// append dominates. Offers the subset of the std::string interface we use, so
// the formatting helpers below work on both.
class ByteBuffer {
 public:
  void push_back(char c) {
    Reserve(1);
    data_[size_++] = c;
  }
  void append(std::string_view s) {
    Reserve(s.size());
    std::memcpy(data_.get() + size_, s.data(), s.size());
    size_ += s.size();
  }
  void append(const char* s, size_t n) { append(std::string_view(s, n)); }
  ByteBuffer& operator+=(std::string_view s) {
    append(s);
    return *this;
  }
  ByteBuffer& operator+=(char c) {
    push_back(c);
    return *this;
  }
  void clear() { size_ = 0; }
  bool empty() const { return size_ == 0; }
  size_t size() const { return size_; }
  const char* data() const { return data_.get(); }
  std::string_view view() const { return std::string_view(data_.get(), size_); }

 private:
  void Reserve(size_t extra) {
    if (size_ + extra > capacity_) Grow(size_ + extra);
  }
  void Grow(size_t need) {
    size_t cap = std::max<size_t>(capacity_ * 2, 4096);
    while (cap < need) cap *= 2;
    std::unique_ptr<char[]> bigger(new char[cap]);
    if (size_ > 0) std::memcpy(bigger.get(), data_.get(), size_);
    data_ = std::move(bigger);
    capacity_ = cap;
  }

  std::unique_ptr<char[]> data_;
  size_t size_ = 0;
  size_t capacity_ = 0;
};

// ---------------------------------------------------------------------------
// Small formatting helpers (integer only, locale independent). `Sink` is
// std::string or ByteBuffer.

bool IsAsciiAlnum(unsigned char c) {
  return (c >= '0' && c <= '9') || ((c | 0x20) >= 'a' && (c | 0x20) <= 'z');
}

template <typename Sink>
void AppendUint(uint64_t v, int min_width, Sink* out) {
  char buf[24];
  int n = 0;
  do {
    buf[n++] = static_cast<char>('0' + v % 10);
    v /= 10;
  } while (v != 0);
  while (n < min_width) buf[n++] = '0';
  while (n > 0) out->push_back(buf[--n]);
}

template <typename Sink>
void AppendInt(int64_t v, Sink* out) {
  if (v < 0) {
    out->push_back('-');
    AppendUint(static_cast<uint64_t>(-v), 1, out);
  } else {
    AppendUint(static_cast<uint64_t>(v), 1, out);
  }
}

// Formats a fraction in units of 1/10000 as a short decimal ("0", "0.05").
std::string FormatRate(uint32_t basis_points) {
  std::string s;
  AppendUint(basis_points / 10000, 1, &s);
  uint32_t frac = basis_points % 10000;
  if (frac == 0) return s;
  s.push_back('.');
  std::string digits;
  AppendUint(frac, 4, &digits);
  while (!digits.empty() && digits.back() == '0') digits.pop_back();
  return s + digits;
}

// Days since 1970-01-01 (proleptic Gregorian) and back.
constexpr int32_t DaysFromCivil(int32_t y, uint32_t m, uint32_t d) {
  y -= m <= 2;
  const int32_t era = (y >= 0 ? y : y - 399) / 400;
  const uint32_t yoe = static_cast<uint32_t>(y - era * 400);
  const uint32_t doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
  const uint32_t doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + static_cast<int32_t>(doe) - 719468;
}

struct CivilDate {
  int32_t year;
  uint32_t month;
  uint32_t day;
};

CivilDate CivilFromDays(int32_t z) {
  z += 719468;
  const int32_t era = (z >= 0 ? z : z - 146096) / 146097;
  const uint32_t doe = static_cast<uint32_t>(z - era * 146097);
  const uint32_t yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
  const uint32_t doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
  const uint32_t mp = (5 * doy + 2) / 153;
  const uint32_t d = doy - (153 * mp + 2) / 5 + 1;
  const uint32_t m = mp < 10 ? mp + 3 : mp - 9;
  return {static_cast<int32_t>(yoe) + era * 400 + (m <= 2), m, d};
}

template <typename Sink>
void AppendIsoDate(int32_t days, Sink* out) {
  const CivilDate c = CivilFromDays(days);
  AppendUint(static_cast<uint64_t>(c.year), 4, out);
  out->push_back('-');
  AppendUint(c.month, 2, out);
  out->push_back('-');
  AppendUint(c.day, 2, out);
}

// ---------------------------------------------------------------------------
// Lexicon. Word lists are whitespace-separated; "a/b" gives an irregular
// plural (nouns) or past tense (verbs). Everything is invented or ordinary
// English; no real places, people or brands.

constexpr const char kNouns[] = R"(
apple archway attic badge bag bakery ball band bank barn barrel basket beacon
beach bean bell bench berry bicycle bird blanket boat bone book boot bottle
bowl box bramble branch bread brick bridge brook broom brush bucket bulb bundle
bus butter button cabin cable cake candle canoe cap card carpet cart castle cat
cellar chair chalk chapel cheese chimney clock cloud coat cobble cockle coin
collar cottage counter cove cradle crab crate cream creek crow cup curtain
cushion dairy daisy desk dinghy ditch dog door drawer drum dune eel engine
envelope fence fern field fig fire fish/fish flag flask flower fork fox frame
garden gate glove goat grain grass gull hammer hat hawk hay hedge hen hill hook
horn horse hut island jacket jar jetty jug kettle key kite knot ladder lamb
lamp lane lantern leaf/leaves ledge letter lid lighthouse loaf/loaves lobster
lock loft map market meadow mill mirror mitten moss moth mug nail needle nest
net notebook oar office orchard otter oven paddle pail parcel path pebble pen
pencil pepper piano pier pillow pine pipe plank plate plough plum pocket pond
pony post pot potato/potatoes puffin pump quay rabbit radio raft rail rake
ribbon ridge ring river road robin rock roof rope sack sail salt sandal satchel
scarf/scarves school seal seed shed sheep/sheep shelf/shelves shell shore
shovel sign sink skiff sled slope sock spade spoon stable stair stall star
stone stool stove stream street string sugar table tank tent thistle thread
tile timber tin toast tower towel tractor trail tray tree trough trumpet tunnel
turnip umbrella valley van vase wagon wall wardrobe wave well wharf wheel
whistle willow window wire wool workshop yard yacht café façade décor crème
rosé soufflé fiddle finch flint flood floor flute
)";

constexpr const char kAdjectives[] = R"(
amber ancient anxious bare battered bent big bitter black bleak blue bold brave
brief bright brisk broad broken brown busy calm careful cheap cheerful chilly
clean clear clever cloudy coarse cold crooked crowded curious damp dark dear
deep dense distant dry dull dusty eager early easy empty even faded faint fair
famous fast fierce fine firm flat fond foggy fragile fresh friendly frozen full
gentle giant glad golden grand grey green hardy harsh heavy hidden high hollow
honest huge humble idle jolly keen kind large late lazy lean light little
lively local lonely long loose loud lovely low lucky mellow mild misty modest
muddy narrow neat new noisy odd old open orange pale patient plain pleasant
polished poor proud quick quiet rapid rare raw ready red rich rough round rusty
sad safe salty sandy scarce sharp short shy silent silver simple sleepy slow
small smooth soft solid sour spare steady steep sticky stiff still stormy
strange strict strong sudden sunny sweet swift tall tame tender thick thin tidy
tiny tired tough tricky true uneven urgent useful vast warm wary weary wet white
wide wild windy wise wooden worn yellow young naïve crisp fiery flimsy fluffy
)";

constexpr const char kVerbs[] = R"(
accept add admire agree allow answer arrange arrive ask attach avoid bake
balance begin/began borrow bring/brought build/built burn buy/bought call carry
catch/caught change check choose/chose clean clear climb close collect count
cover cross deliver describe dig/dug drag/dragged draw/drew dry earn empty
enjoy explain fetch fill find/found finish fix fold follow gather guard guess
hang/hung help hide/hid hold/held hurry inspect join keep/kept knit/knitted
lift light/lit load lock mark measure mend miss move notice offer open order
pack paint pass pay/paid pick plant polish pour prepare print pull push raise
reach repair replace rescue return ring/rang row sail save scrub search
sell/sold send/sent sew shake/shook share shift show sink/sank sketch sort
spot/spotted stack start steer stitch store stretch sweep/swept take/took tend
test thank tie tow trace track trade trim/trimmed tune turn unload visit wait
walk wash watch weigh welcome wind/wound wrap/wrapped write/wrote flip/flipped
)";

constexpr const char kAdverbs[] = R"(
briskly calmly carefully cheerfully early easily eagerly finally firmly gently
gladly gradually happily hardly honestly kindly lately loudly mostly neatly
nearly often openly patiently politely promptly proudly quickly quietly rarely
readily roughly sadly safely seldom shyly silently slowly smoothly softly soon
steadily suddenly swiftly tightly warmly wearily wisely again together twice
)";

constexpr const char kPrepositions[] =
    "near behind beside above below under beyond past along across around "
    "outside inside towards against among within through over by off";
constexpr const char kConjunctions[] =
    "and but while so yet because although until since when though";
constexpr const char kDeterminers[] =
    "the this that every each one our their her his your my";
constexpr const char kDays[] =
    "Monday Tuesday Wednesday Thursday Friday Saturday Sunday";
constexpr const char kMonths[] =
    "January February March April May June July August September October "
    "November December";

constexpr const char kPlaces[] = R"(
Tarnwick Brellan Osk Culdary Fennet Lissow Quarrelsby Hollinmouth Saltreave
Kærnøy Merrinhead Dunmarrow Skellet Ardvenna Pellock Rossimere Tobbin Brévanne
Greystrand Vennish Orrowby Kelloch Mossvane Tillowgarth
)";

constexpr const char kFirstNames[] = R"(
Ada Tomas Maren Joss Ilse Rowan Hal Nessa Bram Iona Teodor Wren Elsie Corin
Mairi Ottilie Fen Lorne Perrin Zoë Renée Joël Agnes Cal Edda Finn Greer Isa
Linnet Oskar Petra Quill Rhea Saul Tamsin Ulla Vance Wilma Yorick Dara
)";

constexpr const char kSurnames[] = R"(
Tallowby Heddick Varne Pellin Quarrish Mossock Brindlow Fennick Orrinshaw
Caskett Skellan Treave Vossel Kettleby Murrin Dunnock Pennivale Gorrie
Lathwell Ambry Stennet Wickery Rudd Halloran Brisket Corrow Ennis Moyle
)";

constexpr const char kBoatFirst[] =
    "Grey Silver Marram Hollin Northsound Merrin Kelpwater Tidewell";
constexpr const char kBoatSecond[] =
    "Petrel Lass Star Tern Rose Belle Dawn Gannet";
constexpr const char kDirections[] =
    "north northeast east southeast south southwest west northwest";
constexpr const char kWeatherWords[] =
    "showers drizzle rain fog squalls hail sleet sunshine haze mist";
constexpr const char kColors[] =
    "russet heather moss slate oatmeal indigo rust cream charcoal teal";

// Multi-word values are kept whole (one token) so a template slot stays one
// token; the separator inside them is a plain space.
const std::vector<std::string_view> kSeaStates = {"calm", "slight", "moderate",
                                                  "rough", "very rough"};
const std::vector<std::string_view> kVisibility = {"good", "moderate", "poor",
                                                   "very poor"};

std::vector<std::string_view> SplitWords(std::string_view text) {
  std::vector<std::string_view> words;
  size_t i = 0;
  while (i < text.size()) {
    while (i < text.size() && std::isspace(static_cast<unsigned char>(text[i])))
      ++i;
    size_t j = i;
    while (j < text.size() &&
           !std::isspace(static_cast<unsigned char>(text[j])))
      ++j;
    if (j > i) words.push_back(text.substr(i, j - i));
    i = j;
  }
  return words;
}

bool IsVowel(char c) {
  return c == 'a' || c == 'e' || c == 'i' || c == 'o' || c == 'u';
}

std::string RegularPlural(std::string_view w) {
  std::string s(w);
  const size_t n = s.size();
  if (n >= 2 && s[n - 1] == 'y' && !IsVowel(s[n - 2])) {
    s.back() = 'i';
    return s + "es";
  }
  if (s.back() == 's' || s.back() == 'x' || s.back() == 'z' ||
      (n >= 2 && s[n - 1] == 'h' && (s[n - 2] == 'c' || s[n - 2] == 's'))) {
    return s + "es";
  }
  return s + "s";
}

std::string RegularPast(std::string_view w) {
  std::string s(w);
  const size_t n = s.size();
  if (s.back() == 'e') return s + "d";
  if (n >= 2 && s[n - 1] == 'y' && !IsVowel(s[n - 2])) {
    s.back() = 'i';
    return s + "ed";
  }
  return s + "ed";
}

// A word list with an inflected form per entry (plural or past tense).
struct Inflected {
  std::vector<std::string_view> base;
  std::vector<std::string_view> inflected;
};

// Splits "a/b" entries; other entries get `rule` applied. Generated forms are
// kept in `storage` (a deque, so views into it stay valid).
Inflected InflectWords(const std::vector<std::string_view>& words,
                       std::string (*rule)(std::string_view),
                       std::deque<std::string>* storage) {
  Inflected out;
  for (std::string_view w : words) {
    const size_t slash = w.find('/');
    if (slash != std::string_view::npos) {
      out.base.push_back(w.substr(0, slash));
      out.inflected.push_back(w.substr(slash + 1));
    } else {
      out.base.push_back(w);
      storage->push_back(rule(w));
      out.inflected.push_back(storage->back());
    }
  }
  return out;
}

class Lexicon {
 public:
  Lexicon() {
    nouns = InflectWords(SplitWords(kNouns), RegularPlural, &storage_);
    verbs = InflectWords(SplitWords(kVerbs), RegularPast, &storage_);
    adjectives = SplitWords(kAdjectives);
    adverbs = SplitWords(kAdverbs);
    prepositions = SplitWords(kPrepositions);
    conjunctions = SplitWords(kConjunctions);
    determiners = SplitWords(kDeterminers);
    days = SplitWords(kDays);
    months = SplitWords(kMonths);
    places = SplitWords(kPlaces);
    first_names = SplitWords(kFirstNames);
    surnames = SplitWords(kSurnames);
    boat_first = SplitWords(kBoatFirst);
    boat_second = SplitWords(kBoatSecond);
    directions = SplitWords(kDirections);
    weather = SplitWords(kWeatherWords);
    colors = SplitWords(kColors);
  }

  Inflected nouns, verbs;
  std::vector<std::string_view> adjectives, adverbs, prepositions, conjunctions,
      determiners, days, months, places, first_names, surnames, boat_first,
      boat_second, directions, weather, colors;

 private:
  std::deque<std::string> storage_;
};

const Lexicon& Lex() {
  static const Lexicon* lexicon = new Lexicon();
  return *lexicon;
}

// ---------------------------------------------------------------------------
// Document model.

enum class Sep : uint8_t {
  kNone,
  kSpace,
  kSpace2,
  kGlue,
  kTab,
  kNewline,
  kPara
};
enum class Case : uint8_t { kAsIs, kCapital, kUpper, kLower };
// Slots are the values a `template` variant may change.
enum class Slot : uint8_t {
  kNone,
  kDate,
  kTime,
  kNum,
  kBig,
  kPrice,
  kTemp,
  kPct,
  kPhone,
  kYear
};

// One word (or pure-punctuation mark) with punctuation attached on either side.
// All views point into static data or into a Doc's Arena.
struct Token {
  std::string_view lead;
  std::string_view core;
  std::string_view trail;
  Sep sep = Sep::kSpace;  // Whitespace after this token.
  Case cas = Case::kAsIs;
  Slot slot = Slot::kNone;
  uint8_t fmt = 0;  // Date format, for Slot::kDate.
};

// Rendering choices that change bytes but not normalised words.
struct Style {
  bool curly = false;       // Curly quotes/apostrophes, em dash for " - ".
  bool ligatures = false;   // "fi"/"fl" as U+FB01/U+FB02 (PDF-extracted text).
  bool formfeed = false;    // Paragraph breaks carry a form feed (PDF pages).
  bool decomposed = false;  // Accented letters as base letter + combining mark.
  bool fullwidth = false;   // Digits as U+FF10..U+FF19.
  bool nbsp = false;        // No-break space between a number and its unit.
  bool crlf = false;        // CR LF line endings.

  bool TransformsCore() const {
    return curly || ligatures || decomposed || fullwidth;
  }
};

// Stable storage for generated strings; views stay valid until Reset().
class Arena {
 public:
  std::string_view Store(std::string_view s) {
    if (s.size() > kChunk) s = s.substr(0, kChunk);
    if (chunks_.empty() || used_ + s.size() > kChunk) {
      if (!chunks_.empty()) ++current_;
      if (current_ == chunks_.size()) {
        chunks_.push_back(std::make_unique<char[]>(kChunk));
      }
      used_ = 0;
    }
    char* dst = chunks_[current_].get() + used_;
    std::memcpy(dst, s.data(), s.size());
    used_ += s.size();
    return std::string_view(dst, s.size());
  }

  void Reset() {
    current_ = 0;
    used_ = 0;
  }

 private:
  static constexpr size_t kChunk = 1 << 16;
  std::vector<std::unique_ptr<char[]>> chunks_;
  size_t current_ = 0;
  size_t used_ = 0;
};

enum class Genre : uint8_t {
  kFerry,
  kCoop,
  kWeather,
  kGazette,
  kForum,
  kShop,
  kCouncil,
  kEvents,
  kCount
};

struct Doc {
  std::vector<Token> tokens;
  size_t title_end = 0;  // Tokens [0, title_end) are the title line.
  Style style;
  Genre genre = Genre::kGazette;
  int32_t page_day = 0;  // The page's own date, in days since 1970-01-01.
  std::string_view site;
  std::string_view section;
  Arena arena;

  void Clear() {
    tokens.clear();
    title_end = 0;
    style = Style();
    arena.Reset();
  }
};

// Copies everything except the arena; the copy's views still point into
// `from`, which must outlive `to`.
void CopyContent(const Doc& from, Doc* to) {
  to->Clear();
  to->tokens = from.tokens;
  to->title_end = from.title_end;
  to->style = from.style;
  to->genre = from.genre;
  to->page_day = from.page_day;
  to->site = from.site;
  to->section = from.section;
}

bool HasAsciiAlnum(std::string_view s) {
  for (char c : s) {
    if (IsAsciiAlnum(static_cast<unsigned char>(c))) return true;
  }
  return false;
}

// Words a normaliser would see in a token: space-separated pieces that
// contain an ASCII letter or digit or any non-ASCII character.
uint32_t WordsIn(std::string_view core) {
  uint32_t n = 0;
  bool in_piece = false;
  bool counted = false;
  for (char ch : core) {
    const unsigned char c = static_cast<unsigned char>(ch);
    if (c == ' ') {
      in_piece = false;
      continue;
    }
    if (!in_piece) counted = false;
    in_piece = true;
    if (!counted && (c >= 0x80 || IsAsciiAlnum(c))) {
      ++n;
      counted = true;
    }
  }
  return n;
}

uint32_t CountWords(const std::vector<Token>& tokens) {
  uint32_t n = 0;
  for (const Token& t : tokens) n += WordsIn(t.core);
  return n;
}

// ---------------------------------------------------------------------------
// Sentence templates.
//
// A template is a sequence of whitespace-separated parts. Separators: ' ' is a
// space, '\t' a tab, '\n' a line break, '~' a space that may render as a
// no-break space (number and unit). A part is either a literal word or a
// {PLACEHOLDER}, optionally with punctuation attached before/after.

enum class Fill : uint8_t {
  kLiteral,
  kDet,
  kNoun,
  kPlural,
  kAdj,
  kVerb,
  kPast,
  kAdverb,
  kPrep,
  kConj,
  kPlace,
  kPerson,
  kFirst,
  kSurname,
  kDay,
  kMonth,
  kBoat,
  kGenreNoun,
  kGenrePlural,
  kDir,
  kWeather,
  kSea,
  kVis,
  kColor,
  kUser,
  kEmail,
  kExtra,
  kDate,
  kTime,
  kNum,
  kBig,
  kPrice,
  kTemp,
  kPct,
  kPhone,
  kYear
};

struct Part {
  std::string_view lead;
  std::string_view text;  // Literal text, when fill == kLiteral.
  std::string_view trail;
  Fill fill = Fill::kLiteral;
  Sep sep = Sep::kSpace;
};

using Template = std::vector<Part>;

struct PlaceholderName {
  std::string_view name;
  Fill fill;
};

const PlaceholderName kPlaceholders[] = {
    {"D", Fill::kDet},        {"N", Fill::kNoun},
    {"NS", Fill::kPlural},    {"A", Fill::kAdj},
    {"V", Fill::kVerb},       {"VD", Fill::kPast},
    {"ADV", Fill::kAdverb},   {"PREP", Fill::kPrep},
    {"CONJ", Fill::kConj},    {"P", Fill::kPlace},
    {"PER", Fill::kPerson},   {"FIRST", Fill::kFirst},
    {"SUR", Fill::kSurname},  {"DAY", Fill::kDay},
    {"MONTH", Fill::kMonth},  {"BOAT", Fill::kBoat},
    {"GN", Fill::kGenreNoun}, {"GNS", Fill::kGenrePlural},
    {"DIR", Fill::kDir},      {"WX", Fill::kWeather},
    {"SEA", Fill::kSea},      {"VIS", Fill::kVis},
    {"COLOR", Fill::kColor},  {"USER", Fill::kUser},
    {"EMAIL", Fill::kEmail},  {"X", Fill::kExtra},
    {"DATE", Fill::kDate},    {"TIME", Fill::kTime},
    {"NUM", Fill::kNum},      {"BIG", Fill::kBig},
    {"PRICE", Fill::kPrice},  {"TEMP", Fill::kTemp},
    {"PCT", Fill::kPct},      {"PHONE", Fill::kPhone},
    {"YEAR", Fill::kYear},
};

bool IsLeadPunct(char c) {
  return c == '"' || c == '\'' || c == '(' || c == '[';
}
bool IsTrailPunct(char c) {
  return c == '.' || c == ',' || c == ';' || c == ':' || c == '!' || c == '?' ||
         c == ')' || c == ']' || c == '"' || c == '\'';
}

// Splits ASCII punctuation off both ends; a part that is all punctuation
// (e.g. "-") stays whole as its own core.
void SplitPunct(std::string_view s, Part* part) {
  size_t b = 0;
  size_t e = s.size();
  while (b < e && IsLeadPunct(s[b])) ++b;
  while (e > b && IsTrailPunct(s[e - 1])) --e;
  if (b == e) {
    part->text = s;
    return;
  }
  part->lead = s.substr(0, b);
  part->text = s.substr(b, e - b);
  part->trail = s.substr(e);
}

Part ParsePart(std::string_view s) {
  Part part;
  const size_t open = s.find('{');
  const size_t close = s.find('}');
  if (open == std::string_view::npos || close == std::string_view::npos) {
    SplitPunct(s, &part);
    return part;
  }
  const std::string_view name = s.substr(open + 1, close - open - 1);
  for (const PlaceholderName& p : kPlaceholders) {
    if (p.name == name) part.fill = p.fill;
  }
  if (part.fill == Fill::kLiteral) {
    std::fprintf(stderr, "internal error: unknown placeholder {%.*s}\n",
                 static_cast<int>(name.size()), name.data());
    std::abort();
  }
  part.lead = s.substr(0, open);
  part.trail = s.substr(close + 1);
  if (part.trail.find('{') != std::string_view::npos) {
    std::fprintf(stderr, "internal error: two placeholders in one part\n");
    std::abort();
  }
  return part;
}

Sep SepFor(char c) {
  switch (c) {
    case '\t':
      return Sep::kTab;
    case '\n':
      return Sep::kNewline;
    case '~':
      return Sep::kGlue;
    default:
      return Sep::kSpace;
  }
}

bool IsTemplateSep(char c) {
  return c == ' ' || c == '\t' || c == '\n' || c == '~';
}

// `text` must have static storage duration; parts view into it.
Template ParseTemplate(std::string_view text) {
  Template t;
  size_t i = 0;
  while (i < text.size()) {
    size_t j = i;
    while (j < text.size() && !IsTemplateSep(text[j])) ++j;
    if (j > i) {
      t.push_back(ParsePart(text.substr(i, j - i)));
      if (j < text.size()) t.back().sep = SepFor(text[j]);
    }
    i = j + 1;
  }
  return t;
}

std::vector<Template> ParseAll(const std::vector<const char*>& texts) {
  std::vector<Template> out;
  out.reserve(texts.size());
  for (const char* s : texts) out.push_back(ParseTemplate(s));
  return out;
}

// Prose used by every genre. Slots sit at most three words apart so that two
// unrelated documents rarely share a word 5-gram.
const std::vector<const char*> kGeneralSentences = {
    "{D} {A} {N} {VD} {PREP} {D} {N} {PREP} {P}.",
    "{FIRST} {VD} the {NS} {ADV}, {CONJ} {D} {N} {VD} {PREP} the {A} {N}.",
    "{PER} said the {N} would {V} {D} {A} {N} before {DAY}.",
    "{PREP} {P}, {NS} and {NS} {VD} {ADV} {CONJ} the {A} {N} {VD}.",
    "Some {A} {NS} {VD} the {N} on {DAY}, {CONJ} {FIRST} {VD} {D} {A} {N}.",
    "It was {ADV} {A} {PREP} the {N}, {CONJ} nobody {VD} {D} {NS}.",
    "{FIRST} and {FIRST} {VD} {NUM} {NS} {PREP} the {A} {N} at {P}.",
    "{D} {N} of {P} {VD} {ADV} {PREP} {A} {NS}.",
    "Few {NS} {V} {ADV} {PREP} {D} {A} {N}, {CONJ} {D} {NS} {VD}.",
    "The {A} {NS} {PREP} {P} still {V} {D} {N} {PREP} {NS}.",
    "{PER} {VD} that {D} {N} {VD} {ADV}.",
    "Why would {D} {A} {N} {V} the {NS} {PREP} {P}?",
    "{DAY} brought {A} {NS}, {A} {NS} and {D} {N} {PREP} the {N}.",
    "Nobody at {P} {VD} the {A} {N} {ADV}.",
    "Once the {N} {VD}, {D} {A} {NS} {VD} {PREP} {P}.",
    "{D} {A} {N} and {D} {A} {N} {VD} {PREP} {NS}.",
    "If the {NS} {V} {ADV}, {FIRST} will {V} the {A} {N}.",
    "Between {P} and {P} the {NS} {VD} {A} {CONJ} {A}.",
    "Ask {FIRST} about the {A} {N} {PREP} {D} {N}.",
    "{PREP} the {N}, {D} {A} {NS} {VD} {D} {A} {N} {ADV}.",
    "The {N} {VD} {ADV}; {D} {NS} {VD} {PREP} {P}.",
    "{FIRST} {SUR} {VD} the {N} - {A}, {A} and {ADV} {A}.",
    "{NUM} {NS} {VD} {PREP} {P} {PREP} {D} {A} {N}.",
    "{D} {N} {VD} {D} {A} {N}, {CONJ} {FIRST} {VD} {PREP} {P}.",
    "Every {MONTH} the {NS} of {P} {V} {D} {A} {N}.",
    "{FIRST}'s {N} {VD} {PREP} the {A} {N} {CONJ} {D} {NS} {VD}.",
    "\"{D} {N} {VD} {ADV},\" {FIRST} {VD}, \"{CONJ} the {NS} {VD}.\"",
    "{A} {NS} {VD} {PREP} {D} {N}; {PER} {VD} {NUM} of them.",
    "Down at {P}, {D} {A} {N} {VD} {D} {N} {ADV}.",
    "There were {A} {NS}, {A} {NS} and {NUM} {A} {NS} {PREP} {P}.",
    "{FIRST} {ADV} {VD} {D} {N} {PREP} {D} {A} {N}.",
    "Later, {D} {NS} {VD} {PREP} {P} {CONJ} {FIRST} {VD} the {N}.",
    "The {A} {N} {PREP} {P} {VD} {D} {A} {NS} - {ADV}.",
    "Was {D} {N} {A}, {CONJ} was the {N} {PREP} {P} {A}?",
};

// Per-genre content. Every template list must be non-empty except `lines`
// and `meta`.
struct GenreSpec {
  std::vector<std::string_view> sites;
  std::vector<std::string_view> sections;
  std::vector<const char*> titles;
  std::vector<const char*> meta;        // One line after the title.
  std::vector<const char*> sentences;   // Genre prose.
  std::vector<const char*> lines;       // Structured rows, one per line.
  std::vector<std::string_view> nouns;  // {GN}; "a/b" = irregular plural.
  uint32_t genre_sentence_percent;      // Share of prose from `sentences`.
  uint32_t block_percent;               // Paragraphs that are blocks of rows.
  bool title_case;                      // Capitalise title words.
  // Percent of pages with each Style flag.
  uint32_t curly, pdf, decomposed, fullwidth, nbsp, crlf;
};

std::vector<GenreSpec> MakeGenres() {
  std::vector<GenreSpec> g(static_cast<size_t>(Genre::kCount));
  g[static_cast<size_t>(Genre::kFerry)] = {
      {"vellory-ferries", "tarnwick-harbour"},
      {"timetables", "service-notices"},
      {"{P} to {P} sailings from {DATE}",
       "Service notice: {BOAT} {GN} works, {DATE}",
       "Winter timetable {P} - {P}, {DATE}"},
      {"Updated {DATE} {TIME} by the {P} {GN} office"},
      {"The {BOAT} will {V} {PREP} the {GN} at {P} from {TIME} on {DAY}.",
       "Passengers with {GNS} should {V} the {A} {GN} {ADV}.",
       "Single fares {PREP} {P} cost {PRICE} merks; {A} {GNS} travel at "
       "{PRICE} merks.",
       "Because of the {A} {N}, the {TIME} sailing from {P} will {V} {PREP} "
       "{P}.",
       "{FIRST} at the {P} {GN} can be reached on {PHONE}.",
       "On {DAY} the {BOAT} {VD} {NUM} {GNS} {PREP} {P} {ADV}.",
       "{A} {GNS} may {V} the {GN} until {TIME}, {CONJ} {D} {N} {VD}."},
      {"{TIME}\t{P}\t{TIME}\t{P}\t{BOAT}", "{DAY}\t{TIME}\t{P}\t{GN} {NUM}"},
      {"sailing", "crossing", "vessel",  "slipway", "pier",
       "berth",   "ramp",     "deck",    "ticket",  "harbour",
       "gangway", "trailer",  "crew",    "skipper", "terminal",
       "fare",    "linkspan", "mooring", "car",     "bicycle"},
      45,
      30,
      false,
      10,
      0,
      3,
      2,
      6,
      4};
  g[static_cast<size_t>(Genre::kCoop)] = {
      {"tarnwick-coop", "brellan-stores", "osk-community-shop"},
      {"notices", "members"},
      {"Notice to members: {A} {GNS} at {P}, {DATE}",
       "{P} co-op {GN} news, {DATE}", "{A} {GN} for {P} members ({DATE})"},
      {"Posted {DATE} by {PER}, {P} co-op"},
      {"The {P} co-op will open at {TIME} on {DAY} {CONJ} the {A} {GN} "
       "{VD}.",
       "Members can {V} {NUM} {GNS} each for {PRICE} merks.",
       "Please {V} your {A} {GNS} to {FIRST} ({PHONE}) or {EMAIL}.",
       "Deliveries {PREP} {P} {VD} {ADV} this week; {D} {GN} costs {PRICE} "
       "merks.",
       "The annual {GN} {VD} {PCT} of the {NS} {PREP} {P}.",
       "{FIRST} {VD} {NUM} {GNS} {PREP} the {A} {N} on {DAY}."},
      {"{GN}\t{PRICE}\t{NUM} left", "{DAY} {TIME} - {TIME}\t{A} {GN}"},
      {"delivery", "order",         "membership", "dividend",  "loaf/loaves",
       "crate",    "shelf/shelves", "fridge",     "freezer",   "sack",
       "bale",     "meeting",       "rota",       "volunteer", "voucher",
       "raffle",   "stocktake",     "coupon",     "flour",     "paraffin"},
      50,
      15,
      false,
      15,
      0,
      4,
      2,
      4,
      6};
  g[static_cast<size_t>(Genre::kWeather)] = {
      {"isles-met", "fennet-weather-station"},
      {"bulletins", "inshore"},
      {"Inshore bulletin for {P} Sound, {DATE}",
       "Weather outlook {DATE}: {A} {GNS} over {P}",
       "Gale warning {P} to {P}, issued {DATE} {TIME}"},
      {"Issued {TIME} {DATE} by the {P} station"},
      {"{A} {GNS} expected by {TIME}, {CONJ} {D} {N} {PREP} {P} {VD} "
       "{ADV}.",
       "Skippers {PREP} {P} should {V} the {A} {GN} {ADV}.",
       "{FIRST} at {P} {VD} {NUM}~mm of rain {PREP} the {N}.",
       "The {GN} {VD} {ADV} {PREP} {P} {CONJ} the {A} {NS} {VD}.",
       "Next bulletin {TIME} {DAY}; {A} {GNS} {PREP} {P}."},
      {"Wind {DIR} {NUM} to {NUM} knots, {WX} {PREP} {P}.",
       "Sea state {SEA}, visibility {VIS}, air {TEMP}.",
       "{P}: {WX}, {TEMP}, gusts {NUM}~knots.",
       "High water {P} {TIME}, {BIG}~mm swell {DIR}."},
      {"gust", "shower", "squall", "front", "swell", "band", "ridge", "trough",
       "frost", "gale", "cloud", "fogbank"},
      35,
      45,
      false,
      5,
      0,
      3,
      2,
      25,
      4};
  g[static_cast<size_t>(Genre::kGazette)] = {
      {"vellory-gazette"},
      {"news", "features", "letters"},
      {"{A} {GN} {VD} at {P}", "{P} {NS} {V} {A} {GN}", "{PER} {VD} {A} {GN}",
       "{A} {NS} and the {GN} of {P}"},
      {"{P}, {DATE} - by {PER}"},
      {"\"{D} {N} {VD} {ADV},\" said {PER}, who {VD} the {GN} in {YEAR}.",
       "The {GN} {PREP} {P} {VD} {BIG} {NS} last {MONTH}.",
       "Councillor {PER} {VD} the {A} {GN} {PREP} {P}.",
       "{PCT} of {NS} {PREP} {P} {VD} the {GN}, {CONJ} {D} {A} {N} {VD}.",
       "Readers may {V} the {A} {GN} at {P} {PREP} {DAY}.",
       "In {YEAR} the {GN} {VD} {NUM} {A} {NS} {PREP} {P}.",
       "{FIRST} {SUR}, {NUM}, {VD} the {GN} {ADV}."},
      {},
      {"harbour", "lifeboat", "school", "regatta", "festival", "grant",
       "contract", "lighthouse", "museum", "census", "election", "bridge",
       "quay", "hall", "archive", "survey", "orchestra", "library"},
      40,
      0,
      true,
      55,
      8,
      5,
      1,
      3,
      2};
  g[static_cast<size_t>(Genre::kForum)] = {
      {"harbourboard", "islanders-forum"},
      {"threads", "buy-sell", "general"},
      {"Re: {A} {NS} {PREP} {P}?", "Anyone {VD} the {GN} {PREP} {P}?",
       "{A} {GN} for sale, {PRICE} merks", "Re: re: {GN} at {P} ({DATE})"},
      {"Posted by {USER} at {TIME}, {DATE}"},
      {"honestly the {N} {PREP} {P} is {A}, {FIRST} {VD} it {ADV}.",
       "\"{D} {N} {VD} {ADV}\" - that is what {USER} {VD}.",
       "lol {CONJ} {D} {A} {GN} {VD} {PREP} {P} ¯\\_(ツ)_/¯",
       "anyone know if the {GN} {PREP} {P} still {V} {NS}?",
       "thanks {FIRST}!! {D} {A} {N} {VD} {ADV}.",
       "my {GN} {VD} {NUM} {NS} {PREP} {P} last {DAY}...",
       "@{USER} {D} {GN} is {A}, {V} it {PREP} {P} first.",
       "PM me, {PRICE} merks or {V} {D} {A} {N}.",
       "tbh {D} {GN} {VD} {PREP} {P} {ADV}, {CONJ} {FIRST} {VD} {NS}.",
       "+1 to what {USER} {VD} about the {A} {GN}.",
       "Same here, {D} {GN} at {P} {VD} {NUM} {NS} {ADV}.",
       "Edit: the {A} {GN} {VD} {PREP} {P} on {DAY} {TIME}."},
      {},
      {"ferry", "fiddle", "kayak", "tractor", "boat", "dog", "bike", "campsite",
       "generator", "peat", "stove", "jumper", "pram", "trailer", "quad",
       "puppy"},
      55,
      0,
      false,
      20,
      0,
      6,
      5,
      2,
      2};
  g[static_cast<size_t>(Genre::kShop)] = {
      {"brellan-chandlery", "osk-bakehouse", "fennet-wool", "lissow-pottery"},
      {"products", "shop"},
      {"{A} {GN} ({COLOR}) - {PRICE} merks", "{P} {GN}, {A} and {A}",
       "{COLOR} {GN} from {P}, {DATE} batch"},
      {"In stock {DATE}: {NUM} items, dispatch from {P}"},
      {"Hand-made on {P} from {A} {NS} and {A} {N}.",
       "Price {PRICE} merks, {NUM} left in stock.",
       "Each {GN} is {ADV} {A} {CONJ} {A}, {PREP} {D} {A} {N}.",
       "Posted {PREP} the isles within {NUM} days; orders over {PRICE} merks "
       "ship free.",
       "Questions? Ask {FIRST} on {PHONE} or {EMAIL}.",
       "{FIRST} {VD} this {GN} {ADV} {PREP} the {A} {N}."},
      {"Size\t{NUM}~cm by {NUM}~cm", "Weight\t{BIG}~g",
       "Colour\t{COLOR}, {COLOR}", "Price\t{PRICE} merks ({PCT} off)"},
      {"jumper", "scarf/scarves", "kettle", "lantern", "mug",
       "bowl",   "loaf/loaves",   "creel",  "rope",    "cleat",
       "anchor", "oilskin",       "hat",    "mitten",  "vase",
       "jar",    "bannock",       "teapot", "fleece",  "shackle"},
      50,
      25,
      true,
      10,
      0,
      6,
      6,
      20,
      3};
  g[static_cast<size_t>(Genre::kCouncil)] = {
      {"vellory-council", "culdary-parish"},
      {"minutes", "agendas"},
      {"Minutes of the {P} {GN}, {DATE}", "Agenda: {A} {GN} {PREP} {P}",
       "{GN} report for {P}, {DATE}"},
      {"Present: {PER}, {PER}, {PER} and {PER}."},
      {"{PER} proposed that the {GN} {V} {D} {A} {N}.",
       "Agreed {NUM} votes to {NUM}; {FIRST} {VD} the {NS} {ADV}.",
       "The clerk {VD} {D} {N} {PREP} {P} costing {BIG} merks.",
       "{PER} asked why the {GN} {PREP} {P} {VD} {ADV}.",
       "The {A} {GN} will {V} {PREP} {DATE}, {CONJ} {D} {NS} {VD}."},
      {"Item {NUM}: {A} {GN} {PREP} {P}", "Item {NUM}: {GN} ({PRICE} merks)"},
      {"committee", "budget", "road", "grant", "application", "survey",
       "harbour", "bin", "collection", "streetlight", "footpath", "ditch",
       "cemetery", "playpark", "ferry", "levy"},
      55,
      20,
      false,
      5,
      2,
      3,
      1,
      2,
      40};
  g[static_cast<size_t>(Genre::kEvents)] = {
      {"lissow-library", "tarnwick-hall", "isles-whats-on"},
      {"whats-on", "events"},
      {"{A} {GN} at {P}, {DATE}", "What's on at {P}: {A} {GNS}",
       "{GN} night, {P} hall, {DATE}"},
      {"Listed {DATE}; contact {FIRST} on {PHONE}"},
      {"Join {FIRST} for {D} {A} {GN} at {P} hall on {DAY} from {TIME}.",
       "Tickets {PRICE} merks, children {PRICE} merks, under {NUM}s free.",
       "Bring {A} {NS} {CONJ} {D} {N}; {FIRST} will {V} the {GNS}.",
       "Doors open {TIME}, {A} {GN} at {TIME}.",
       "The {GN} {PREP} {P} {VD} {NUM} {NS} {ADV} last {MONTH}."},
      {"{DAY} {TIME}\t{A} {GN}\t{P}", "{DATE}\t{GN}\t{PRICE} merks"},
      {"quiz", "dance", "concert", "ceilidh", "market", "fair", "workshop",
       "screening", "supper", "auction", "recital", "exhibition", "swap",
       "ramble", "bingo", "knit-along"},
      50,
      20,
      true,
      25,
      0,
      4,
      3,
      10,
      3};
  return g;
}

// Parsed, ready-to-use form of the static tables above.
struct GenreData {
  const GenreSpec* spec;
  std::vector<Template> titles, meta, sentences, lines;
  Inflected nouns;
};

struct Tables {
  std::vector<GenreSpec> specs = MakeGenres();
  std::vector<GenreData> genres;
  std::vector<Template> general = ParseAll(kGeneralSentences);
  std::vector<Template> wrap_headers =
      ParseAll({"Syndicated from {X}:", "Reposted with thanks to {X}.",
                "From our partners at {X} -", "Originally published by {X}.",
                "Shared from {X} with permission."});
  std::vector<Template> wrap_footers = ParseAll(
      {"Read more at {X}.", "Shared via {X}; rights remain with the author.",
       "Comments are closed on {X} pages.", "This piece first ran on {X}.",
       "Mirrored by {X} - report broken links."});
  std::vector<std::string_view> mirrors = {
      "isles-digest", "gazette-mirror",      "northsound-reader",
      "skerrywire",   "archipelago-archive", "islandnews-mirror"};
  std::deque<std::string> storage;

  Tables() {
    for (const GenreSpec& spec : specs) {
      GenreData d;
      d.spec = &spec;
      d.titles = ParseAll(spec.titles);
      d.meta = ParseAll(spec.meta);
      d.sentences = ParseAll(spec.sentences);
      d.lines = ParseAll(spec.lines);
      d.nouns = InflectWords(spec.nouns, RegularPlural, &storage);
      genres.push_back(std::move(d));
    }
  }
};

const Tables& Tab() {
  static const Tables* tables = new Tables();
  return *tables;
}

// ---------------------------------------------------------------------------
// Slot values.

// First day of the crawl window; page dates cluster around it.
constexpr int32_t kCrawlStartDay = DaysFromCivil(2026, 11, 1);
static_assert(kCrawlStartDay == 20758, "calendar arithmetic");

void AppendDate(int32_t days, uint8_t fmt, std::string* out) {
  const CivilDate c = CivilFromDays(days);
  const Lexicon& lex = Lex();
  switch (fmt) {
    case 0:
      AppendUint(c.day, 1, out);
      *out += ' ';
      *out += lex.months[c.month - 1];
      *out += ' ';
      AppendUint(static_cast<uint64_t>(c.year), 4, out);
      break;
    case 1:
      AppendIsoDate(days, out);
      break;
    case 2: {
      // 1970-01-01 was a Thursday; lex.days starts at Monday.
      const int32_t weekday = ((days % 7) + 7 + 3) % 7;
      *out += lex.days[static_cast<size_t>(weekday)];
      *out += ' ';
      AppendUint(c.day, 1, out);
      *out += ' ';
      *out += lex.months[c.month - 1];
      break;
    }
    default:
      AppendUint(c.day, 2, out);
      *out += '/';
      AppendUint(c.month, 2, out);
      *out += '/';
      AppendUint(static_cast<uint64_t>(c.year), 4, out);
      break;
  }
}

// Renders a fresh random value for a number-like slot.
void AppendSlotValue(Slot slot, Rng* rng, std::string* out) {
  switch (slot) {
    case Slot::kTime:
      AppendUint(static_cast<uint64_t>(rng->Between(6, 21)), 2, out);
      *out += ':';
      AppendUint(static_cast<uint64_t>(rng->Between(0, 11) * 5), 2, out);
      break;
    case Slot::kNum:
      AppendUint(static_cast<uint64_t>(rng->Between(2, 60)), 1, out);
      break;
    case Slot::kBig:
      AppendUint(static_cast<uint64_t>(rng->Between(100, 9999)), 1, out);
      break;
    case Slot::kPrice:
      AppendUint(static_cast<uint64_t>(rng->Between(1, 400)), 1, out);
      *out += '.';
      AppendUint(static_cast<uint64_t>(rng->Between(0, 19) * 5), 2, out);
      break;
    case Slot::kTemp:
      AppendInt(rng->Between(-3, 24), out);
      *out += "°C";
      break;
    case Slot::kPct:
      AppendUint(static_cast<uint64_t>(rng->Between(3, 97)), 1, out);
      *out += '%';
      break;
    case Slot::kPhone:
      AppendUint(static_cast<uint64_t>(rng->Between(400, 499)), 3, out);
      *out += ' ';
      AppendUint(static_cast<uint64_t>(rng->Between(0, 9999)), 4, out);
      break;
    case Slot::kYear:
      AppendUint(static_cast<uint64_t>(rng->Between(1890, 2025)), 4, out);
      break;
    case Slot::kNone:
    case Slot::kDate:
      break;
  }
}

Slot SlotFor(Fill f) {
  switch (f) {
    case Fill::kDate:
      return Slot::kDate;
    case Fill::kTime:
      return Slot::kTime;
    case Fill::kNum:
      return Slot::kNum;
    case Fill::kBig:
      return Slot::kBig;
    case Fill::kPrice:
      return Slot::kPrice;
    case Fill::kTemp:
      return Slot::kTemp;
    case Fill::kPct:
      return Slot::kPct;
    case Fill::kPhone:
      return Slot::kPhone;
    case Fill::kYear:
      return Slot::kYear;
    default:
      return Slot::kNone;
  }
}

// ---------------------------------------------------------------------------
// Base document generation.

bool IsSmallTitleWord(std::string_view w) {
  static const std::string_view kSmall[] = {"the", "of",   "at", "to",
                                            "a",   "on",   "in", "for",
                                            "and", "from", "by", "with"};
  for (std::string_view s : kSmall) {
    if (s == w) return true;
  }
  return false;
}

// Appends tokens for templates to one Doc, tracking an estimate of the
// rendered size so the caller can stop at a target length.
class DocBuilder {
 public:
  DocBuilder(Doc* doc, const GenreData* genre, Rng* rng)
      : doc_(doc), genre_(genre), rng_(rng) {}

  size_t bytes() const { return bytes_; }

  // Emits one template. `first_case` applies to the first token (sentence
  // start); `word_case` to the rest (title case, upper-case headings).
  void Emit(const Template& t, Case first_case, Case word_case,
            std::string_view extra = {}) {
    first_case_ = first_case;
    word_case_ = word_case;
    first_pending_ = true;
    for (const Part& part : t) EmitPart(part, extra);
  }

  // Sets the separator after the last token (end of line or paragraph).
  void EndWith(Sep sep) {
    if (!doc_->tokens.empty()) doc_->tokens.back().sep = sep;
  }

 private:
  void EmitPart(const Part& part, std::string_view extra) {
    const size_t first = doc_->tokens.size();
    FillPart(part, extra);
    if (doc_->tokens.size() == first) return;
    doc_->tokens[first].lead = part.lead;
    doc_->tokens.back().trail = part.trail;
    doc_->tokens.back().sep = part.sep;
    bytes_ += part.lead.size() + part.trail.size();
  }

  void Push(std::string_view core, Slot slot = Slot::kNone, uint8_t fmt = 0) {
    Case cas = word_case_;
    if (first_pending_) {
      cas = first_case_;
      first_pending_ = false;
    } else if (cas == Case::kCapital && IsSmallTitleWord(core)) {
      cas = Case::kAsIs;
    }
    Token& t = doc_->tokens.emplace_back();
    t.core = core;
    t.cas = cas;
    t.slot = slot;
    t.fmt = fmt;
    bytes_ += core.size() + 1;
  }

  std::string_view Store(const std::string& s) { return doc_->arena.Store(s); }

  void PushWords(std::string_view text) {
    for (std::string_view w : SplitWords(text)) Push(w);
  }

  void FillPart(const Part& part, std::string_view extra) {
    const Lexicon& lex = Lex();
    Rng& r = *rng_;
    switch (part.fill) {
      case Fill::kLiteral:
        Push(part.text);
        break;
      case Fill::kDet:
        Push(r.Pick(lex.determiners));
        break;
      case Fill::kNoun:
        Push(r.Pick(lex.nouns.base));
        break;
      case Fill::kPlural:
        Push(r.Pick(lex.nouns.inflected));
        break;
      case Fill::kAdj:
        Push(r.Pick(lex.adjectives));
        break;
      case Fill::kVerb:
        Push(r.Pick(lex.verbs.base));
        break;
      case Fill::kPast:
        Push(r.Pick(lex.verbs.inflected));
        break;
      case Fill::kAdverb:
        Push(r.Pick(lex.adverbs));
        break;
      case Fill::kPrep:
        Push(r.Pick(lex.prepositions));
        break;
      case Fill::kConj:
        Push(r.Pick(lex.conjunctions));
        break;
      case Fill::kPlace:
        Push(r.Pick(lex.places));
        break;
      case Fill::kPerson:
        Push(r.Pick(lex.first_names));
        Push(r.Pick(lex.surnames));
        break;
      case Fill::kFirst:
        Push(r.Pick(lex.first_names));
        break;
      case Fill::kSurname:
        Push(r.Pick(lex.surnames));
        break;
      case Fill::kDay:
        Push(r.Pick(lex.days));
        break;
      case Fill::kMonth:
        Push(r.Pick(lex.months));
        break;
      case Fill::kBoat:
        Push(r.Pick(lex.boat_first));
        Push(r.Pick(lex.boat_second));
        break;
      case Fill::kGenreNoun:
        Push(r.Pick(genre_->nouns.base));
        break;
      case Fill::kGenrePlural:
        Push(r.Pick(genre_->nouns.inflected));
        break;
      case Fill::kDir:
        Push(r.Pick(lex.directions));
        break;
      case Fill::kWeather:
        Push(r.Pick(lex.weather));
        break;
      case Fill::kSea:
        Push(r.Pick(kSeaStates));
        break;
      case Fill::kVis:
        Push(r.Pick(kVisibility));
        break;
      case Fill::kColor:
        Push(r.Pick(lex.colors));
        break;
      case Fill::kUser:
        Push(Store(MakeUser()));
        break;
      case Fill::kEmail:
        Push(Store(MakeEmail()));
        break;
      case Fill::kExtra:
        PushWords(extra);
        break;
      case Fill::kDate: {
        const uint8_t fmt = static_cast<uint8_t>(r.Below(4));
        std::string s;
        AppendDate(doc_->page_day, fmt, &s);
        Push(Store(s), Slot::kDate, fmt);
        break;
      }
      default: {
        const Slot slot = SlotFor(part.fill);
        std::string s;
        AppendSlotValue(slot, rng_, &s);
        Push(Store(s), slot);
        break;
      }
    }
  }

  std::string MakeUser() {
    const Lexicon& lex = Lex();
    std::string s(rng_->Percent(50) ? rng_->Pick(lex.nouns.base)
                                    : rng_->Pick(lex.adjectives));
    s += '_';
    s += rng_->Pick(lex.nouns.base);
    AppendUint(rng_->Below(100), 2, &s);
    return s;
  }

  std::string MakeEmail() {
    std::string s;
    for (char c : rng_->Pick(Lex().first_names)) {
      if (static_cast<unsigned char>(c) < 0x80) {
        s += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
      }
    }
    s += '@';
    s += doc_->site;
    s += ".example";
    return s;
  }

  Doc* doc_;
  const GenreData* genre_;
  Rng* rng_;
  size_t bytes_ = 0;
  Case first_case_ = Case::kAsIs;
  Case word_case_ = Case::kAsIs;
  bool first_pending_ = false;
};

Style DrawStyle(const GenreSpec& spec, Rng* rng) {
  Style s;
  s.curly = rng->Percent(spec.curly);
  s.ligatures = s.formfeed = rng->Percent(spec.pdf);
  s.decomposed = rng->Percent(spec.decomposed);
  s.fullwidth = rng->Percent(spec.fullwidth);
  s.nbsp = rng->Percent(spec.nbsp);
  s.crlf = rng->Percent(spec.crlf);
  return s;
}

// Text length target: triangular on [mean/4, 7*mean/4], mean `mean_bytes`.
size_t DrawTargetBytes(uint32_t mean_bytes, Rng* rng) {
  const uint64_t spread = 3ULL * mean_bytes / 4;
  return mean_bytes / 4 + rng->Below(spread + 1) + rng->Below(spread + 1);
}

// Sentence-start case: placeholders are capitalised, literals are written
// as they should appear, and handles/addresses are never touched.
Case FirstCase(const Template& t) {
  const Fill f = t.front().fill;
  return f == Fill::kLiteral || f == Fill::kUser || f == Fill::kEmail
             ? Case::kAsIs
             : Case::kCapital;
}

// Emits one paragraph (prose, or a block of structured rows), stopping early
// once the document reaches `stop_at` bytes.
void EmitParagraph(const GenreData& g, size_t stop_at, DocBuilder* b,
                   Rng* rng) {
  const GenreSpec& spec = *g.spec;
  if (!g.lines.empty() && rng->Percent(spec.block_percent)) {
    const int64_t rows = rng->Between(3, 6);
    for (int64_t i = 0; i < rows && b->bytes() < stop_at; ++i) {
      const Template& row = rng->Pick(g.lines);
      b->Emit(row, FirstCase(row), Case::kAsIs);
      b->EndWith(Sep::kNewline);
    }
  } else {
    const int64_t sentences = rng->Between(2, 5);
    for (int64_t i = 0; i < sentences && b->bytes() < stop_at; ++i) {
      const bool genre_own = rng->Percent(spec.genre_sentence_percent);
      const Template& t = rng->Pick(genre_own ? g.sentences : Tab().general);
      b->Emit(t, FirstCase(t), Case::kAsIs);
    }
  }
  b->EndWith(Sep::kPara);
}

// Generates the base (or unique) document for `seed`. Pure function of its
// arguments: family variants regenerate their base through it.
void BuildBase(uint64_t seed, Genre genre, uint32_t mean_bytes, Doc* doc) {
  const GenreData& g = Tab().genres[static_cast<size_t>(genre)];
  const GenreSpec& spec = *g.spec;
  Rng rng(seed);
  doc->Clear();
  doc->genre = genre;
  doc->site = rng.Pick(spec.sites);
  doc->section = rng.Pick(spec.sections);
  doc->page_day = kCrawlStartDay - 92 + static_cast<int32_t>(rng.Below(142));
  doc->style = DrawStyle(spec, &rng);
  // Stop about half a sentence early: the last sentence overshoots.
  const size_t target = DrawTargetBytes(mean_bytes, &rng);
  const size_t stop_at = target > 160 ? target - 40 : 120;

  DocBuilder b(doc, &g, &rng);
  const bool shout = genre == Genre::kWeather && rng.Percent(30);
  b.Emit(
      rng.Pick(g.titles), shout ? Case::kUpper : Case::kCapital,
      shout ? Case::kUpper : (spec.title_case ? Case::kCapital : Case::kAsIs));
  b.EndWith(Sep::kNewline);
  doc->title_end = doc->tokens.size();
  if (!g.meta.empty()) {
    b.Emit(rng.Pick(g.meta), Case::kCapital, Case::kAsIs);
  }
  b.EndWith(Sep::kPara);
  while (b.bytes() < stop_at) EmitParagraph(g, stop_at, &b, &rng);
  b.EndWith(Sep::kNone);
}

// ---------------------------------------------------------------------------
// Variants. Each is derived from the base document only (never from another
// variant), so its distance to the base is known exactly.

enum class Kind : uint8_t {
  kUnique,
  kBase,
  kExact,
  kEdit,
  kTemplate,
  kWrap,
  kCasePunct
};

const char* KindName(Kind k) {
  switch (k) {
    case Kind::kUnique:
      return "unique";
    case Kind::kBase:
      return "base";
    case Kind::kExact:
      return "exact";
    case Kind::kEdit:
      return "edit";
    case Kind::kTemplate:
      return "template";
    case Kind::kWrap:
      return "wrap";
    case Kind::kCasePunct:
      return "case-punct";
  }
  return "?";
}

// Where a variant's URL comes from.
struct VariantResult {
  uint32_t basis_points = 0;
  bool reuse_base_url = false;  // Base URL plus `query`.
  std::string query;
};

std::string_view RandomWord(Rng* rng) {
  const Lexicon& lex = Lex();
  switch (rng->Below(4)) {
    case 0:
      return rng->Pick(lex.adjectives);
    case 1:
      return rng->Pick(lex.verbs.inflected);
    default:
      return rng->Pick(lex.nouns.base);
  }
}

// The "stronger" of two separators, so deleting a word keeps line structure.
Sep StrongerSep(Sep a, Sep b) { return a > b ? a : b; }

// Applies exactly round(permille/1000 * words) word operations (substitute,
// insert before, delete; equally likely) at distinct word positions.
void ApplyEdits(const Doc& base, uint32_t permille, Rng* rng, Doc* out) {
  std::vector<uint32_t> candidates;
  for (size_t i = 0; i < base.tokens.size(); ++i) {
    const Token& t = base.tokens[i];
    if (t.slot == Slot::kNone && HasAsciiAlnum(t.core)) {
      candidates.push_back(static_cast<uint32_t>(i));
    }
  }
  const uint64_t words = CountWords(base.tokens);
  uint64_t k = (permille * words + 500) / 1000;
  k = std::max<uint64_t>(k, 1);
  k = std::min<uint64_t>(k, candidates.size());
  std::vector<uint8_t> op(base.tokens.size(), 0);  // 1 sub, 2 ins, 3 del.
  for (uint64_t i = 0; i < k; ++i) {
    const size_t j = i + rng->Below(candidates.size() - i);
    std::swap(candidates[i], candidates[j]);
    op[candidates[i]] = static_cast<uint8_t>(1 + rng->Below(3));
  }

  CopyContent(base, out);
  out->tokens.clear();
  size_t title_end = base.title_end;
  for (size_t i = 0; i < base.tokens.size(); ++i) {
    Token t = base.tokens[i];
    switch (op[i]) {
      case 1:
        t.core = RandomWord(rng);
        break;
      case 2: {
        Token extra;
        extra.core = RandomWord(rng);
        out->tokens.push_back(extra);
        if (i < base.title_end) ++title_end;
        break;
      }
      case 3:
        if (!out->tokens.empty()) {
          out->tokens.back().sep = StrongerSep(out->tokens.back().sep, t.sep);
          if (i + 1 == base.tokens.size()) out->tokens.back().sep = Sep::kNone;
        }
        if (i < base.title_end) --title_end;
        continue;
    }
    out->tokens.push_back(t);
  }
  out->title_end = std::max<size_t>(title_end, 1);
}

// Gives the page a new date and redraws 1-3 of its other numbers; counts the
// words whose text changed.
uint32_t ApplyTemplate(const Doc& base, Rng* rng, Doc* out) {
  CopyContent(base, out);
  int32_t delta = static_cast<int32_t>(rng->Between(1, 90));
  if (rng->Percent(50)) delta = -delta;
  out->page_day = base.page_day + delta;

  std::vector<size_t> numbers;
  uint32_t changed = 0;
  std::string s;
  for (size_t i = 0; i < out->tokens.size(); ++i) {
    Token& t = out->tokens[i];
    if (t.slot == Slot::kNone) continue;
    if (t.slot != Slot::kDate) {
      numbers.push_back(i);
      continue;
    }
    s.clear();
    AppendDate(out->page_day, t.fmt, &s);
    if (s != t.core) changed += WordsIn(t.core);
    t.core = out->arena.Store(s);
  }
  const size_t redraw = std::min<size_t>(numbers.size(), rng->Between(1, 3));
  for (size_t i = 0; i < redraw; ++i) {
    const size_t j = i + rng->Below(numbers.size() - i);
    std::swap(numbers[i], numbers[j]);
    Token& t = out->tokens[numbers[i]];
    for (int attempt = 0; attempt < 8; ++attempt) {
      s.clear();
      AppendSlotValue(t.slot, rng, &s);
      if (s != t.core) break;
    }
    if (s != t.core) changed += WordsIn(t.core);
    t.core = out->arena.Store(s);
  }
  return changed;
}

// Human-readable name of a site: "vellory-gazette" -> "the Vellory Gazette".
std::string DisplayName(std::string_view site) {
  std::string s = "the ";
  bool start = true;
  for (char c : site) {
    if (c == '-') {
      s += ' ';
      start = true;
    } else {
      s += start
               ? static_cast<char>(std::toupper(static_cast<unsigned char>(c)))
               : c;
      start = false;
    }
  }
  return s;
}

// Adds a short syndication header and/or footer naming the source and the
// mirror; counts the added words.
uint32_t ApplyWrap(const Doc& base, std::string_view mirror, Rng* rng,
                   Doc* out) {
  CopyContent(base, out);
  const Tables& tab = Tab();
  const GenreData& g = tab.genres[static_cast<size_t>(base.genre)];
  const uint64_t mode = rng->Below(5);  // 0-1 header, 2 footer, 3-4 both.
  const bool header = mode != 2;
  const bool footer = mode >= 2;
  out->site = mirror;
  out->section = "syndicated";

  Doc extra;
  extra.site = mirror;
  DocBuilder b(&extra, &g, rng);
  std::vector<Token> head, foot;
  const std::string source = DisplayName(base.site);
  const std::string host = std::string(mirror) + ".example";
  if (header) {
    b.Emit(rng->Pick(tab.wrap_headers), Case::kCapital, Case::kAsIs, source);
    b.EndWith(Sep::kPara);
    head = extra.tokens;
    extra.tokens.clear();
  }
  if (footer) {
    b.Emit(rng->Pick(tab.wrap_footers), Case::kCapital, Case::kAsIs, host);
    b.EndWith(Sep::kNone);
    foot = extra.tokens;
  }
  // Literal and {X} text above is static or owned by `source`/`host`; move it
  // into the output arena so it outlives this function.
  for (std::vector<Token>* part : {&head, &foot}) {
    for (Token& t : *part) t.core = out->arena.Store(t.core);
  }
  std::vector<Token> tokens = std::move(head);
  tokens.insert(tokens.end(), out->tokens.begin(), out->tokens.end());
  if (footer) {
    tokens.back().sep = Sep::kPara;
    tokens.insert(tokens.end(), foot.begin(), foot.end());
  }
  out->title_end += tokens.size() - out->tokens.size() - foot.size();
  out->tokens = std::move(tokens);
  return CountWords(out->tokens) - CountWords(base.tokens);
}

bool IsAllAsciiPunct(std::string_view s) {
  for (char c : s) {
    if (!std::ispunct(static_cast<unsigned char>(c))) return false;
  }
  return true;
}

Case RandomCase(Rng* rng) {
  switch (rng->Below(3)) {
    case 0:
      return Case::kUpper;
    case 1:
      return Case::kCapital;
    default:
      return Case::kLower;
  }
}

Sep PerturbSep(Sep sep, Rng* rng) {
  const uint64_t r = rng->Below(100);
  switch (sep) {
    case Sep::kSpace:
      if (r < 4) return Sep::kSpace2;
      if (r < 6) return Sep::kTab;
      if (r < 8) return Sep::kNewline;
      return sep;
    case Sep::kPara:
      return r < 30 ? Sep::kNewline : sep;
    case Sep::kNewline:
      return r < 20 ? Sep::kPara : sep;
    default:
      return sep;
  }
}

// Same words; different case, punctuation, whitespace and Unicode forms.
// Identical to the base after NFKC, case folding, dropping punctuation and
// collapsing whitespace.
void ApplyCasePunct(const Doc& base, Rng* rng, Doc* out) {
  CopyContent(base, out);
  const uint64_t mode = rng->Below(3);
  static const std::string_view kAddable[] = {",", ";", "!", "."};
  for (size_t i = 0; i < out->tokens.size(); ++i) {
    Token& t = out->tokens[i];
    if (mode == 0) {
      t.cas = Case::kLower;
    } else if (mode == 1 && i < out->title_end) {
      t.cas = Case::kUpper;
    } else if (rng->Percent(mode == 1 ? 10 : 25)) {
      t.cas = RandomCase(rng);
    }
    // Attached text such as the "'s" of a possessive is part of the word.
    if (IsAllAsciiPunct(t.trail) && !t.trail.empty() && rng->Percent(25)) {
      t.trail = {};
    } else if (t.trail.empty() && rng->Percent(4)) {
      t.trail = kAddable[rng->Below(4)];
    }
    if (IsAllAsciiPunct(t.lead) && !t.lead.empty() && rng->Percent(50)) {
      t.lead = {};
    }
    t.sep = PerturbSep(t.sep, rng);
  }
  Style& s = out->style;
  s.curly = !s.curly;
  if (rng->Percent(50)) s.ligatures = s.formfeed = !s.ligatures;
  if (rng->Percent(30)) s.decomposed = !s.decomposed;
  if (rng->Percent(20)) s.fullwidth = !s.fullwidth;
  if (rng->Percent(50)) s.nbsp = !s.nbsp;
  if (rng->Percent(30)) s.crlf = !s.crlf;
  if (rng->Percent(30)) out->tokens.back().sep = Sep::kNewline;
}

// ---------------------------------------------------------------------------
// Rendering.

// Upper/lower-cases ASCII and the Latin-1 letters of U+00C0..U+00FE (UTF-8
// lead byte 0xC3); other characters pass through unchanged.
void AppendCased(std::string_view s, Case cas, std::string* out) {
  bool first = true;
  for (size_t i = 0; i < s.size(); ++i) {
    const unsigned char c = static_cast<unsigned char>(s[i]);
    const bool upper = cas == Case::kUpper || (cas == Case::kCapital && first);
    const bool lower = cas == Case::kLower;
    if (c < 0x80) {
      char o = static_cast<char>(c);
      if (upper && c >= 'a' && c <= 'z') o = static_cast<char>(c - 32);
      if (lower && c >= 'A' && c <= 'Z') o = static_cast<char>(c + 32);
      out->push_back(o);
      if (IsAsciiAlnum(c)) first = false;
      continue;
    }
    if (c == 0xC3 && i + 1 < s.size()) {
      unsigned char n = static_cast<unsigned char>(s[i + 1]);
      if (upper && n >= 0xA0 && n <= 0xBE && n != 0xB7) n -= 0x20;
      if (lower && n >= 0x80 && n <= 0x9E && n != 0x97) n += 0x20;
      out->push_back(static_cast<char>(c));
      out->push_back(static_cast<char>(n));
      ++i;
      first = false;
      continue;
    }
    out->push_back(static_cast<char>(c));
    if (c >= 0xC0) first = false;
  }
}

// Canonical decomposition of the precomposed Latin-1 letters we use, keyed
// by the lower-case second UTF-8 byte: base letter and combining mark.
bool Decompose(unsigned char second, char* letter, const char** mark) {
  struct Entry {
    unsigned char second;
    char letter;
    const char* mark;
  };
  static const Entry kTable[] = {
      {0xA0, 'a', "\xCC\x80"}, {0xA1, 'a', "\xCC\x81"}, {0xA2, 'a', "\xCC\x82"},
      {0xA4, 'a', "\xCC\x88"}, {0xA7, 'c', "\xCC\xA7"}, {0xA8, 'e', "\xCC\x80"},
      {0xA9, 'e', "\xCC\x81"}, {0xAA, 'e', "\xCC\x82"}, {0xAB, 'e', "\xCC\x88"},
      {0xAD, 'i', "\xCC\x81"}, {0xAE, 'i', "\xCC\x82"}, {0xAF, 'i', "\xCC\x88"},
      {0xB1, 'n', "\xCC\x83"}, {0xB3, 'o', "\xCC\x81"}, {0xB4, 'o', "\xCC\x82"},
      {0xB6, 'o', "\xCC\x88"}, {0xBA, 'u', "\xCC\x81"}, {0xBB, 'u', "\xCC\x82"},
      {0xBC, 'u', "\xCC\x88"},
  };
  const bool upper = second < 0xA0;
  const unsigned char key = upper ? second + 0x20 : second;
  for (const Entry& e : kTable) {
    if (e.second == key) {
      *letter = upper ? static_cast<char>(e.letter - 32) : e.letter;
      *mark = e.mark;
      return true;
    }
  }
  return false;
}

// Applies the character-level Style transforms to already-cased text.
void AppendStyled(std::string_view s, const Style& style, ByteBuffer* out) {
  for (size_t i = 0; i < s.size(); ++i) {
    const unsigned char c = static_cast<unsigned char>(s[i]);
    if (style.fullwidth && c >= '0' && c <= '9') {
      out->append("\xEF\xBC");
      out->push_back(static_cast<char>(0x90 + (c - '0')));
    } else if (style.ligatures && c == 'f' && i + 1 < s.size() &&
               (s[i + 1] == 'i' || s[i + 1] == 'l')) {
      out->append(s[i + 1] == 'i' ? "\xEF\xAC\x81" : "\xEF\xAC\x82");
      ++i;
    } else if (style.curly && c == '\'') {
      out->append("\xE2\x80\x99");
    } else if (style.decomposed && c == 0xC3 && i + 1 < s.size()) {
      char letter;
      const char* mark;
      if (Decompose(static_cast<unsigned char>(s[i + 1]), &letter, &mark)) {
        out->push_back(letter);
        out->append(mark);
      } else {
        out->append(s.substr(i, 2));
      }
      ++i;
    } else {
      out->push_back(static_cast<char>(c));
    }
  }
}

void AppendCore(const Token& t, const Style& style, std::string* scratch,
                ByteBuffer* out) {
  if (style.curly && t.core == "-") {
    out->append("\xE2\x80\x94");  // Em dash.
    return;
  }
  std::string_view text = t.core;
  if (t.cas != Case::kAsIs) {
    scratch->clear();
    AppendCased(t.core, t.cas, scratch);
    text = *scratch;
  }
  if (style.TransformsCore()) {
    AppendStyled(text, style, out);
  } else {
    out->append(text);
  }
}

void AppendPunct(std::string_view p, bool leading, const Style& style,
                 ByteBuffer* out) {
  if (p.empty()) return;
  if (!style.curly) {
    out->append(p);
    return;
  }
  for (char c : p) {
    if (c == '"') {
      out->append(leading ? "\xE2\x80\x9C" : "\xE2\x80\x9D");
    } else if (c == '\'') {
      out->append(leading ? "\xE2\x80\x98" : "\xE2\x80\x99");
    } else {
      out->push_back(c);
    }
  }
}

void AppendSep(Sep sep, const Style& style, ByteBuffer* out) {
  const char* eol = style.crlf ? "\r\n" : "\n";
  switch (sep) {
    case Sep::kNone:
      break;
    case Sep::kSpace:
      out->push_back(' ');
      break;
    case Sep::kSpace2:
      out->append("  ");
      break;
    case Sep::kGlue:
      out->append(style.nbsp ? "\xC2\xA0" : " ");
      break;
    case Sep::kTab:
      out->push_back('\t');
      break;
    case Sep::kNewline:
      out->append(eol);
      break;
    case Sep::kPara:
      out->append(eol);
      if (style.formfeed) out->push_back('\f');
      out->append(eol);
      break;
  }
}

void RenderText(const Doc& doc, std::string* scratch, ByteBuffer* out) {
  out->clear();
  for (const Token& t : doc.tokens) {
    AppendPunct(t.lead, true, doc.style, out);
    AppendCore(t, doc.style, scratch, out);
    AppendPunct(t.trail, false, doc.style, out);
    AppendSep(t.sep, doc.style, out);
  }
}

// ASCII spelling of a Latin-1 letter (UTF-8 0xC3 0x80..0xBF) for URL slugs;
// empty if there is none.
std::string_view Transliterate(unsigned char second) {
  const unsigned char lower = second < 0xA0 ? second + 0x20 : second;
  if (lower == 0xA6) return "ae";
  if (lower == 0xB8) return "o";
  char letter;
  const char* mark;
  if (!Decompose(lower, &letter, &mark)) return {};
  static const char kLetters[] = "abcdefghijklmnopqrstuvwxyz";
  return std::string_view(kLetters + (letter - 'a'), 1);
}

// URL path slug: the first six title words, lower-case ASCII, joined by '-'.
void AppendSlug(const Doc& doc, std::string* out) {
  size_t words = 0;
  bool in_word = false;
  auto add = [&](std::string_view piece) {
    if (!in_word && out->back() != '/') out->push_back('-');
    out->append(piece);
    in_word = true;
  };
  for (size_t i = 0; i < doc.title_end && i < doc.tokens.size(); ++i) {
    const std::string_view core = doc.tokens[i].core;
    for (size_t j = 0; j < core.size() && words < 6; ++j) {
      const unsigned char u = static_cast<unsigned char>(core[j]);
      if (IsAsciiAlnum(u)) {
        const char lower = static_cast<char>(u >= 'A' && u <= 'Z' ? u + 32 : u);
        add(std::string_view(&lower, 1));
      } else if (u == 0xC3 && j + 1 < core.size()) {
        const std::string_view t =
            Transliterate(static_cast<unsigned char>(core[++j]));
        if (!t.empty()) add(t);
      } else if (u < 0x80 || u >= 0xC0) {
        // ASCII punctuation/space or the start of another character ends a
        // word; continuation bytes of skipped characters do not.
        if (in_word) ++words;
        in_word = false;
      }
    }
    if (in_word) ++words;
    in_word = false;
  }
}

std::string MakeUrl(const Doc& doc, uint32_t page_no) {
  std::string url = "https://";
  url += doc.site;
  url += ".example/";
  url += doc.section;
  url += '/';
  AppendSlug(doc, &url);
  url += '-';
  AppendUint(page_no, 1, &url);
  return url;
}

// Writes `s` (valid UTF-8) as a JSON string with the library's escaping
// (index/json_writer.h); non-ASCII stays raw UTF-8.
void AppendJsonString(std::string_view s, ByteBuffer* out) {
  thread_local std::string scratch;
  scratch.clear();
  shingleton::AppendJsonString(&scratch, s);
  out->append(scratch.data(), scratch.size());
}

// ---------------------------------------------------------------------------
// Corpus plan: which documents exist, their families and the file order.

constexpr uint32_t kNoFamily = UINT32_MAX;

struct Family {
  uint64_t seed;
  Genre genre;
  uint32_t size;
  uint32_t base_pos = 0;  // Position of the base in file order.
};

struct DocPlan {
  uint64_t seed;
  uint32_t family = kNoFamily;
  uint32_t member = 0;  // 0 is the base.
  Kind kind = Kind::kUnique;
  uint16_t edit_permille = 0;
  Genre genre = Genre::kGazette;  // Unique documents only.
};

struct Plan {
  std::vector<Family> families;
  std::vector<DocPlan> docs;      // In file order.
  std::vector<uint32_t> id_nums;  // doc id number per file position.
  std::vector<uint32_t> ranks;    // fetch_rank per file position, 1-based.
};

const std::vector<uint32_t> kGenreWeights = {10, 12, 10, 20, 20, 12, 8, 8};
// Genres whose pages come from a CMS template; large families use these.
const std::vector<Genre> kTemplatedGenres = {
    Genre::kFerry, Genre::kWeather, Genre::kShop, Genre::kEvents, Genre::kCoop};
// Family sizes 2..10, mostly small.
const std::vector<uint32_t> kSmallSizeWeights = {30, 20, 14, 10, 8, 6, 5, 4, 3};
// exact, edit, template, wrap, case-punct.
const std::vector<uint32_t> kVariantWeights = {15, 45, 10, 15, 15};
const Kind kVariantKinds[] = {Kind::kExact, Kind::kEdit, Kind::kTemplate,
                              Kind::kWrap, Kind::kCasePunct};
const uint16_t kEditPermille[] = {10, 20, 50, 100, 200, 300};

constexpr uint32_t kLargeMin = 50;
constexpr uint32_t kLargeMax = 300;
constexpr uint32_t kLargeSharePercent = 15;  // Of family documents.

Genre RandomGenre(Rng* rng) {
  return static_cast<Genre>(PickWeighted(kGenreWeights, rng));
}

std::vector<Family> PlanFamilies(uint64_t family_docs, Rng* rng) {
  std::vector<Family> families;
  uint64_t large_budget = family_docs * kLargeSharePercent / 100;
  uint64_t used = 0;
  while (large_budget >= kLargeMin) {
    const uint32_t size = static_cast<uint32_t>(
        rng->Between(kLargeMin, std::min<uint64_t>(kLargeMax, large_budget)));
    families.push_back({rng->Next(), rng->Pick(kTemplatedGenres), size});
    large_budget -= size;
    used += size;
  }
  while (family_docs - used >= 2) {
    const uint64_t left = family_docs - used;
    uint64_t size = 2 + PickWeighted(kSmallSizeWeights, rng);
    if (size > left) size = left;
    if (left - size == 1) ++size;  // Never strand a single document.
    families.push_back(
        {rng->Next(), RandomGenre(rng), static_cast<uint32_t>(size)});
    used += size;
  }
  Shuffle(&families, rng);
  return families;
}

DocPlan PlanVariant(const Family& f, uint32_t family, uint32_t member,
                    Rng* rng) {
  DocPlan d;
  d.seed = MixSeed(f.seed, member);
  d.family = family;
  d.member = member;
  if (member == 0) {
    d.kind = Kind::kBase;
  } else if (f.size >= kLargeMin) {
    d.kind = rng->Percent(8) ? Kind::kExact : Kind::kTemplate;
  } else {
    d.kind = kVariantKinds[PickWeighted(kVariantWeights, rng)];
    if (d.kind == Kind::kEdit) d.edit_permille = kEditPermille[rng->Below(6)];
  }
  return d;
}

bool SameFamily(const DocPlan& a, const DocPlan& b) {
  return a.family != kNoFamily && a.family == b.family;
}

bool HasFamilyNeighbour(const std::vector<DocPlan>& d, size_t i) {
  return (i > 0 && SameFamily(d[i], d[i - 1])) ||
         (i + 1 < d.size() && SameFamily(d[i], d[i + 1]));
}

// Breaks up runs of one family left by the shuffle, so members are never
// adjacent unless a family is too large for that to be possible.
void SpreadFamilies(std::vector<DocPlan>* docs, Rng* rng) {
  std::vector<DocPlan>& d = *docs;
  for (size_t i = 0; i + 1 < d.size(); ++i) {
    if (!SameFamily(d[i], d[i + 1])) continue;
    for (int attempt = 0; attempt < 64; ++attempt) {
      const size_t j = rng->Below(d.size());
      if (j == i || j == i + 1) continue;
      std::swap(d[i + 1], d[j]);
      if (!HasFamilyNeighbour(d, i + 1) && !HasFamilyNeighbour(d, j)) break;
      std::swap(d[i + 1], d[j]);
    }
  }
}

std::vector<uint32_t> Permutation(uint32_t n, uint32_t first, Rng* rng) {
  std::vector<uint32_t> p(n);
  for (uint32_t i = 0; i < n; ++i) p[i] = first + i;
  Shuffle(&p, rng);
  return p;
}

Plan BuildPlan(uint32_t n, uint64_t seed, uint32_t family_ppm) {
  Rng rng(MixSeed(seed, 0x5348494E474C45ULL));
  Plan plan;
  uint64_t family_docs = (uint64_t{n} * family_ppm + 500000) / 1000000;
  if (family_docs < 2) family_docs = 0;
  plan.families = PlanFamilies(family_docs, &rng);
  plan.docs.reserve(n);
  for (uint32_t f = 0; f < plan.families.size(); ++f) {
    for (uint32_t m = 0; m < plan.families[f].size; ++m) {
      plan.docs.push_back(PlanVariant(plan.families[f], f, m, &rng));
    }
  }
  while (plan.docs.size() < n) {
    DocPlan d;
    d.seed = rng.Next();
    d.genre = RandomGenre(&rng);
    plan.docs.push_back(d);
  }
  Shuffle(&plan.docs, &rng);
  SpreadFamilies(&plan.docs, &rng);
  for (uint32_t pos = 0; pos < n; ++pos) {
    const DocPlan& d = plan.docs[pos];
    if (d.kind == Kind::kBase) plan.families[d.family].base_pos = pos;
  }
  plan.id_nums = Permutation(n, 0, &rng);
  plan.ranks = Permutation(n, 1, &rng);
  return plan;
}

// ---------------------------------------------------------------------------
// Output.

class OutputFile {
 public:
  // Returns false (with a message on stderr) if the file cannot be opened.
  bool Open(const std::string& path) {
    path_ = path;
    if (path == "-") {
      file_ = stdout;
      return true;
    }
    file_ = std::fopen(path.c_str(), "wb");
    if (file_ == nullptr) {
      std::fprintf(stderr,
                   "shingleton-demo-gen: cannot open '%s' for writing: %s\n",
                   path.c_str(), std::strerror(errno));
      return false;
    }
    return true;
  }

  ByteBuffer* buffer() { return &buffer_; }

  // Writes the buffer out once it is large; Flush() forces it.
  bool MaybeFlush() { return buffer_.size() < kFlushBytes || Flush(); }

  bool Flush() {
    if (buffer_.empty()) return true;
    const size_t n = std::fwrite(buffer_.data(), 1, buffer_.size(), file_);
    const bool ok = n == buffer_.size();
    buffer_.clear();
    if (!ok) ReportWriteError();
    return ok;
  }

  bool Close() {
    if (file_ == nullptr) return true;
    bool ok = Flush();
    if (ok && std::fflush(file_) != 0) {
      ReportWriteError();
      ok = false;
    }
    if (file_ != stdout && std::fclose(file_) != 0 && ok) {
      ReportWriteError();
      ok = false;
    }
    file_ = nullptr;
    return ok;
  }

 private:
  void ReportWriteError() {
    std::fprintf(stderr, "shingleton-demo-gen: error writing '%s': %s\n",
                 path_.c_str(), std::strerror(errno));
  }

  static constexpr size_t kFlushBytes = 4 << 20;
  std::string path_;
  std::FILE* file_ = nullptr;
  ByteBuffer buffer_;
};

struct Options {
  uint32_t docs = 0;
  uint64_t seed = 1;
  uint32_t mean_bytes = 1500;
  double family_share = 0.3;
  std::string out;
  std::string truth;
};

constexpr uint32_t kCrawlDays = 30;  // The crawl spans November 2026.

void AppendRecord(std::string_view id, const std::string& url,
                  std::string_view text, std::string_view site, uint32_t rank,
                  uint32_t n, ByteBuffer* out) {
  const int32_t day = kCrawlStartDay +
                      static_cast<int32_t>(uint64_t{rank - 1} * kCrawlDays / n);
  *out += "{\"id\":";
  AppendJsonString(id, out);
  *out += ",\"url\":";
  AppendJsonString(url, out);
  *out += ",\"text\":";
  AppendJsonString(text, out);
  *out += ",\"site\":";
  AppendJsonString(site, out);
  *out += ",\"crawled\":\"";
  AppendIsoDate(day, out);
  *out += "\",\"fetch_rank\":";
  AppendUint(rank, 1, out);
  *out += "}\n";
}

void AppendTruth(std::string_view id, const DocPlan& d, uint32_t basis_points,
                 ByteBuffer* out) {
  *out += id;
  *out += '\t';
  if (d.family == kNoFamily) {
    *out += '-';
  } else {
    *out += 'f';
    AppendUint(d.family, 5, out);
  }
  *out += '\t';
  *out += d.kind == Kind::kUnique ? "unique"
          : d.kind == Kind::kBase ? "base"
                                  : "variant";
  *out += '\t';
  *out += KindName(d.kind);
  *out += '\t';
  *out += FormatRate(basis_points);
  *out += '\n';
}

uint32_t Ratio(uint64_t part, uint64_t whole) {
  return whole == 0 ? 0
                    : static_cast<uint32_t>((part * 10000 + whole / 2) / whole);
}

// Builds the variant `d` of `base` into `out` and says how its URL is formed.
VariantResult BuildVariant(const Doc& base, const DocPlan& d, Doc* out) {
  Rng rng(d.seed);
  const Tables& tab = Tab();
  VariantResult r;
  switch (d.kind) {
    case Kind::kExact:
      CopyContent(base, out);
      if (rng.Percent(50)) {
        r.reuse_base_url = true;
        r.query = "?ref=";
        r.query += rng.Pick(Lex().nouns.base);
        r.query += "&copy=";
        AppendUint(d.member, 1, &r.query);
      } else {
        out->site = rng.Pick(tab.mirrors);
        out->section = "archive";
      }
      break;
    case Kind::kEdit:
      ApplyEdits(base, d.edit_permille, &rng, out);
      r.basis_points = d.edit_permille * 10;
      if (rng.Percent(40)) {
        out->site = rng.Pick(tab.mirrors);
        out->section = "reprints";
      }
      break;
    case Kind::kTemplate:
      r.basis_points =
          Ratio(ApplyTemplate(base, &rng, out), CountWords(base.tokens));
      break;
    case Kind::kWrap:
      r.basis_points = Ratio(ApplyWrap(base, rng.Pick(tab.mirrors), &rng, out),
                             CountWords(base.tokens));
      break;
    case Kind::kCasePunct:
      ApplyCasePunct(base, &rng, out);
      if (rng.Percent(50)) {
        out->site = rng.Pick(tab.mirrors);
        out->section = "reprints";
      } else {
        out->section = "print";
      }
      break;
    case Kind::kUnique:
    case Kind::kBase:
      CopyContent(base, out);
      break;
  }
  return r;
}

std::string MakeId(uint32_t num, int width) {
  std::string id = "doc-";
  AppendUint(num, width, &id);
  return id;
}

int Run(const Options& opt) {
  const uint32_t family_ppm =
      static_cast<uint32_t>(std::llround(opt.family_share * 1e6));
  const Plan plan = BuildPlan(opt.docs, opt.seed, family_ppm);
  int id_width = 6;
  for (uint64_t lim = 1000000; lim < opt.docs; lim *= 10) ++id_width;

  OutputFile out, truth;
  if (!out.Open(opt.out)) return 1;
  const bool want_truth = !opt.truth.empty();
  if (want_truth) {
    if (!truth.Open(opt.truth)) return 1;
    *truth.buffer() += "id\tfamily\trole\tkind\tedit_rate\n";
  }
  const bool progress = isatty(STDERR_FILENO) != 0;

  Doc base, variant;
  ByteBuffer text;
  std::string scratch;
  for (uint32_t pos = 0; pos < opt.docs; ++pos) {
    const DocPlan& d = plan.docs[pos];
    const std::string id = MakeId(plan.id_nums[pos], id_width);
    const uint32_t page_no = plan.id_nums[pos] + 1;
    const Doc* doc = &base;
    std::string url;
    VariantResult vr;
    if (d.family == kNoFamily) {
      BuildBase(d.seed, d.genre, opt.mean_bytes, &base);
      url = MakeUrl(base, page_no);
    } else {
      const Family& f = plan.families[d.family];
      BuildBase(f.seed, f.genre, opt.mean_bytes, &base);
      if (d.member == 0) {
        url = MakeUrl(base, page_no);
      } else {
        vr = BuildVariant(base, d, &variant);
        doc = &variant;
        url = vr.reuse_base_url
                  ? MakeUrl(base, plan.id_nums[f.base_pos] + 1) + vr.query
                  : MakeUrl(variant, page_no);
      }
    }
    RenderText(*doc, &scratch, &text);
    AppendRecord(id, url, text.view(), doc->site, plan.ranks[pos], opt.docs,
                 out.buffer());
    if (!out.MaybeFlush()) return 1;
    if (want_truth) {
      AppendTruth(id, d, vr.basis_points, truth.buffer());
      if (!truth.MaybeFlush()) return 1;
    }
    if (progress && (pos % 16384 == 0 || pos + 1 == opt.docs)) {
      std::fprintf(stderr, "\rshingleton-demo-gen: %u/%u documents", pos + 1,
                   opt.docs);
      if (pos + 1 == opt.docs) std::fputc('\n', stderr);
    }
  }
  const bool ok_out = out.Close();
  const bool ok_truth = truth.Close();
  return ok_out && ok_truth ? 0 : 1;
}

}  // namespace
}  // namespace shingleton_demo

int main(int argc, char** argv) {
  shingleton_demo::Options opt;
  CLI::App app{
      "shingleton-demo-gen: writes a deterministic synthetic crawl corpus "
      "(JSON Lines: id, url, text, site, crawled, fetch_rank) of an invented "
      "island community web, with planted near-duplicate families and an "
      "optional ground-truth TSV. Same arguments give byte-identical output."};
  app.add_option("--docs", opt.docs, "Number of documents to write")
      ->required()
      ->check(CLI::Range(1u, 100000000u));
  app.add_option("--seed", opt.seed, "Seed for the pseudo-random generator")
      ->capture_default_str();
  app.add_option("--mean-bytes", opt.mean_bytes,
                 "Mean length of the text field in UTF-8 bytes (lengths are "
                 "spread over 1/4 to 7/4 of this)")
      ->check(CLI::Range(200u, 1000000u))
      ->capture_default_str();
  app.add_option("--family-share", opt.family_share,
                 "Fraction of documents that belong to near-duplicate "
                 "families (base plus variants)")
      ->check(CLI::Range(0.0, 1.0))
      ->capture_default_str();
  app.add_option("--out", opt.out, "Output JSON Lines file, or - for stdout")
      ->required();
  app.add_option("--truth", opt.truth,
                 "Also write ground truth TSV here: id, family, role, kind, "
                 "edit_rate (default: none)");
  CLI11_PARSE(app, argc, argv);
  return shingleton_demo::Run(opt);
}
