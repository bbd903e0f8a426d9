#include "server/grpc_common.h"

#include <fstream>
#include <sstream>

namespace shingleton::rpc {
namespace {

// Idempotent methods are retried on UNAVAILABLE; Ingest (a stream) is not: the
// worker re-sends unacknowledged batches itself, which is safe (see service.proto).
constexpr char kServiceConfig[] = R"({
  "methodConfig": [{
    "name": [
      {"service": "shingleton.v1.Coordinator", "method": "Query"},
      {"service": "shingleton.v1.Coordinator", "method": "GetJobStats"},
      {"service": "shingleton.v1.IndexShard", "method": "Write"},
      {"service": "shingleton.v1.IndexShard", "method": "Lookup"},
      {"service": "shingleton.v1.IndexShard", "method": "GetStats"}
    ],
    "retryPolicy": {
      "maxAttempts": 4,
      "initialBackoff": "0.2s",
      "maxBackoff": "3s",
      "backoffMultiplier": 2,
      "retryableStatusCodes": ["UNAVAILABLE"]
    }
  }]
})";

}  // namespace

StatusOr<std::string> ReadSmallFile(const std::string& path, const char* what) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return Status::IoError(std::string("cannot read ") + what + " " + path);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

StatusOr<std::string> ReadTokenFile(const std::string& path) {
  SHINGLETON_ASSIGN_OR_RETURN(std::string text, ReadSmallFile(path, "token file"));
  std::string line = text.substr(0, text.find('\n'));
  const auto b = line.find_first_not_of(" \t\r");
  const auto e = line.find_last_not_of(" \t\r");
  if (b == std::string::npos) return Status::InvalidArgument("token file " + path + " is empty");
  return line.substr(b, e - b + 1);
}

bool IsLoopbackAddress(const std::string& listen) {
  return listen.rfind("127.", 0) == 0 || listen.rfind("localhost:", 0) == 0 ||
         listen.rfind("[::1]:", 0) == 0 || listen.rfind("unix:", 0) == 0;
}

StatusOr<std::shared_ptr<grpc::ServerCredentials>> MakeServerCredentials(
    const ServerSecurity& sec, const std::string& listen) {
  const bool tls = !sec.tls_cert_file.empty() || !sec.tls_key_file.empty();
  if (!tls) {
    if (!sec.tls_client_ca_file.empty()) {
      return Status::InvalidArgument("--tls-client-ca needs --tls-cert and --tls-key");
    }
    if (!IsLoopbackAddress(listen) && sec.token.empty() && !sec.allow_insecure) {
      return Status::InvalidArgument(
          "refusing to serve " + listen + " without credentials: give --tls-cert/--tls-key "
          "and/or --token-file, or --allow-insecure on a trusted network");
    }
    return grpc::InsecureServerCredentials();
  }
  if (sec.tls_cert_file.empty() || sec.tls_key_file.empty()) {
    return Status::InvalidArgument("TLS needs both --tls-cert and --tls-key");
  }
  grpc::SslServerCredentialsOptions opts;
  grpc::SslServerCredentialsOptions::PemKeyCertPair pair;
  SHINGLETON_ASSIGN_OR_RETURN(pair.cert_chain, ReadSmallFile(sec.tls_cert_file, "certificate"));
  SHINGLETON_ASSIGN_OR_RETURN(pair.private_key, ReadSmallFile(sec.tls_key_file, "private key"));
  opts.pem_key_cert_pairs.push_back(pair);
  if (!sec.tls_client_ca_file.empty()) {
    SHINGLETON_ASSIGN_OR_RETURN(opts.pem_root_certs,
                                ReadSmallFile(sec.tls_client_ca_file, "client CA"));
    opts.client_certificate_request = GRPC_SSL_REQUEST_AND_REQUIRE_CLIENT_CERTIFICATE_AND_VERIFY;
  }
  return grpc::SslServerCredentials(opts);
}

StatusOr<std::shared_ptr<grpc::Channel>> MakeChannel(const std::string& target,
                                                     const ClientSecurity& sec,
                                                     int max_message_mb) {
  std::shared_ptr<grpc::ChannelCredentials> creds;
  if (sec.ca_file.empty()) {
    if (!sec.cert_file.empty()) return Status::InvalidArgument("a client certificate needs --ca");
    creds = grpc::InsecureChannelCredentials();
  } else {
    grpc::SslCredentialsOptions opts;
    SHINGLETON_ASSIGN_OR_RETURN(opts.pem_root_certs, ReadSmallFile(sec.ca_file, "CA"));
    if (!sec.cert_file.empty()) {
      SHINGLETON_ASSIGN_OR_RETURN(opts.pem_cert_chain, ReadSmallFile(sec.cert_file, "certificate"));
      SHINGLETON_ASSIGN_OR_RETURN(opts.pem_private_key, ReadSmallFile(sec.key_file, "private key"));
    }
    creds = grpc::SslCredentials(opts);
  }
  grpc::ChannelArguments args;
  args.SetMaxReceiveMessageSize(max_message_mb << 20);
  args.SetMaxSendMessageSize(max_message_mb << 20);
  args.SetInt(GRPC_ARG_KEEPALIVE_TIME_MS, 30000);
  args.SetInt(GRPC_ARG_KEEPALIVE_TIMEOUT_MS, 10000);
  args.SetInt(GRPC_ARG_KEEPALIVE_PERMIT_WITHOUT_CALLS, 0);
  args.SetInt(GRPC_ARG_ENABLE_RETRIES, 1);
  args.SetServiceConfigJSON(kServiceConfig);
  return grpc::CreateCustomChannel(target, creds, args);
}

void PrepareContext(grpc::ClientContext* ctx, const ClientSecurity& sec, double deadline_s) {
  ctx->set_deadline(std::chrono::system_clock::now() +
                    std::chrono::milliseconds(static_cast<int64_t>(deadline_s * 1000)));
  if (!sec.token.empty()) ctx->AddMetadata("authorization", "Bearer " + sec.token);
}

grpc::Status CheckToken(const grpc::CallbackServerContext* ctx, const std::string& token) {
  if (token.empty()) return grpc::Status::OK;
  const auto& md = ctx->client_metadata();
  auto it = md.find("authorization");
  if (it == md.end()) {
    return grpc::Status(grpc::StatusCode::UNAUTHENTICATED, "missing bearer token");
  }
  const std::string got(it->second.data(), it->second.size());
  if (got != "Bearer " + token) {
    return grpc::Status(grpc::StatusCode::UNAUTHENTICATED, "wrong bearer token");
  }
  return grpc::Status::OK;
}

grpc::Status ToGrpcStatus(const Status& s) {
  using C = Status::Code;
  grpc::StatusCode code = grpc::StatusCode::INTERNAL;
  switch (s.code()) {
    case C::kOk: return grpc::Status::OK;
    case C::kInvalidArgument: case C::kBadInput: code = grpc::StatusCode::INVALID_ARGUMENT; break;
    case C::kNotFound: code = grpc::StatusCode::NOT_FOUND; break;
    case C::kAlreadyExists: code = grpc::StatusCode::ALREADY_EXISTS; break;
    case C::kMismatch: code = grpc::StatusCode::FAILED_PRECONDITION; break;
    case C::kIoError: code = grpc::StatusCode::UNAVAILABLE; break;
    case C::kCorruption: code = grpc::StatusCode::DATA_LOSS; break;
    case C::kInternal: code = grpc::StatusCode::INTERNAL; break;
  }
  return grpc::Status(code, s.message());
}

Status FromGrpcStatus(const grpc::Status& s, const std::string& what) {
  if (s.ok()) return Status::Ok();
  // A status passed on through several hops names its gRPC code once.
  const std::string code = " (gRPC " + std::to_string(static_cast<int>(s.error_code())) + ")";
  const std::string& text = s.error_message();
  const bool named = text.size() >= code.size() && text.compare(text.size() - code.size(), code.size(), code) == 0;
  const std::string msg = what + ": " + text + (named ? "" : code);
  switch (s.error_code()) {
    case grpc::StatusCode::INVALID_ARGUMENT: return Status::InvalidArgument(msg);
    case grpc::StatusCode::NOT_FOUND: return Status::NotFound(msg);
    case grpc::StatusCode::ALREADY_EXISTS: return Status::AlreadyExists(msg);
    case grpc::StatusCode::FAILED_PRECONDITION: return Status::Mismatch(msg);
    case grpc::StatusCode::DATA_LOSS: return Status::Corruption(msg);
    case grpc::StatusCode::UNAVAILABLE:
    case grpc::StatusCode::DEADLINE_EXCEEDED: return Status::IoError(msg);
    default: return Status::Internal(msg);
  }
}

}  // namespace shingleton::rpc
