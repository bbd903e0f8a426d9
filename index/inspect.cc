#include "index/inspect.h"

#include <simdjson.h>

#include <algorithm>
#include <cinttypes>
#include <cstdio>
#include <deque>
#include <filesystem>
#include <set>
#include <unordered_map>

#include "index/bands.h"
#include "index/manifest.h"
#include "index/minhash.h"
#include "index/shingler.h"
#include "index/signer.h"
#include "index/text_diff.h"

namespace shingleton {
namespace {

bool HasFullText(const DocumentMeta& d) { return d.excerpt.size() == d.text_bytes; }

// Bands whose buckets two signatures share.
std::vector<int> SharedBands(const SketchScheme& s, const uint32_t* a,
                             const uint32_t* b) {
  std::vector<int> out;
  for (int band = 0; band < s.bands; ++band) {
    if (BandBucket(a, band, s.rows, s.seed) == BandBucket(b, band, s.rows, s.seed))
      out.push_back(band);
  }
  return out;
}

std::string SizeBin(uint64_t size) {
  if (size <= 2) return "2";
  uint64_t hi = 4;
  while (hi < size) hi *= 2;
  return std::to_string(hi / 2 + 1) + "-" + std::to_string(hi);
}

uint64_t BinOrder(const std::string& bin) { return std::stoull(bin); }

bool ParseLabel(const std::string& text, uint64_t* key) {
  if (text.size() != 16) return false;
  char* end = nullptr;
  *key = std::strtoull(text.c_str(), &end, 16);
  return *end == '\0';
}

}  // namespace

DocInfo InfoOf(const DocumentMeta& doc) {
  DocInfo i;
  i.key = doc.key;
  i.id = doc.id;
  i.url = doc.url;
  i.source = doc.source;
  i.text_bytes = doc.text_bytes;
  i.tokens = doc.tokens;
  i.full_text = HasFullText(doc);
  return i;
}

Inspector::Inspector(const IndexStore* store) : store_(store) {
  auto record = store_->GetMeta("job");  // the job record (PutJobRecord)
  if (!record.ok()) return;
  simdjson::dom::parser parser;
  simdjson::dom::element root;
  if (parser.parse(record.value()).get(root) != simdjson::SUCCESS) return;
  double t;
  if (root["threshold"].get(t) == simdjson::SUCCESS && t > 0 && t < 1) threshold_ = t;
  std::string_view policy;
  uint64_t edges;
  if (root["edges"].get(edges) == simdjson::SUCCESS) edges_ = edges;
  if (root["keep_policy"].get(policy) == simdjson::SUCCESS)
    keep_policy_ = std::string(policy);
  simdjson::dom::object reasons;
  if (root["dropped_by_reason"].get(reasons) == simdjson::SUCCESS) {
    for (auto [name, value] : reasons) {
      uint64_t n;
      if (value.get(n) == simdjson::SUCCESS && n > 0)
        record_reasons_[std::string(name)] = n;
    }
  }
}

StatusOr<std::unique_ptr<Inspector>> Inspector::Open(const std::string& path) {
  StoreOptions so;
  so.read_only = true;
  auto store = IndexStore::Open(path, nullptr, so);
  if (!store.ok()) return store.status().WithContext("opening index " + path);
  auto inspector = std::make_unique<Inspector>(store.value().get());
  inspector->owned_ = std::move(store.value());
  return inspector;
}

StatusOr<DocumentMeta> Inspector::Document(const std::string& id) const {
  auto doc = store_->GetDocument(DocKey(id));
  if (!doc.ok() || doc->id != id) {
    if (doc.ok() || doc.status().code() == Status::Code::kNotFound) {
      return Status::NotFound("no document with id \"" + id + "\" in the index " +
                              store_->path());
    }
    return doc.status();
  }
  return doc;
}

StatusOr<DecisionInfo> Inspector::DescribeDecision(const DocumentMeta& doc) const {
  auto d = store_->GetDecision(doc.key);
  if (!d.ok()) {
    if (d.status().code() != Status::Code::kNotFound) return d.status();
    return Status::NotFound("no decision for \"" + doc.id + "\" in " + store_->path() +
                            " (the job did not finish)");
  }
  DecisionInfo info;
  info.kept = d->kept();
  info.cluster = ClusterLabel(d->cluster);
  info.cluster_size = d->cluster_size;
  info.similarity = d->similarity;
  if (info.kept) return info;
  if (d->for_reference) {
    info.reason = "reference";
    info.duplicate_of = "reference document " + ClusterLabel(d->kept_key);
    return info;
  }
  SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta kept, store_->GetDocument(d->kept_key));
  info.duplicate_of = kept.id;
  info.reason = doc.SameContent(kept) ? "exact" : "near";
  return info;
}

std::string Inspector::DecisionWord(uint64_t key) const {
  auto d = store_->GetDecision(key);
  if (!d.ok()) return "undecided";
  if (d->kept()) return "kept";
  if (d->for_reference) return "dropped -> reference " + ClusterLabel(d->kept_key);
  auto kept = store_->GetDocument(d->kept_key);
  return "dropped -> " + (kept.ok() ? kept->id : ClusterLabel(d->kept_key));
}

Status Inspector::ScanDecisions(const DecisionFn& fn,
                                std::map<uint64_t, ClusterTally>* clusters) const {
  // One key-order scan of documents and decisions.
  return store_->ForEachDocumentRecord([&](const DocumentMeta& doc, const Decision* d,
                                           const std::vector<uint32_t>&) -> Status {
    if (d == nullptr) return Status::NotFound("decision of " + doc.id + ": the index holds no decision for it");
    if (!d->for_reference) {
      ClusterTally& c = (*clusters)[d->cluster];
      ++c.size;
      c.spread = std::min<double>(c.spread, d->similarity);
    }
    return fn ? fn(doc, *d) : Status::Ok();
  }, /*with_signatures=*/false);
}

StatusOr<StatsReport> Inspector::Stats() const {
  StatsReport r;
  r.index_path = store_->path();
  r.scheme = store_->scheme().Serialize();
  r.threshold = threshold_;
  r.keep_policy = keep_policy_;
  std::map<std::string, uint64_t> reasons;
  std::map<uint64_t, ClusterTally> clusters;
  SHINGLETON_RETURN_IF_ERROR(ScanDecisions(
      [&](const DocumentMeta& doc, const Decision&) -> Status {
        ++r.documents;
        if (HasFullText(doc)) ++r.full_text_documents;
        SHINGLETON_ASSIGN_OR_RETURN(DecisionInfo info, DescribeDecision(doc));
        if (info.kept) {
          ++r.kept;
        } else {
          ++r.dropped;
          ++reasons[info.reason];
        }
        return Status::Ok();
      },
      &clusters));
  r.dropped_by_reason = record_reasons_.empty() ? reasons : record_reasons_;
  std::map<uint64_t, std::pair<std::string, uint64_t>> bins;
  for (const auto& [label, c] : clusters) {
    if (c.size < 2) continue;
    ++r.clusters;
    r.largest_cluster = std::max<uint64_t>(r.largest_cluster, c.size);
    if (c.spread < threshold_) ++r.chained_clusters;
    const std::string bin = SizeBin(c.size);
    auto& slot = bins[BinOrder(bin)];
    slot.first = bin;
    ++slot.second;
  }
  for (const auto& [order, bin] : bins) r.size_histogram.push_back(bin);
  r.edges = edges_;
  r.bytes_on_disk = DirectoryBytes(store_->path());
  return r;
}

StatusOr<std::vector<ClusterRow>> Inspector::Clusters(const ClusterQuery& q) const {
  std::map<uint64_t, ClusterTally> clusters;
  SHINGLETON_RETURN_IF_ERROR(ScanDecisions(nullptr, &clusters));
  std::vector<ClusterRow> rows;
  for (const auto& [label, c] : clusters) {
    if (c.size < std::max<uint32_t>(q.min_size, 2) || !(c.spread < q.spread_below))
      continue;
    if (q.chains_only && !(c.spread < threshold_)) continue;
    ClusterRow row;
    row.cluster = ClusterLabel(label);
    row.size = c.size;
    row.spread = c.spread;
    rows.push_back(row);
  }
  auto by_size = [](const ClusterRow& a, const ClusterRow& b) {
    return a.size != b.size ? a.size > b.size : a.cluster < b.cluster;
  };
  auto by_spread = [](const ClusterRow& a, const ClusterRow& b) {
    if (a.spread != b.spread) return a.spread < b.spread;
    return a.size != b.size ? a.size > b.size : a.cluster < b.cluster;
  };
  if (q.sort_by_spread) {
    std::sort(rows.begin(), rows.end(), by_spread);
  } else {
    std::sort(rows.begin(), rows.end(), by_size);
  }
  if (q.limit > 0 && rows.size() > q.limit) rows.resize(q.limit);
  for (ClusterRow& row : rows) {
    uint64_t key = 0;
    ParseLabel(row.cluster, &key);
    SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta kept, store_->GetDocument(key));
    row.kept_id = kept.id;
  }
  return rows;
}

StatusOr<std::vector<uint64_t>> Inspector::Component(uint64_t start) const {
  std::set<uint64_t> seen{start};
  std::deque<uint64_t> todo{start};
  while (!todo.empty()) {
    const uint64_t key = todo.front();
    todo.pop_front();
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<Edge> edges, store_->EdgesOf(key));
    for (const Edge& e : edges) {
      const uint64_t other = e.a == key ? e.b : e.a;
      if (seen.insert(other).second) todo.push_back(other);
    }
  }
  return std::vector<uint64_t>(seen.begin(), seen.end());
}

StatusOr<ClusterReport> Inspector::Cluster(const std::string& ref) const {
  uint64_t label = 0;
  auto member = Document(ref);
  if (member.ok()) {
    SHINGLETON_ASSIGN_OR_RETURN(Decision d, store_->GetDecision(member->key));
    if (d.for_reference) {
      return Status::NotFound(
          "\"" + ref +
          "\" was dropped for a reference document; it is in no cluster of this job");
    }
    label = d.cluster;
  } else if (!ParseLabel(ref, &label)) {
    return member.status().WithContext(
        "not a document id nor a 16-hex-digit cluster label");
  }
  auto kept_doc = store_->GetDocument(label);
  if (!kept_doc.ok())
    return Status::NotFound("no cluster " + ref + " in " + store_->path());
  const SketchScheme& scheme = store_->scheme();
  const std::vector<uint64_t> kept_set = ShingleSetOfText(scheme, kept_doc->excerpt);
  ClusterReport report;
  report.summary.cluster = ClusterLabel(label);
  report.summary.kept_id = kept_doc->id;
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint64_t> component, Component(label));
  for (uint64_t key : component) {
    SHINGLETON_ASSIGN_OR_RETURN(Decision d, store_->GetDecision(key));
    if (d.cluster != label || d.for_reference) continue;
    SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta doc, store_->GetDocument(key));
    MemberRow row;
    row.doc = InfoOf(doc);
    SHINGLETON_ASSIGN_OR_RETURN(row.decision, DescribeDecision(doc));
    if (row.doc.full_text && HasFullText(*kept_doc)) {
      row.exact_jaccard = ExactJaccard(ShingleSetOfText(scheme, doc.excerpt), kept_set);
    }
    report.members.push_back(std::move(row));
  }
  std::sort(report.members.begin(), report.members.end(),
            [](const MemberRow& a, const MemberRow& b) {
              if (a.decision.kept != b.decision.kept) return a.decision.kept;
              if (a.decision.similarity != b.decision.similarity)
                return a.decision.similarity > b.decision.similarity;
              return a.doc.id < b.doc.id;
            });
  report.summary.size = static_cast<uint32_t>(report.members.size());
  for (const MemberRow& m : report.members) {
    report.summary.spread = std::min(report.summary.spread, m.decision.similarity);
  }
  return report;
}

StatusOr<std::vector<ChainHop>> Inspector::ChainToKept(uint64_t key,
                                                       uint64_t kept) const {
  std::unordered_map<uint64_t, Edge> parent;  // node -> edge it was reached by
  std::deque<uint64_t> todo{key};
  parent[key] = Edge{};
  while (!todo.empty() && !parent.count(kept)) {
    const uint64_t at = todo.front();
    todo.pop_front();
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<Edge> edges, store_->EdgesOf(at));
    for (const Edge& e : edges) {
      const uint64_t other = e.a == at ? e.b : e.a;
      if (parent.emplace(other, e).second) todo.push_back(other);
    }
  }
  std::vector<ChainHop> hops;
  if (!parent.count(kept) || key == kept) return hops;
  for (uint64_t at = kept; at != key;) {
    const Edge& e = parent[at];
    const uint64_t from = e.a == at ? e.b : e.a;
    ChainHop hop;
    SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta f, store_->GetDocument(from));
    SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta t, store_->GetDocument(at));
    hop.from = f.id;
    hop.to = t.id;
    hop.similarity = e.similarity;
    hop.via = e.band == Edge::kExactBand ? "exact" : "band " + std::to_string(e.band);
    hops.push_back(hop);
    at = from;
  }
  std::reverse(hops.begin(), hops.end());
  return hops;
}

StatusOr<Explanation> Inspector::Explain(const std::string& id,
                                         size_t max_candidates) const {
  SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta doc, Document(id));
  const SketchScheme& scheme = store_->scheme();
  Explanation x;
  x.threshold = threshold_;
  x.doc = InfoOf(doc);
  SHINGLETON_ASSIGN_OR_RETURN(x.decision, DescribeDecision(doc));
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sig, store_->GetSignature(doc.key));
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<Edge> edges, store_->EdgesOf(doc.key));
  std::set<uint64_t> linked;
  auto row_for = [&](uint64_t other, double similarity) -> StatusOr<EvidenceRow> {
    SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta o, store_->GetDocument(other));
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> osig, store_->GetSignature(other));
    EvidenceRow row;
    row.other_id = o.id;
    row.similarity = similarity >= 0
                         ? similarity
                         : EstimateJaccard(sig.data(), osig.data(), scheme.num_hashes);
    row.bands = SharedBands(scheme, sig.data(), osig.data());
    row.other_decision = DecisionWord(other);
    return row;
  };
  for (const Edge& e : edges) {
    const uint64_t other = e.a == doc.key ? e.b : e.a;
    linked.insert(other);
    SHINGLETON_ASSIGN_OR_RETURN(EvidenceRow row, row_for(other, e.similarity));
    row.edge = true;
    row.exact = e.band == Edge::kExactBand;
    x.evidence.push_back(std::move(row));
  }
  std::set<uint64_t> candidates;
  for (int band = 0; band < scheme.bands; ++band) {
    SHINGLETON_ASSIGN_OR_RETURN(
        std::vector<uint64_t> members,
        store_->BucketMembers(band,
                              BandBucket(sig.data(), band, scheme.rows, scheme.seed)));
    for (uint64_t m : members) {
      if (m != doc.key && !linked.count(m)) candidates.insert(m);
    }
  }
  std::vector<EvidenceRow> rejected;
  for (uint64_t c : candidates) {
    SHINGLETON_ASSIGN_OR_RETURN(EvidenceRow row, row_for(c, -1));
    rejected.push_back(std::move(row));
  }
  auto order = [](const EvidenceRow& a, const EvidenceRow& b) {
    return a.similarity != b.similarity ? a.similarity > b.similarity
                                        : a.other_id < b.other_id;
  };
  std::sort(x.evidence.begin(), x.evidence.end(), order);
  std::sort(rejected.begin(), rejected.end(), order);
  if (rejected.size() > max_candidates) {
    x.candidates_not_shown = rejected.size() - max_candidates;
    rejected.resize(max_candidates);
  }
  x.evidence.insert(x.evidence.end(), rejected.begin(), rejected.end());
  if (!x.decision.kept && x.decision.reason != "reference") {
    SHINGLETON_ASSIGN_OR_RETURN(Decision d, store_->GetDecision(doc.key));
    SHINGLETON_ASSIGN_OR_RETURN(x.chain, ChainToKept(doc.key, d.kept_key));
  }
  return x;
}

StatusOr<std::vector<TextQueryHit>> Inspector::Query(std::string_view text,
                                                 double min_similarity,
                                                 size_t limit) const {
  const SketchScheme& scheme = store_->scheme();
  const double floor = min_similarity > 0 ? min_similarity : threshold_;
  std::vector<uint32_t> sig(scheme.num_hashes);
  std::vector<uint64_t> buckets(scheme.bands);
  Signer signer(scheme);
  signer.Sign(text, sig.data(), buckets.data());
  std::map<uint64_t, int> bands_of;
  for (int band = 0; band < scheme.bands; ++band) {
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint64_t> members,
                                store_->BucketMembers(band, buckets[band]));
    for (uint64_t m : members) ++bands_of[m];
  }
  std::map<uint64_t, std::pair<double, int>> found;  // key -> similarity, bands
  for (const auto& [key, bands] : bands_of) {
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> other, store_->GetSignature(key));
    const double s = EstimateJaccard(sig.data(), other.data(), scheme.num_hashes);
    if (s < floor) continue;
    found[key] = {s, bands};
    // Exact copies of a document write no postings; their exact edges find them.
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<Edge> edges, store_->EdgesOf(key));
    for (const Edge& e : edges) {
      if (e.band == Edge::kExactBand)
        found.emplace(e.a == key ? e.b : e.a, std::make_pair(s, bands));
    }
  }
  std::vector<TextQueryHit> hits;
  for (const auto& [key, value] : found) {
    SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta doc, store_->GetDocument(key));
    TextQueryHit h;
    h.id = doc.id;
    h.url = doc.url;
    h.similarity = value.first;
    h.bands = value.second;
    h.decision = DecisionWord(key);
    hits.push_back(std::move(h));
  }
  std::sort(hits.begin(), hits.end(), [](const TextQueryHit& a, const TextQueryHit& b) {
    return a.similarity != b.similarity ? a.similarity > b.similarity : a.id < b.id;
  });
  if (limit > 0 && hits.size() > limit) hits.resize(limit);
  return hits;
}

StatusOr<DiffReport> Inspector::Diff(const std::string& id_a,
                                     const std::string& id_b) const {
  SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta a, Document(id_a));
  SHINGLETON_ASSIGN_OR_RETURN(DocumentMeta b, Document(id_b));
  const SketchScheme& scheme = store_->scheme();
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sa, store_->GetSignature(a.key));
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sb, store_->GetSignature(b.key));
  DiffReport r;
  r.a = InfoOf(a);
  r.b = InfoOf(b);
  r.estimated_jaccard = EstimateJaccard(sa.data(), sb.data(), scheme.num_hashes);
  const SharedShingles shared = MarkSharedShingles(scheme, a.excerpt, b.excerpt);
  r.shingles_a = shared.shingles_a;
  r.shingles_b = shared.shingles_b;
  r.shared_shingles = shared.shared;
  r.text_jaccard = shared.jaccard;
  r.exact = r.a.full_text && r.b.full_text;
  r.runs_a = shared.runs_a;
  r.runs_b = shared.runs_b;
  return r;
}

}  // namespace shingleton
