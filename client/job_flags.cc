#include "client/job_flags.h"

namespace shingleton::cli {

void AddJobFlags(CLI::App* cmd, JobFlags* flags) {
  DedupOptions& o = flags->options;
  cmd->add_option("-t,--threshold", o.threshold,
                  "Minimum estimated Jaccard similarity of two documents to count as "
                  "near-duplicates (0 < t < 1)")
      ->capture_default_str();
  cmd->add_option("-j,--threads", o.ingest.threads, "Worker threads; 0 uses every core")
      ->capture_default_str();
  cmd->add_option("--id-field", o.ingest.fields.id, "JSON field holding the unique document id (string)")
      ->capture_default_str();
  cmd->add_option("--text-field", o.ingest.fields.text, "JSON field holding the document text (string)")
      ->capture_default_str();
  cmd->add_option("--url-field", o.ingest.fields.url, "JSON field holding the URL (optional in records)")
      ->capture_default_str();
  cmd->add_option("--date-field", o.ingest.fields.date,
                  "JSON field holding the capture date (ISO 8601), for --keep newest/oldest; "
                  "WARC input uses WARC-Date");
  cmd->add_option("--shingle", flags->shingle,
                  "Shingle kind: word (k consecutive words) or char (k consecutive characters, "
                  "for scripts written without spaces)")
      ->capture_default_str();
  cmd->add_option("--shingle-size", o.shingle_size, "Words or characters per shingle; 0 means 5")
      ->capture_default_str();
  cmd->add_option("--hashes", o.num_hashes, "Signature length k (values per document)")
      ->capture_default_str();
  cmd->add_option("--sketch", o.sketch,
                  "Signature method: minhash (k hash functions per shingle) or oph "
                  "(one-permutation hashing with densification: one hash per shingle, for "
                  "large k; recorded in the index's scheme)")
      ->check(CLI::IsMember({"minhash", "oph"}))
      ->capture_default_str();
  cmd->add_option("--bands", o.bands, "LSH bands b; 0 chooses b and r from the threshold")
      ->capture_default_str();
  cmd->add_option("--rows", o.rows, "LSH rows per band r; 0 chooses b and r from the threshold")
      ->capture_default_str();
  cmd->add_option("--recall-weight", o.fn_weight,
                  "Weight of missed pairs (vs spurious candidates, 1 - w) when choosing bands")
      ->capture_default_str();
  cmd->add_option("--seed", flags->seed_text,
                  "Hash seed of shingles and MinHash (decimal or 0x hex) [default: 0x5348494e47]");
  cmd->add_option("--keep", flags->keep,
                  "Which document of a cluster is kept: longest (most text bytes), first (input "
                  "order), newest/oldest (capture date), or field:NAME (largest numeric field "
                  "NAME); ties go to the smallest id")
      ->capture_default_str();
  cmd->add_flag("--skip-bad", o.skip_bad,
                "Skip and count bad records (malformed JSON, missing id/text, duplicate id, "
                "invalid UTF-8) instead of stopping at the first");
  cmd->add_option("--excerpt-bytes", o.ingest.excerpt_bytes,
                  "Bytes of each text kept in the index as an audit excerpt; 0 keeps none")
      ->capture_default_str();
  cmd->add_option("--all-pairs-limit", o.all_pairs_limit,
                  "Buckets up to this size verify every pair; larger ones compare with leaders")
      ->capture_default_str();
  cmd->add_option("--max-leaders", o.max_leaders, "Leaders kept per large bucket")
      ->capture_default_str();
}

Status ApplyJobFlags(JobFlags* f) {
  DedupOptions& o = f->options;
  SHINGLETON_ASSIGN_OR_RETURN(o.shingle_kind, ParseShingleKind(f->shingle));
  SHINGLETON_ASSIGN_OR_RETURN(o.policy, KeepPolicy::Parse(f->keep));
  if (o.policy.kind() == KeepPolicy::Kind::kField) o.ingest.fields.rank = o.policy.field();
  if (!f->seed_text.empty()) {
    char* end = nullptr;
    o.seed = std::strtoull(f->seed_text.c_str(), &end, 0);
    if (*end != '\0') return Status::InvalidArgument("--seed: not a number: " + f->seed_text);
  }
  return Status::Ok();
}

void AddServerFlags(CLI::App* cmd, ServerFlags* f, const std::string& default_listen) {
  f->listen = default_listen;
  cmd->add_option("--listen", f->listen, "Address to serve on (host:port; port 0 picks a free one)")
      ->capture_default_str();
  cmd->add_option("--port-file", f->port_file,
                  "Write the bound host:port here once serving (useful with port 0)");
  cmd->add_option("--tls-cert", f->security.tls_cert_file, "PEM server certificate chain (enables TLS)");
  cmd->add_option("--tls-key", f->security.tls_key_file, "PEM server private key");
  cmd->add_option("--tls-client-ca", f->security.tls_client_ca_file,
                  "PEM CA: require client certificates signed by it (mutual TLS)");
  cmd->add_option("--token-file", f->token_file,
                  "File whose first line is a bearer token every call must carry");
  cmd->add_flag("--allow-insecure", f->security.allow_insecure,
                "Serve a non-loopback address without TLS or token (trusted networks only)");
  cmd->add_option("--max-message-mb", f->max_message_mb, "Largest message accepted or sent, MiB")
      ->capture_default_str();
}

Status ApplyServerFlags(ServerFlags* f) {
  if (!f->token_file.empty()) {
    SHINGLETON_ASSIGN_OR_RETURN(f->security.token, rpc::ReadTokenFile(f->token_file));
  }
  return Status::Ok();
}

void AddClientFlags(CLI::App* cmd, ClientFlags* f) {
  cmd->add_option("--coordinator", f->coordinator, "Coordinator address (host:port)")
      ->capture_default_str();
  cmd->add_option("--ca", f->security.ca_file, "PEM CA of the server certificate (enables TLS)");
  cmd->add_option("--cert", f->security.cert_file, "PEM client certificate (mutual TLS)");
  cmd->add_option("--key", f->security.key_file, "PEM client private key (mutual TLS)");
  cmd->add_option("--token-file", f->token_file, "File whose first line is the bearer token");
  cmd->add_option("--deadline", f->deadline_s, "Deadline of each call, seconds")->capture_default_str();
}

Status ApplyClientFlags(ClientFlags* f) {
  if (!f->token_file.empty()) {
    SHINGLETON_ASSIGN_OR_RETURN(f->security.token, rpc::ReadTokenFile(f->token_file));
  }
  return Status::Ok();
}

}  // namespace shingleton::cli
