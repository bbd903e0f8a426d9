// Suite "sign": MB/s per core (one thread) of the signing stage — normalise, word
// 5-gram shingles, signature, band keys — on the demo corpus (Vellory Isles pages,
// demo_data/crawl-2026-11.jsonl), against baselines measured in the same run:
//   shingle_only  the same pass without a signature (normalise + shingle hashes);
//   textbook      MinHash as first described: k independently seeded hash
//                 evaluations of each shingle's bytes (XXH64 with seed i, i < k), scalar.
#include <xxhash.h>

#include <algorithm>
#include <cstdio>
#include <string>
#include <vector>

#include "bench/bench_report.h"
#include "index/bands.h"
#include "index/line_reader.h"
#include "index/minhash_simd.h"
#include "index/normalizer.h"
#include "index/record_parser.h"
#include "index/scheme.h"
#include "index/shingler.h"
#include "index/signer.h"

namespace shingleton::bench {
namespace {

struct Corpus {
  std::vector<std::string> texts;
  double megabytes = 0;
};

Corpus Subset(const Corpus& c, size_t n) {
  Corpus out;
  for (size_t i = 0; i < std::min(n, c.texts.size()); ++i) {
    out.texts.push_back(c.texts[i]);
    out.megabytes += c.texts[i].size() / 1e6;
  }
  return out;
}

Corpus ReadDemoCorpus(size_t max_docs) {
  Corpus c;
  const std::string path = std::string(SHINGLETON_SOURCE_DIR) + "/demo_data/crawl-2026-11.jsonl";
  std::FILE* f = std::fopen(path.c_str(), "rb");
  if (!f) {
    std::fprintf(stderr, "sign bench: cannot open %s\n", path.c_str());
    return c;
  }
  RecordParser parser{FieldNames{}};
  std::string line(1 << 20, '\0');
  while (c.texts.size() < max_docs && std::fgets(line.data(), line.size() - 64, f)) {
    const size_t len = std::char_traits<char>::length(line.data());
    ParsedRecord rec;
    BadRecord bad;
    if (parser.Parse(line.data(), len, line.size(), &rec, &bad).ok()) {
      c.texts.emplace_back(rec.text);
      c.megabytes += rec.text.size() / 1e6;
    }
  }
  std::fclose(f);
  return c;
}

// Keeps the optimiser from dropping work whose result is otherwise unused.
volatile uint64_t g_sink;

double ShingleOnlyMBps(const Corpus& c, double min_s) {
  Normalizer norm;
  NormalizedText t;
  std::vector<uint64_t> shingles;
  const SketchScheme s = SketchScheme::Default();
  const double sec = BestSeconds([&] {
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      norm.Normalize(text, &t);
      ShingleHashes(t, s.shingle_kind, s.shingle_size, s.seed, &shingles);
      for (uint64_t h : shingles) acc ^= h;
    }
    g_sink = acc;
  }, min_s);
  return c.megabytes / sec;
}

double SignerMBps(const Corpus& c, const SketchScheme& scheme, double min_s) {
  Signer signer(scheme);
  std::vector<uint32_t> sig(scheme.num_hashes);
  std::vector<uint64_t> buckets(scheme.bands);
  const double sec = BestSeconds([&] {
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      signer.Sign(text, sig.data(), buckets.data());
      acc ^= buckets[0] ^ sig.back();
    }
    g_sink = acc;
  }, min_s);
  return c.megabytes / sec;
}

// Textbook MinHash: for each word 5-gram (the shingler's windows), k seeded XXH64
// evaluations of its bytes, keeping the minimum per seed.
double TextbookMBps(const Corpus& c, int k, double min_s) {
  Normalizer norm;
  NormalizedText t;
  std::vector<uint64_t> sig(k);
  const size_t w = 5;
  const double sec = BestSeconds([&] {
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      norm.Normalize(text, &t);
      std::fill(sig.begin(), sig.end(), UINT64_MAX);
      const size_t n = t.num_tokens();
      for (size_t i = 0; n > 0 && (i + w <= n || i == 0); ++i) {
        const size_t begin = n <= w ? 0 : t.starts[i];
        const size_t end = n <= w ? t.text.size() : t.TokenEnd(i + w - 1);
        for (int s = 0; s < k; ++s) {
          sig[s] = std::min(sig[s], XXH64(t.text.data() + begin, end - begin, s));
        }
      }
      acc ^= sig.back();
    }
    g_sink = acc;
  }, min_s);
  return c.megabytes / sec;
}

// The scheme a job with --sketch `sketch`, --hashes k and threshold 0.8 would use.
SketchScheme SchemeFor(const char* sketch, int k) {
  SketchScheme s = SketchScheme::Default();
  s.signature_method = SignatureMethodForSketch(sketch, k).value();
  s.num_hashes = k;
  // ChooseBanding(0.8, 9000) = 409 x 22, a search that takes seconds at this k.
  const Banding b = k == 9000 ? Banding{409, 22} : ChooseBanding(0.8, k);
  s.bands = b.bands;
  s.rows = b.rows;
  return s;
}

void SignSuite(const BenchOptions& opt, std::vector<BenchRow>* rows) {
  const Corpus corpus = ReadDemoCorpus(opt.quick ? 400 : 2500);
  if (corpus.texts.empty()) return;
  const Corpus small = Subset(corpus, opt.quick ? 40 : 250);  // for the slow textbook pass
  const double min_s = opt.quick ? 0.3 : 2.0;
  const std::string kernel = Ms32KernelTarget();

  const double shingle = ShingleOnlyMBps(corpus, min_s);
  const double k128 = SignerMBps(corpus, SchemeFor("minhash", 128), min_s);
  rows->push_back({"sign_k128", k128, "MB/s/core", "shingle_only", shingle, 0.5,
                   "MinHash kernel: " + kernel});

  const double k128_small = SignerMBps(small, SchemeFor("minhash", 128), min_s);
  const double textbook = TextbookMBps(small, 128, min_s);
  rows->push_back({"sign_k128", k128_small, "MB/s/core", "textbook", textbook, 30,
                   "first " + std::to_string(small.texts.size()) + " documents"});

  const double k9000 = SignerMBps(corpus, SchemeFor("oph", 9000), min_s);
  rows->push_back({"sign_k9000", k9000, "MB/s/core", "shingle_only", shingle, 0.4,
                   "one-permutation hashing, " + SignatureMethodForSketch("oph", 9000).value()});

  const double oph128 = SignerMBps(corpus, SchemeFor("oph", 128), min_s);
  rows->push_back({"sign_k128_oph", oph128, "MB/s/core", "shingle_only", shingle, 0, ""});
}

}  // namespace

SHINGLETON_BENCH_SUITE(sign, SignSuite);

}  // namespace shingleton::bench
