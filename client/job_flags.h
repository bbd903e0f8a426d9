// Command-line options shared by every command that signs documents (dedup and
// ingest) and by the RPC commands (security, addresses). One definition each, so
// a parameter means the same everywhere and --help documents it once.
#pragma once

#include <CLI/CLI.hpp>

#include <string>

#include "index/dedup_job.h"
#include "server/grpc_common.h"

namespace shingleton::cli {

struct JobFlags {
  DedupOptions options;
  std::string shingle = "word";
  std::string keep = "longest";
  std::string seed_text;
  bool store_text = false;
};

// Registers --threshold, --threads, the field names, the sketch scheme, --keep,
// --skip-bad and the verification limits on `cmd`, writing into *flags.
void AddJobFlags(CLI::App* cmd, JobFlags* flags);
// Parses the text-valued flags into flags->options. Usage errors are InvalidArgument.
Status ApplyJobFlags(JobFlags* flags);

struct ServerFlags {
  std::string listen;
  std::string port_file;
  std::string token_file;
  int max_message_mb = rpc::kDefaultMaxMessageMb;
  rpc::ServerSecurity security;
};
void AddServerFlags(CLI::App* cmd, ServerFlags* flags, const std::string& default_listen);
// Reads the token file (if any) into flags->security.token.
Status ApplyServerFlags(ServerFlags* flags);

struct ClientFlags {
  std::string coordinator = "127.0.0.1:7400";
  std::string token_file;
  double deadline_s = 60;
  rpc::ClientSecurity security;
};
void AddClientFlags(CLI::App* cmd, ClientFlags* flags);
Status ApplyClientFlags(ClientFlags* flags);

}  // namespace shingleton::cli
