// Inspection of a finished job: read-only answers from what the job stored in its
// index (documents, signatures, postings, decisions, edges, the job record), with
// no recomputation of the job. The embedded job's index and a coordinator's job
// store are both IndexStores, so `shingleton inspect --index` and the coordinator's
// Inspect RPC call the same functions here.
//
//   stats     counts, drops by reason, cluster-size histogram, size on disk, scheme
//   clusters  the largest or the most spread-out clusters
//   cluster   one cluster's members with estimated (and, with stored text, exact) Jaccard
//   explain   one document's decision and its evidence: edges, colliding bands,
//             rejected candidates, and the chain of edges to its kept document
//   query     the near-duplicates of an arbitrary text (postings needed)
//   diff      two documents' normalised texts with their shared shingles marked
//
// A cluster's spread is the lowest estimated Jaccard of a member to its kept
// document; a spread below the job's threshold means union-find chained members
// that are not themselves near-duplicates of the kept document (see chain_guard.h).
// Text is "full" when the index holds the whole text (dedup --store-text), else
// only the audit excerpt (dedup --excerpt-bytes, default 160 bytes).
//
// Thread safety: an Inspector only reads; its methods may run concurrently.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "index/document.h"
#include "index/index_store.h"
#include "index/status.h"
#include "index/text_diff.h"

namespace shingleton {

// What a document is, for reports: the metadata without the text.
struct DocInfo {
  uint64_t key = 0;
  std::string id, url, source;
  uint64_t text_bytes = 0, tokens = 0;
  bool full_text = false;  // the index holds its whole text
};

// A decision in words. reason: "" (kept), "exact", "near" or "reference".
struct DecisionInfo {
  bool kept = true;
  std::string duplicate_of;  // id of the kept document; empty when kept
  std::string reason;
  std::string cluster;  // 16 hex digits (ClusterLabel)
  uint32_t cluster_size = 1;
  double similarity = 1;  // estimated Jaccard to the kept document
};

struct StatsReport {
  std::string index_path, scheme;
  double threshold = 0;     // from the job record; 0 if unknown
  std::string keep_policy;  // from the job record
  uint64_t documents = 0, kept = 0, dropped = 0, full_text_documents = 0;
  std::map<std::string, uint64_t> dropped_by_reason;
  uint64_t clusters = 0, largest_cluster = 0;
  uint64_t chained_clusters = 0;  // spread below the threshold
  uint64_t edges = 0;             // distinct verified pairs
  // Clusters of 2+ documents by size: "2", "3-4", "5-8", ... (powers of two).
  std::vector<std::pair<std::string, uint64_t>> size_histogram;
  uint64_t bytes_on_disk = 0;
};

struct ClusterRow {
  std::string cluster;  // label
  std::string kept_id;
  uint32_t size = 0;
  double spread = 1;  // lowest member similarity to the kept document
};

struct ClusterQuery {
  uint32_t min_size = 2;        // Default: 2
  bool sort_by_spread = false;  // Default: by size (largest first); spread: lowest first
  double spread_below = 2;      // only clusters with spread < this. Default: 2 (all)
  bool chains_only =
      false;          // only clusters with spread < the job's threshold. Default: false
  size_t limit = 20;  // 0: all. Default: 20
};

struct MemberRow {
  DocInfo doc;
  DecisionInfo decision;
  double exact_jaccard = -1;  // vs the kept document; -1 unless both texts are full
};

struct ClusterReport {
  ClusterRow summary;
  std::vector<MemberRow> members;  // kept first, then by similarity descending, id
};

// One neighbour of a document: a verified edge or a rejected candidate.
struct EvidenceRow {
  std::string other_id;
  double similarity = 0;       // estimated Jaccard of the two signatures
  bool edge = false;           // verified (>= threshold) and stored by the job
  bool exact = false;          // identical normalised text (found without LSH)
  std::vector<int> bands;      // every band whose bucket the two share
  std::string other_decision;  // "kept" or "dropped -> ID"
};

struct ChainHop {
  std::string from, to;
  double similarity = 0;
  std::string via;  // "band N" or "exact"
};

struct Explanation {
  DocInfo doc;
  DecisionInfo decision;
  std::vector<EvidenceRow> evidence;  // edges first, then candidates; by similarity, id
  size_t candidates_not_shown = 0;
  std::vector<ChainHop> chain;  // doc -> ... -> kept document (shortest, by edges)
  double threshold = 0;
};

struct TextQueryHit {
  std::string id, url;
  double similarity = 0;
  int bands = 0;         // bands whose bucket the text shares with the document
  std::string decision;  // "kept" or "dropped -> ID"
};

struct DiffReport {
  DocInfo a, b;
  uint64_t shingles_a = 0, shingles_b = 0, shared_shingles = 0;
  double estimated_jaccard = 0;  // signatures
  double text_jaccard = 0;       // shingle sets of the stored texts
  bool exact = false;            // both texts full: text_jaccard is the exact Jaccard
  std::vector<TextRun> runs_a, runs_b;
};

class Inspector {
 public:
  // REQUIRES: `store` outlives the inspector.
  explicit Inspector(const IndexStore* store);
  // Opens the index at `path` read-only and owns it.
  static StatusOr<std::unique_ptr<Inspector>> Open(const std::string& path);

  StatusOr<StatsReport> Stats() const;
  StatusOr<std::vector<ClusterRow>> Clusters(const ClusterQuery& q) const;
  // `ref` is a member's id or a cluster label.
  StatusOr<ClusterReport> Cluster(const std::string& ref) const;
  // At most `max_candidates` rejected candidates are listed (all edges always are).
  StatusOr<Explanation> Explain(const std::string& id, size_t max_candidates = 20) const;
  // min_similarity 0 means the job's threshold. REQUIRES: text is valid UTF-8.
  StatusOr<std::vector<TextQueryHit>> Query(std::string_view text, double min_similarity,
                                        size_t limit) const;
  StatusOr<DiffReport> Diff(const std::string& id_a, const std::string& id_b) const;

  // The job's threshold (job record), or 0.8 when the record is missing.
  double threshold() const { return threshold_; }

 private:
  struct ClusterTally {
    uint32_t size = 0;
    double spread = 1;  // lowest member similarity to the kept document
  };
  using DecisionFn = std::function<Status(const DocumentMeta&, const Decision&)>;
  // Calls fn (if any) for every document and its decision, in key order, and
  // tallies the job's clusters by label (reference drops belong to none).
  Status ScanDecisions(const DecisionFn& fn,
                       std::map<uint64_t, ClusterTally>* clusters) const;
  StatusOr<DocumentMeta> Document(const std::string& id) const;
  StatusOr<DecisionInfo> DescribeDecision(const DocumentMeta& doc) const;
  std::string DecisionWord(uint64_t key) const;
  StatusOr<std::vector<uint64_t>> Component(uint64_t start) const;
  StatusOr<std::vector<ChainHop>> ChainToKept(uint64_t key, uint64_t kept) const;

  std::unique_ptr<IndexStore> owned_;
  const IndexStore* store_;
  double threshold_ = 0.8;
  std::string keep_policy_;
  uint64_t edges_ = 0;                              // of the job record
  std::map<std::string, uint64_t> record_reasons_;  // dropped_by_reason of the job record
};

DocInfo InfoOf(const DocumentMeta& doc);

}  // namespace shingleton
