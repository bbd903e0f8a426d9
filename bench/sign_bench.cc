// Suite "sign": MB/s per core (one thread) of the signing stage — normalise, word
// 5-gram shingles, signature, band keys — on the demo corpus (Vellory Isles pages,
// demo_data/crawl-2026-11.jsonl), against baselines measured in the same run:
//   shingle_only  the same pass without a signature (normalise + shingle hashes);
//   textbook      MinHash as first described: k independently seeded hash
//                 evaluations of each shingle's bytes (XXH64 with seed i, i < k), scalar.
#include <xxhash.h>

#include <time.h>

#include <algorithm>
#include <cstdio>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "bench/bench_report.h"
#include "index/bands.h"
#include "index/minhash.h"
#include "index/minhash_simd.h"
#include "index/normalizer.h"
#include "index/oph.h"
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

// A pass over a corpus; owns its state, so passes can be timed in turns.
using Pass = std::function<void()>;

Pass ShingleOnlyPass(const Corpus& c) {
  auto norm = std::make_shared<Normalizer>();
  auto t = std::make_shared<NormalizedText>();
  auto shingles = std::make_shared<std::vector<uint64_t>>();
  return [&c, norm, t, shingles] {
    const SketchScheme s = SketchScheme::Default();
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      norm->Normalize(text, t.get());
      ShingleHashes(*t, s.shingle_kind, s.shingle_size, s.seed, shingles.get());
      for (uint64_t h : *shingles) acc ^= h;
    }
    g_sink = acc;
  };
}

Pass SignerPass(const Corpus& c, const SketchScheme& scheme) {
  auto signer = std::make_shared<Signer>(scheme);
  auto sig = std::make_shared<std::vector<uint32_t>>(scheme.num_hashes);
  auto buckets = std::make_shared<std::vector<uint64_t>>(scheme.bands);
  return [&c, signer, sig, buckets] {
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      signer->Sign(text, sig->data(), buckets->data());
      acc ^= (*buckets)[0] ^ sig->back();
    }
    g_sink = acc;
  };
}

// The same pass with the scalar reference of the MinHash family (the code path
// before the Highway kernel).
Pass ScalarMinHashPass(const Corpus& c, const SketchScheme& scheme) {
  auto norm = std::make_shared<Normalizer>();
  auto hasher = std::make_shared<MinHasher>(scheme.num_hashes, scheme.seed);
  return [&c, norm, hasher, scheme] {
    NormalizedText t;
    std::vector<uint64_t> shingles;
    std::vector<uint32_t> sig(scheme.num_hashes);
    std::vector<uint64_t> buckets(scheme.bands);
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      norm->Normalize(text, &t);
      ShingleHashes(t, scheme.shingle_kind, scheme.shingle_size, scheme.seed, &shingles);
      hasher->SignScalar(shingles.data(), shingles.size(), sig.data());
      BandBuckets(sig.data(), scheme.bands, scheme.rows, scheme.seed, buckets.data());
      acc ^= buckets[0];
    }
    g_sink = acc;
  };
}

// normalise + shingles + the OPH sketch, without band keys (to show their share).
Pass OphSketchPass(const Corpus& c, const SketchScheme& scheme) {
  auto norm = std::make_shared<Normalizer>();
  auto hasher = std::make_shared<OnePermutationHasher>(scheme.num_hashes, scheme.seed,
                                                       OphProbes(scheme.signature_method));
  return [&c, norm, hasher, scheme] {
    NormalizedText t;
    std::vector<uint64_t> shingles, scratch;
    std::vector<uint32_t> sig(scheme.num_hashes);
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      norm->Normalize(text, &t);
      ShingleHashes(t, scheme.shingle_kind, scheme.shingle_size, scheme.seed, &shingles);
      hasher->Sign(shingles.data(), shingles.size(), sig.data(), &scratch);
      acc ^= sig.back();
    }
    g_sink = acc;
  };
}

// Textbook MinHash: for each word 5-gram (the shingler's windows), k seeded XXH64
// evaluations of its bytes, keeping the minimum per seed.
Pass TextbookPass(const Corpus& c, int k) {
  auto norm = std::make_shared<Normalizer>();
  return [&c, norm, k] {
    NormalizedText t;
    std::vector<uint64_t> sig(k);
    const size_t w = 5;
    uint64_t acc = 0;
    for (const std::string& text : c.texts) {
      norm->Normalize(text, &t);
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
  };
}

double ThreadCpuSeconds() {
  timespec ts;
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return ts.tv_sec + ts.tv_nsec * 1e-9;
}

// MB/s of each pass. The machine is shared, so the passes are timed in turns
// (`rounds` rounds of at least min_s each), on this thread's CPU clock (time spent
// descheduled does not count), and each keeps its best time per pass.
std::vector<double> TimeInTurns(const std::vector<std::pair<Pass, const Corpus*>>& passes,
                                int rounds, double min_s) {
  std::vector<double> best(passes.size(), 1e300);
  for (int r = 0; r < rounds; ++r) {
    for (size_t i = 0; i < passes.size(); ++i) {
      const double start = ThreadCpuSeconds();
      do {
        const double t0 = ThreadCpuSeconds();
        passes[i].first();
        best[i] = std::min(best[i], ThreadCpuSeconds() - t0);
      } while (ThreadCpuSeconds() - start < min_s);
    }
  }
  std::vector<double> mbps;
  for (size_t i = 0; i < passes.size(); ++i) mbps.push_back(passes[i].second->megabytes / best[i]);
  return mbps;
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
  const double min_s = opt.quick ? 0.1 : 0.4;
  const int rounds = opt.quick ? 3 : 8;
  const std::vector<double> mbps = TimeInTurns(
      {{ShingleOnlyPass(corpus), &corpus},
       {SignerPass(corpus, SchemeFor("minhash", 128)), &corpus},
       {SignerPass(corpus, SchemeFor("oph", 9000)), &corpus},
       {SignerPass(corpus, SchemeFor("oph", 128)), &corpus},
       {SignerPass(small, SchemeFor("minhash", 128)), &small},
       {TextbookPass(small, 128), &small},
       {ShingleOnlyPass(small), &small},
       {ScalarMinHashPass(corpus, SchemeFor("minhash", 128)), &corpus},
       {OphSketchPass(corpus, SchemeFor("oph", 9000)), &corpus}},
      rounds, min_s);
  const double shingle = mbps[0];
  rows->push_back({"sign_k128", mbps[1], "MB/s/core", "shingle_only", shingle, 0.5,
                   "MinHash kernel: " + std::string(Ms32KernelTarget())});
  // Seconds per MB of the signature stage alone: the pass minus shingle_only.
  const double stage = 1 / mbps[4] - 1 / mbps[6], textbook_stage = 1 / mbps[5] - 1 / mbps[6];
  char note[256];
  std::snprintf(note, sizeof note,
                "first %zu documents; even a free signature is bounded by shingle_only / "
                "textbook = %.1f here; the signature stage alone is %.0fx faster than textbook's",
                small.texts.size(), mbps[6] / mbps[5], textbook_stage / stage);
  rows->push_back({"sign_k128", mbps[4], "MB/s/core", "textbook", mbps[5], 30, note});
  std::string k9000_note = "one-permutation hashing, " + SignatureMethodForSketch("oph", 9000).value();
  if (mbps[2] < 0.4 * shingle) {
    k9000_note += "; per document 9000 bins are filled, densified by rotation and banded "
                  "(409 bands x 22 rows hashed), which costs more than the sketch";
  }
  rows->push_back({"sign_k9000", mbps[2], "MB/s/core", "shingle_only", shingle, 0.4, k9000_note});
  rows->push_back({"sign_k9000_no_bands", mbps[8], "MB/s/core", "shingle_only", shingle, 0,
                   "the OPH sketch without the 409 band keys"});
  rows->push_back({"sign_k128", mbps[1], "MB/s/core", "scalar_minhash", mbps[7], 0,
                   "the same pass with MinHasher::SignScalar (before vectorising)"});
  rows->push_back({"sign_k128_oph", mbps[3], "MB/s/core", "shingle_only", shingle, 0,
                   "one-permutation hashing, " + SignatureMethodForSketch("oph", 128).value()});
}

}  // namespace

SHINGLETON_BENCH_SUITE(sign, SignSuite);

}  // namespace shingleton::bench
