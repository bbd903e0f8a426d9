// Storage and throughput suites of shingleton-bench:
//   index_insert         postings + signatures written through the job's bulk path
//                        vs a raw RocksDB WriteBatch of the same keys and bytes
//   index_insert_online  the same through WriteBatchBuilder (the shards' point-write
//                        path) vs the same raw WriteBatch
//   query                batched candidate lookups + verification (QueryIndex) vs a
//                        raw MultiGet of the same keys
//   service_vs_embedded  3 loopback shards + coordinator + 2 ingest workers + finalize
//                        vs the embedded `shingleton dedup`, same corpus, real processes
// Every baseline runs on a database opened with the same options (IndexStore's), in the
// same run. Synthetic signatures are uniform 32-bit values (SplitMix64), bucket keys
// BandBucket of them, as the job computes them.
#include <fcntl.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <rocksdb/db.h>
#include <rocksdb/write_batch.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <thread>
#include <unordered_map>

#include "bench/bench_report.h"
#include "index/bands.h"
#include "index/candidates.h"
#include "index/coding.h"
#include "index/index_store.h"

extern char** environ;

namespace shingleton::bench {
namespace {

namespace fs = std::filesystem;

uint64_t SplitMix64(uint64_t* state) {
  uint64_t z = (*state += 0x9E3779B97F4A7C15ULL);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

// N synthetic documents: keys, signatures (k values each), buckets (b each). Every
// `family` consecutive documents share most of their signature values (near-duplicates
// that share buckets), so queries and buckets have real members.
struct Corpus {
  SketchScheme scheme;
  std::vector<uint64_t> keys;
  std::vector<uint32_t> sigs;
  std::vector<uint64_t> buckets;
  size_t size() const { return keys.size(); }
  const uint32_t* sig(size_t i) const { return &sigs[i * scheme.num_hashes]; }
  const uint64_t* bucket(size_t i) const { return &buckets[i * scheme.bands]; }
};

Corpus MakeCorpus(size_t n, uint64_t seed, size_t family = 4) {
  Corpus c;
  c.scheme = SketchScheme::Default();
  const int k = c.scheme.num_hashes, b = c.scheme.bands;
  c.keys.resize(n);
  c.sigs.resize(n * k);
  c.buckets.resize(n * b);
  uint64_t state = seed;
  for (size_t i = 0; i < n; ++i) {
    c.keys[i] = SplitMix64(&state);
    uint32_t* sig = &c.sigs[i * k];
    if (i % family == 0) {
      for (int j = 0; j < k; ++j) sig[j] = static_cast<uint32_t>(SplitMix64(&state));
    } else {  // a variant of the family's first document: ~5% of the values redrawn
      std::copy_n(&c.sigs[(i - i % family) * k], k, sig);
      for (int j = 0; j < k; ++j) {
        if (SplitMix64(&state) % 20 == 0) sig[j] = static_cast<uint32_t>(SplitMix64(&state));
      }
    }
    BandBuckets(sig, c.scheme.bands, c.scheme.rows, c.scheme.seed, &c.buckets[i * b]);
  }
  return c;
}

std::string PostingKey(int band, uint64_t bucket, uint64_t key) {
  std::string s;
  PutBigEndian16(&s, static_cast<uint16_t>(band));
  PutBigEndian64(&s, bucket);
  PutBigEndian64(&s, key);
  return s;
}

std::string SignatureValue(const uint32_t* sig, int k) {
  std::string v;
  for (int i = 0; i < k; ++i) PutFixed32(&v, sig[i]);
  return v;
}

std::string Key64(uint64_t k) {
  std::string s;
  PutBigEndian64(&s, k);
  return s;
}

void Check(const Status& s, const char* what) {
  if (!s.ok()) {
    std::fprintf(stderr, "store_bench: %s: %s\n", what, s.ToString().c_str());
    std::exit(1);
  }
}
void Check(const rocksdb::Status& s, const char* what) {
  if (!s.ok()) {
    std::fprintf(stderr, "store_bench: %s: %s\n", what, s.ToString().c_str());
    std::exit(1);
  }
}

constexpr size_t kBatchDocs = 1024;

// Writes the corpus through the raw RocksDB API into the postings and signatures
// families of an index opened by IndexStore (so with the very same options).
void RawWriteBatches(IndexStore* store, const Corpus& c) {
  rocksdb::DB* db = store->raw_db();
  rocksdb::WriteOptions wo;
  wo.disableWAL = true;  // as a bulk-built index
  rocksdb::WriteBatch batch;
  const int k = c.scheme.num_hashes;
  for (size_t i = 0; i < c.size(); ++i) {
    batch.Put(store->raw_family(IndexStore::Family::kSignatures), Key64(c.keys[i]), SignatureValue(c.sig(i), k));
    for (int band = 0; band < c.scheme.bands; ++band) {
      batch.Put(store->raw_family(IndexStore::Family::kPostings), PostingKey(band, c.bucket(i)[band], c.keys[i]),
                rocksdb::Slice());
    }
    if ((i + 1) % kBatchDocs == 0 || i + 1 == c.size()) {
      Check(db->Write(wo, &batch), "raw write");
      batch.Clear();
    }
  }
  Check(store->Flush(), "flush");
}

void OnlineWrites(IndexStore* store, const Corpus& c) {
  WriteBatchBuilder batch(store);
  const int k = c.scheme.num_hashes;
  for (size_t i = 0; i < c.size(); ++i) {
    batch.AddSignature(c.keys[i], c.sig(i), k);
    for (int band = 0; band < c.scheme.bands; ++band) batch.AddPosting(band, c.bucket(i)[band], c.keys[i]);
    if ((i + 1) % kBatchDocs == 0 || i + 1 == c.size()) Check(store->Write(&batch), "write");
  }
  Check(store->Flush(), "flush");
}

void BulkWrites(IndexStore* store, const Corpus& c) {
  BulkIndexWriter bulk(store);
  const int k = c.scheme.num_hashes;
  for (size_t i = 0; i < c.size(); ++i) {
    Check(bulk.AddSignature(c.keys[i], c.sig(i), k), "bulk signature");
    for (int band = 0; band < c.scheme.bands; ++band) {
      Check(bulk.AddPosting(band, c.bucket(i)[band], c.keys[i]), "bulk posting");
    }
  }
  Check(bulk.Finish(), "bulk finish");
}

std::unique_ptr<IndexStore> FreshStore(const std::string& path, const SketchScheme& scheme) {
  fs::remove_all(path);
  StoreOptions so;
  so.bulk_load = true;
  auto store = IndexStore::Create(path, scheme, so);
  Check(store.status(), "create index");
  return std::move(store).value();
}

// Best docs/s of `write` over fresh stores, at least `runs` runs.
double DocsPerSecond(const BenchOptions& opt, const Corpus& c, const char* name,
                     const std::function<void(IndexStore*)>& write, int runs) {
  double best = 1e300;
  for (int r = 0; r < runs; ++r) {
    auto store = FreshStore(opt.work_dir + "/" + name, c.scheme);
    double t0 = NowSeconds();
    write(store.get());
    best = std::min(best, NowSeconds() - t0);
  }
  fs::remove_all(opt.work_dir + "/" + name);
  return c.size() / best;
}

void IndexInsertSuite(const BenchOptions& opt, std::vector<BenchRow>* rows) {
  const size_t n = opt.quick ? 20000 : 200000;
  const int runs = opt.quick ? 2 : 3;
  Corpus c = MakeCorpus(n, 1);
  const double raw = DocsPerSecond(opt, c, "raw", [&](IndexStore* s) { RawWriteBatches(s, c); }, runs);
  const double bulk = DocsPerSecond(opt, c, "bulk", [&](IndexStore* s) { BulkWrites(s, c); }, runs);
  const double online = DocsPerSecond(opt, c, "online", [&](IndexStore* s) { OnlineWrites(s, c); }, runs);
  const std::string what = std::to_string(n) + " docs x (" + std::to_string(c.scheme.bands) +
                           " postings + " + std::to_string(4 * c.scheme.num_hashes) + " B signature), flushed";
  BenchRow r{"index_insert", bulk, "docs/s", "raw_writebatch", raw, 0.7,
             "job bulk path (sorted runs -> SST files -> ingest); " + what};
  rows->push_back(r);
  BenchRow o{"index_insert_online", online, "docs/s", "raw_writebatch", raw, 0.7,
             "WriteBatchBuilder (shard point writes); " + what};
  if (o.ratio() < 0.7) o.note += "; below goal: key/value encoding into std::string per put";
  rows->push_back(o);
}

// ---- query -------------------------------------------------------------------

void QuerySuite(const BenchOptions& opt, std::vector<BenchRow>* rows) {
  const size_t n = opt.quick ? 20000 : 200000;
  Corpus c = MakeCorpus(n, 2);
  const std::string path = opt.work_dir + "/query-index";
  auto store = FreshStore(path, c.scheme);
  BulkWrites(store.get(), c);
  // Queries: every other one a near-duplicate of an indexed document, the rest new.
  const size_t q = n / 4;
  Corpus queries;
  queries.scheme = c.scheme;
  {
    const int k = c.scheme.num_hashes, b = c.scheme.bands;
    Corpus fresh = MakeCorpus(q, 3, 1);
    queries = fresh;
    uint64_t state = 99;
    for (size_t i = 0; i < q; i += 2) {
      const size_t of = SplitMix64(&state) % n;
      uint32_t* sig = &queries.sigs[i * k];
      std::copy_n(c.sig(of), k, sig);
      for (int j = 0; j < k; ++j) {
        if (SplitMix64(&state) % 20 == 0) sig[j] = static_cast<uint32_t>(SplitMix64(&state));
      }
      BandBuckets(sig, c.scheme.bands, c.scheme.rows, c.scheme.seed, &queries.buckets[i * b]);
    }
  }
  // Bucket contents as the bench knows them (for the baseline's key list).
  std::map<std::pair<int, uint64_t>, std::vector<uint64_t>> members;
  for (size_t i = 0; i < n; ++i) {
    for (int band = 0; band < c.scheme.bands; ++band) members[{band, c.bucket(i)[band]}].push_back(c.keys[i]);
  }
  constexpr size_t kQueryBatch = 256;
  size_t hits = 0;
  auto ours = [&] {
    hits = 0;
    std::vector<std::vector<QueryHit>> out;
    for (size_t from = 0; from < q; from += kQueryBatch) {
      const size_t m = std::min(kQueryBatch, q - from);
      Check(QueryIndex(*store, queries.sig(from), queries.bucket(from), m, 0.8, &out), "query");
      for (const auto& h : out) hits += h.size();
    }
  };
  auto raw = [&] {
    rocksdb::DB* db = store->raw_db();
    std::vector<std::string> key_bytes;
    std::vector<rocksdb::Slice> keys;
    std::vector<rocksdb::ColumnFamilyHandle*> cfs;
    std::vector<rocksdb::PinnableSlice> values;
    std::vector<rocksdb::Status> statuses;
    for (size_t from = 0; from < q; from += kQueryBatch) {
      key_bytes.clear();
      cfs.clear();
      std::set<uint64_t> cands;
      for (size_t i = from; i < std::min(q, from + kQueryBatch); ++i) {
        for (int band = 0; band < c.scheme.bands; ++band) {
          auto it = members.find({band, queries.bucket(i)[band]});
          if (it == members.end()) continue;
          for (uint64_t key : it->second) {
            key_bytes.push_back(PostingKey(band, it->first.second, key));
            cfs.push_back(store->raw_family(IndexStore::Family::kPostings));
            cands.insert(key);
          }
        }
      }
      for (uint64_t key : cands) {
        key_bytes.push_back(Key64(key));
        cfs.push_back(store->raw_family(IndexStore::Family::kSignatures));
      }
      keys.assign(key_bytes.begin(), key_bytes.end());
      values.resize(keys.size());
      statuses.resize(keys.size());
      db->MultiGet(rocksdb::ReadOptions(), keys.size(), cfs.data(), keys.data(), values.data(),
                   statuses.data());
      for (auto& v : values) v.Reset();
    }
  };
  const double min_s = opt.quick ? 0.5 : 2;
  ours();  // warm the block cache for both
  const double t_ours = BestSeconds(ours, min_s);
  const double t_raw = BestSeconds(raw, min_s);
  BenchRow r{"query", q / t_ours, "docs/s", "raw_multiget", q / t_raw, 0.7,
             std::to_string(q) + " queries (half near-duplicates) in batches of " + std::to_string(kQueryBatch) +
                 " against " + std::to_string(n) + " docs; " + std::to_string(hits) + " hits"};
  rows->push_back(r);
  store.reset();
  fs::remove_all(path);
}

// ---- service vs embedded -------------------------------------------------------

// A child process with its output in a log file (posix_spawn; killed on destruction).
class Child {
 public:
  ~Child() {
    if (pid_ > 0) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, nullptr, 0);
    }
  }
  bool Start(const std::string& binary, const std::vector<std::string>& args, const std::string& log) {
    posix_spawn_file_actions_t fa;
    posix_spawn_file_actions_init(&fa);
    posix_spawn_file_actions_addopen(&fa, 1, log.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0644);
    posix_spawn_file_actions_adddup2(&fa, 1, 2);
    std::vector<std::string> all = {binary};
    all.insert(all.end(), args.begin(), args.end());
    std::vector<char*> argv;
    for (auto& a : all) argv.push_back(a.data());
    argv.push_back(nullptr);
    int rc = posix_spawn(&pid_, binary.c_str(), &fa, nullptr, argv.data(), environ);
    posix_spawn_file_actions_destroy(&fa);
    if (rc != 0) pid_ = -1;
    return rc == 0;
  }
  // Waits for exit; returns the exit code (-1 on signal).
  int Wait() {
    if (pid_ <= 0) return -1;
    int status = 0;
    ::waitpid(pid_, &status, 0);
    pid_ = -1;
    return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  }
  int Terminate() {
    if (pid_ > 0) ::kill(pid_, SIGTERM);
    return Wait();
  }
  pid_t pid() const { return pid_; }

 private:
  pid_t pid_ = -1;
};

std::string ReadAll(const std::string& path) {
  std::ifstream in(path);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string WaitForPort(const std::string& file, double timeout_s = 30) {
  const double until = NowSeconds() + timeout_s;
  while (NowSeconds() < until) {
    std::string s = ReadAll(file);
    if (!s.empty() && s.back() == '\n') return s.substr(0, s.size() - 1);
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  }
  return "";
}

// Runs a command to completion; returns its exit code.
int Run(const std::string& binary, const std::vector<std::string>& args, const std::string& log) {
  Child c;
  if (!c.Start(binary, args, log)) return -1;
  return c.Wait();
}

// Peak resident set of a live process, bytes (VmHWM).
uint64_t PeakRss(pid_t pid) {
  std::ifstream in("/proc/" + std::to_string(pid) + "/status");
  for (std::string line; std::getline(in, line);) {
    if (line.rfind("VmHWM:", 0) == 0) return std::stoull(line.substr(6)) * 1024;
  }
  return 0;
}

// Bytes received on the loopback interface so far (all processes of the machine).
uint64_t LoopbackBytes() {
  std::ifstream in("/proc/net/dev");
  for (std::string line; std::getline(in, line);) {
    auto colon = line.find(':');
    if (colon == std::string::npos) continue;
    std::string name = line.substr(0, colon);
    name.erase(0, name.find_first_not_of(' '));
    if (name != "lo") continue;
    std::istringstream fields(line.substr(colon + 1));
    uint64_t rx = 0;
    fields >> rx;
    return rx;
  }
  return 0;
}

std::set<std::string> KeptIds(const std::string& dir) {
  std::set<std::string> out;
  std::ifstream in(dir + "/keep.jsonl");
  for (std::string line; std::getline(in, line);) out.insert(line.substr(0, line.find(',')));
  return out;
}

// One measured pair: the embedded job, then the service on the same corpus.
struct ServicePair {
  double t_embedded = 0, t_ingest = 0, t_service = 0;  // seconds
  uint64_t lo_ingest = 0, lo_total = 0;               // loopback bytes
  uint64_t coord_growth = 0, shard_rss = 0;           // bytes
  uint64_t shard_disk = 0, coord_disk = 0, embedded_disk = 0;
  int rc = 0;
  bool same_decisions = true;
  double ratio() const { return t_service > 0 ? t_embedded / t_service : 0; }
};

// Runs the embedded job and then the service (3 shards, coordinator, 2 workers with
// one thread each, finalize) on `dir`/crawl.jsonl, split into part0/part1; servers
// and outputs live under `run_dir`, removed afterwards.
ServicePair RunServicePair(const std::string& bin, const std::string& dir, const std::string& run_dir) {
  ServicePair p;
  fs::remove_all(run_dir);
  fs::create_directories(run_dir);
  const std::string log = run_dir + "/bench.log";
  // Embedded: the same binary, the same corpus, every core.
  double t0 = NowSeconds();
  p.rc = Run(bin, {"dedup", "--input", dir + "/crawl.jsonl", "--out", run_dir + "/embedded", "-q"}, log);
  p.t_embedded = NowSeconds() - t0;

  std::vector<std::unique_ptr<Child>> shards;
  std::string list;
  for (int i = 0; i < 3; ++i) {
    const std::string n = std::to_string(i), port = run_dir + "/shard" + n + ".port";
    shards.push_back(std::make_unique<Child>());
    shards.back()->Start(bin, {"shard", "--listen", "127.0.0.1:0", "--db", run_dir + "/shard" + n, "--port-file",
                               port},
                         run_dir + "/shard" + n + ".log");
    std::string addr = WaitForPort(port);
    list += (i ? "," : "") + addr;
  }
  Child coordinator;
  coordinator.Start(bin, {"coordinator", "--listen", "127.0.0.1:0", "--shards", list, "--state", run_dir + "/coord",
                          "--port-file", run_dir + "/coord.port"},
                    run_dir + "/coord.log");
  const std::string caddr = WaitForPort(run_dir + "/coord.port");
  const uint64_t coord_rss0 = PeakRss(coordinator.pid());
  const uint64_t lo0 = LoopbackBytes();
  t0 = NowSeconds();
  Child w0, w1;
  w0.Start(bin, {"ingest", "--coordinator", caddr, "--job", "bench", "--input", dir + "/part0.jsonl", "--worker", "w0",
                 "--threads", "1"}, run_dir + "/w0.log");
  w1.Start(bin, {"ingest", "--coordinator", caddr, "--job", "bench", "--input", dir + "/part1.jsonl", "--worker", "w1",
                 "--threads", "1"}, run_dir + "/w1.log");
  p.rc |= w0.Wait() | w1.Wait();
  p.t_ingest = NowSeconds() - t0;
  p.lo_ingest = LoopbackBytes() - lo0;
  p.rc |= Run(bin, {"finalize", "--coordinator", caddr, "--job", "bench", "--out", run_dir + "/service"},
              run_dir + "/fin.log");
  p.t_service = NowSeconds() - t0;
  p.lo_total = LoopbackBytes() - lo0;
  const uint64_t coord_rss = PeakRss(coordinator.pid());
  p.coord_growth = coord_rss > coord_rss0 ? coord_rss - coord_rss0 : 0;
  for (int i = 0; i < 3; ++i) p.shard_disk += DirectoryBytes(run_dir + "/shard" + std::to_string(i));
  p.coord_disk = DirectoryBytes(run_dir + "/coord");
  p.embedded_disk = DirectoryBytes(run_dir + "/embedded/index");
  for (auto& s : shards) p.shard_rss = std::max(p.shard_rss, PeakRss(s->pid()));
  coordinator.Terminate();
  for (auto& s : shards) s->Terminate();
  p.same_decisions = KeptIds(run_dir + "/service") == KeptIds(run_dir + "/embedded");
  if (p.rc == 0) fs::remove_all(run_dir);  // kept, with its logs, when a command failed
  return p;
}

void ServiceSuite(const BenchOptions& opt, std::vector<BenchRow>* rows) {
  const std::string bin = opt.bin_dir + "/shingleton";
  const std::string gen = opt.bin_dir + "/shingleton-demo-gen";
  const std::string dir = opt.work_dir + "/service";
  fs::remove_all(dir);
  fs::create_directories(dir);
  const size_t docs = opt.quick ? 4000 : 40000;
  const std::string corpus = dir + "/crawl.jsonl", log = dir + "/bench.log";
  if (Run(gen, {"--docs", std::to_string(docs), "--mean-bytes", "2000", "--out", corpus, "--truth",
                dir + "/truth.tsv"}, log) != 0) {
    rows->push_back({"service_vs_embedded", 0, "docs/s", "embedded_dedup", 0, 0.6,
                     "could not run " + gen + " (see " + log + ")"});
    return;
  }
  // Two worker inputs: lines dealt alternately.
  {
    std::ifstream in(corpus);
    std::ofstream p0(dir + "/part0.jsonl"), p1(dir + "/part1.jsonl");
    size_t i = 0;
    for (std::string line; std::getline(in, line); ++i) (i % 2 ? p1 : p0) << line << "\n";
  }
  // Six processes share the 2 cores during the service run, and single runs' ratios
  // spread from 0.43 to 0.65 on one day's shared machine (2026-12-05): the figure is
  // the pair with the median ratio, its range in the note.
  const int pairs = opt.quick ? 1 : 5;
  std::vector<ServicePair> runs;
  for (int i = 0; i < pairs; ++i) runs.push_back(RunServicePair(bin, dir, dir + "/run" + std::to_string(i)));
  std::sort(runs.begin(), runs.end(), [](const ServicePair& a, const ServicePair& b) { return a.ratio() < b.ratio(); });
  const ServicePair& p = runs[runs.size() / 2];
  int rc = 0;
  bool same = true;
  for (const ServicePair& r : runs) {
    rc |= r.rc;
    same = same && r.same_decisions;
  }

  char spread[128];
  std::snprintf(spread, sizeof spread, "median of %d pairs (ratios %.2f..%.2f)", pairs, runs.front().ratio(),
                runs.back().ratio());
  BenchRow r{"service_vs_embedded", docs / p.t_service, "docs/s", "embedded_dedup", docs / p.t_embedded, 0.6,
             std::to_string(docs) + " demo docs; 3 shards + coordinator + 2 workers (1 thread each) + finalize, " +
                 "servers on one 2-core machine with the workers; " + spread};
  if (rc != 0) r.note = "a command failed (logs in " + dir + "); " + r.note;
  if (!same) r.note = "DECISIONS DIFFER; " + r.note;
  if (r.ratio() < 0.6) {
    char split[160];
    std::snprintf(split, sizeof split, "; below goal: finalize %.2f s of %.2f s", p.t_service - p.t_ingest,
                  p.t_service);
    r.note += split;
    r.note += "; ingest is CPU-bound on the same 2 cores as the signing (workers keep 4 batches in flight and "
              "concurrent batches share WAL syncs, so waiting is not the cost): every signature crosses loopback "
              "gRPC twice and is stored on every shard and the coordinator (each a synced WAL write and a memtable "
              "insert), and each shard appends 16/3 postings per document to a vector memtable that it sorts "
              "and flushes when verification starts, where the embedded job writes sorted SST runs without a WAL";
  }
  rows->push_back(r);
  rows->push_back({"service_ingest", docs / p.t_ingest, "docs/s", "embedded_dedup", docs / p.t_embedded, 0,
                   "ingest only (2 workers), without finalize; the same pair"});
  rows->push_back({"service_net_bytes_per_doc", static_cast<double>(p.lo_total) / docs, "B/doc", "", 0, 0,
                   "loopback bytes received during ingest + finalize (" + std::to_string(p.lo_ingest / docs) +
                       " B/doc in ingest); an upper bound: other loopback traffic of the machine counts too"});
  rows->push_back({"coordinator_bytes_per_doc", static_cast<double>(p.coord_growth) / docs, "B/doc", "", 0, 0,
                   "coordinator peak RSS growth over the job (incl. finalize), per document; shard peak RSS " +
                       std::to_string(p.shard_rss >> 20) + " MiB"});
  rows->push_back({"service_disk_bytes_per_doc", static_cast<double>(p.shard_disk + p.coord_disk) / docs, "B/doc", "",
                   0, 0,
                   "embedded index " + std::to_string(p.embedded_disk / docs) + " B/doc; 3 shards " +
                       std::to_string(p.shard_disk / docs) + " B/doc + coordinator " +
                       std::to_string(p.coord_disk / docs) + " B/doc (a signature is stored on every shard that "
                       "holds one of the document's postings, and on the coordinator)"});
  if (rc == 0) fs::remove_all(dir);
}

SHINGLETON_BENCH_SUITE(index_insert, IndexInsertSuite);
SHINGLETON_BENCH_SUITE(query, QuerySuite);
SHINGLETON_BENCH_SUITE(service_vs_embedded, ServiceSuite);

}  // namespace
}  // namespace shingleton::bench
