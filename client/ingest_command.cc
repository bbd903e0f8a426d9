// `shingleton ingest`: an ingest worker. Reads and signs documents locally with the
// same IngestPipeline as the embedded job, and streams signatures and metadata
// (never the text) to the coordinator, with up to --window batches unacknowledged
// (client/ingest_stream.h).
//
// Retries: when the stream breaks (coordinator restart, network), the worker
// reconnects and re-sends every unacknowledged batch; re-sending is harmless because
// the coordinator recognises documents it already holds.
#include <chrono>
#include <cmath>
#include <iomanip>
#include <iostream>
#include <memory>

#include "client/commands.h"
#include "client/ingest_stream.h"
#include "client/job_flags.h"
#include "client/progress.h"
#include "index/signature_codec.h"
#include "index/ingest_pipeline.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::cli {
namespace {

struct IngestFlags {
  JobFlags job;
  ClientFlags client;
  std::string job_name;
  std::string worker;
  IngestStreamOptions stream;
};

int RunIngest(IngestFlags& f) {
  Status s = ApplyJobFlags(&f.job);
  if (s.ok()) s = ApplyClientFlags(&f.client);
  if (!s.ok()) {
    std::cerr << "shingleton ingest: " << s.message() << "\n";
    return 2;
  }
  const DedupOptions& o = f.job.options;
  auto scheme = SchemeFromOptions(o);
  if (!scheme.ok()) {
    std::cerr << "shingleton ingest: " << scheme.status().message() << "\n";
    return 2;
  }
  auto channel = rpc::MakeChannel(f.client.coordinator, f.client.security);
  if (!channel.ok()) {
    std::cerr << "shingleton ingest: " << channel.status().message() << "\n";
    return 2;
  }
  auto stub = v1::Coordinator::NewStub(channel.value());

  v1::JobParams params;
  params.set_scheme(scheme->Serialize());
  params.set_threshold(o.threshold);
  params.set_keep_policy(o.policy.Name());
  params.set_all_pairs_limit(static_cast<uint32_t>(o.all_pairs_limit));
  params.set_max_leaders(static_cast<uint32_t>(o.max_leaders));
  params.set_chain_guard(o.chain_guard);
  params.set_chain_bound(o.chain_bound);
  const int k = scheme->num_hashes, bands = scheme->bands;
  uint64_t seq = 0, ordinal = 0, sent = 0, accepted = 0, repeated = 0, skipped = 0;
  const auto start = std::chrono::steady_clock::now();
  f.stream.security = f.client.security;
  IngestStream stream(stub.get(), f.stream, [&](const v1::IngestAck& ack) -> Status {
    accepted += ack.accepted();
    repeated += ack.repeated_documents();
    if (ack.rejected_size() > 0) {
      if (!o.skip_bad) return Status::BadInput(ack.rejected(0));
      skipped += ack.rejected_size();
    }
    return Status::Ok();
  });

  auto sink = [&](const SignedBatch& batch) -> Status {
    v1::IngestRequest req;
    req.set_job(f.job_name);
    *req.mutable_params() = params;
    req.set_batch_seq(seq++);
    req.set_worker(f.worker);
    for (size_t i = 0; i < batch.records.size(); ++i) {
      const SignedRecord& rec = batch.records[i];
      if (rec.bad != BadRecord::kNone) {
        if (!o.skip_bad) return rec.error;
        ++skipped;
        continue;
      }
      if (!rec.skipped.empty()) continue;  // a WARC record without a document
      v1::SignedDocument* d = req.add_documents();
      d->set_id(rec.meta.id);
      d->set_key(rec.meta.key);
      d->set_url(rec.meta.url);
      d->set_text_bytes(rec.meta.text_bytes);
      d->set_tokens(rec.meta.tokens);
      d->set_has_rank(!std::isnan(rec.meta.rank));
      if (d->has_rank()) d->set_rank(rec.meta.rank);
      d->set_source(rec.meta.source);
      d->set_excerpt(rec.meta.excerpt);
      d->set_ordinal(ordinal++);
      d->set_content_hi(rec.meta.content_hi);
      d->set_content_lo(rec.meta.content_lo);
      d->set_date(rec.meta.date);
      d->set_signature(PackSignature(batch.sig(i, k), k));
      const uint64_t* b = batch.bucket(i, bands);
      for (int j = 0; j < bands; ++j) d->add_buckets(b[j]);
    }
    sent += req.documents_size();
    return stream.Send(std::move(req));
  };
  s = RunIngestPipeline(o.ingest, scheme.value(), sink);
  Status closed = stream.Close();
  if (s.ok()) s = closed;
  if (!s.ok()) {
    std::cerr << "shingleton ingest: " << s.ToString() << "\n"
              << "shingleton ingest: " << accepted
              << " documents were acknowledged before the error; running the same ingest again is safe\n";
    return 1;
  }
  const double secs = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  std::cout << "shingleton ingest: job " << f.job_name << ": " << WithCommas(sent) << " documents sent, "
            << WithCommas(accepted) << " new, " << WithCommas(repeated) << " already present, "
            << WithCommas(skipped) << " skipped, in " << std::fixed << std::setprecision(1) << secs << " s\n";
  return 0;
}

}  // namespace

void AddIngestCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<IngestFlags>();
  CLI::App* cmd = app->add_subcommand(
      "ingest",
      "Ingest worker: sign JSON Lines documents locally and stream their signatures and\n"
      "metadata (not the text) to a coordinator. The first ingest of a job creates it with\n"
      "these parameters; later ones must use the same. Safe to re-run after a failure.");
  cmd->add_option("-i,--input", f->job.options.ingest.inputs, "Input file (JSON Lines or WARC; plain, gzip or zstd); repeatable")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("--job", f->job_name, "Job name (letters, digits, - _ .)")->required();
  cmd->add_option("--worker", f->worker, "Worker name for the coordinator's logs");
  AddJobFlags(cmd, &f->job);
  AddClientFlags(cmd, &f->client);
  cmd->add_option("--stream-deadline", f->stream.stream_deadline_s, "Deadline of one ingest stream, seconds")
      ->capture_default_str();
  cmd->add_option("--retries", f->stream.retries,
                  "Reconnects after transient failures without an acknowledgement in between")
      ->capture_default_str();
  cmd->add_option("--window", f->stream.window,
                  "Batches sent before their acknowledgement arrives (1: wait for each)")
      ->capture_default_str()
      ->check(CLI::Range(1, 64));
  cmd->add_option("--batch-docs", f->job.options.ingest.batch_lines,
                  "Documents (input lines) per batch; a batch also closes at 4 MiB of text")
      ->capture_default_str()
      ->check(CLI::Range(1, 1 << 20));
  cmd->callback([f, rc] { *rc = RunIngest(*f); });
}

}  // namespace shingleton::cli
