// Helpers shared by the test suites: temporary directories, files, JSONL corpora
// and manifest readers. Real files and real RocksDB only.
#pragma once

#include <map>
#include <set>
#include <string>
#include <vector>

namespace shingleton::testing {

// A fresh directory under $TMPDIR (or /tmp), removed with its contents on destruction.
class TempDir {
 public:
  TempDir();
  ~TempDir();
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  const std::string& path() const { return path_; }
  std::string File(const std::string& name) const { return path_ + "/" + name; }

 private:
  std::string path_;
};

std::string ReadFile(const std::string& path);
void WriteFile(const std::string& path, const std::string& data);
bool FileExists(const std::string& path);
// Two "crawls" from one JSON Lines file: its even lines to `even`, odd lines to `odd`.
void SplitLinesInTwo(const std::string& path, const std::string& even, const std::string& odd);

// {"id": id, "text": text} as one JSON line (with newline), properly escaped.
std::string JsonLine(const std::string& id, const std::string& text, const std::string& url = "");

// Parsed manifests: id -> duplicate_of (kept documents map to themselves).
struct Manifests {
  std::map<std::string, std::string> kept_of;   // every id
  std::map<std::string, double> similarity;     // dropped ids
  std::set<std::string> kept;
};
Manifests ReadManifests(const std::string& out_dir);

// Reads a text file of Debian's /usr/share/common-licenses.
std::string CommonLicense(const std::string& name);

}  // namespace shingleton::testing

namespace shingleton::testing {

// A corpus held in memory for brute-force checks.
struct Corpus {
  std::vector<std::string> ids;
  std::vector<std::string> texts;
  std::string ToJsonl() const;
};

// Reads id and text of every line of a JSONL file.
Corpus ReadJsonlCorpus(const std::string& path);

// Exact Jaccard (word 5-grams of the normalised text, by definition |A∩B|/|A∪B|)
// of every pair of documents sharing at least one shingle, found by brute force
// over an inverted index. Pairs with J < min_jaccard are left out.
struct ExactPair {
  size_t a, b;  // indices into the corpus, a < b
  double jaccard;
};
std::vector<ExactPair> AllPairsExactJaccard(const Corpus& corpus, double min_jaccard);
double ExactJaccardOf(const std::string& a, const std::string& b);

// How the job's manifests compare with exact Jaccard.
struct Quality {
  size_t true_pairs = 0;   // pairs with exact J >= pair_threshold
  size_t found_pairs = 0;  // ... of them in the same cluster
  size_t drops = 0;
  size_t good_drops = 0;   // drops whose exact J with their duplicate_of is >= drop_floor
  std::vector<std::string> examples;  // a few misses and bad drops, for messages
  double recall() const { return true_pairs ? double(found_pairs) / true_pairs : 1.0; }
  double precision() const { return drops ? double(good_drops) / drops : 1.0; }
};
Quality Evaluate(const Corpus& corpus, const Manifests& m, double pair_threshold, double drop_floor);

}  // namespace shingleton::testing

#include <cstdint>
#include <random>

namespace shingleton::testing {

// Two sets of distinct random 64-bit values with |A ∪ B| = union_size and
// |A ∩ B| = round(j * union_size): their Jaccard similarity is exact by construction.
struct SetPair {
  std::vector<uint64_t> a;
  std::vector<uint64_t> b;
};
SetPair MakeSetPair(double j, int union_size, std::mt19937_64* rng);

// Exact Jaccard |A ∩ B| / |A ∪ B| by brute force over std::set (definition); 1.0
// when both are empty.
double BruteForceJaccard(const std::vector<uint64_t>& a, const std::vector<uint64_t>& b);

}  // namespace shingleton::testing
