// gRPC plumbing shared by the servers and the clients: credentials (TLS, mutual
// TLS, bearer token), channel options (message limits, keepalive, retry policy on
// idempotent RPCs), deadlines, and the one place where library Status and
// grpc::Status are converted.
//
// Thread safety: functions are reentrant.
#pragma once

#include <grpcpp/grpcpp.h>

#include <memory>
#include <string>

#include "index/status.h"

namespace shingleton::rpc {

// Server side. Default: plaintext, no token, loopback only.
struct ServerSecurity {
  std::string tls_cert_file;       // PEM certificate chain; with tls_key_file enables TLS
  std::string tls_key_file;        // PEM private key
  std::string tls_client_ca_file;  // PEM CA: when set, clients must present a certificate it signed
  std::string token;               // when set, every call must carry "authorization: Bearer <token>"
  bool allow_insecure = false;     // allow a non-loopback listen address without TLS and token
};

// Client side. Default: plaintext, no token.
struct ClientSecurity {
  std::string ca_file;    // PEM CA that signed the server certificate; enables TLS
  std::string cert_file;  // PEM client certificate (mutual TLS)
  std::string key_file;   // PEM client key
  std::string token;      // bearer token sent with every call
};

inline constexpr int kDefaultMaxMessageMb = 64;

StatusOr<std::string> ReadSmallFile(const std::string& path, const char* what);
// Reads a token file: the token is its first line, without surrounding whitespace.
StatusOr<std::string> ReadTokenFile(const std::string& path);

// Refuses plaintext without a token on a non-loopback address unless allowed.
StatusOr<std::shared_ptr<grpc::ServerCredentials>> MakeServerCredentials(
    const ServerSecurity& security, const std::string& listen);

// A channel with message limits, keepalive and a retry policy (UNAVAILABLE, up to 4
// attempts, exponential backoff) for the idempotent methods of shingleton.v1.
StatusOr<std::shared_ptr<grpc::Channel>> MakeChannel(const std::string& target,
                                                     const ClientSecurity& security,
                                                     int max_message_mb = kDefaultMaxMessageMb);

// Sets the deadline and the token of one call.
void PrepareContext(grpc::ClientContext* ctx, const ClientSecurity& security, double deadline_s);

// OK when `token` is empty or the call carries it; UNAUTHENTICATED otherwise.
grpc::Status CheckToken(const grpc::CallbackServerContext* ctx, const std::string& token);

grpc::Status ToGrpcStatus(const Status& s);
Status FromGrpcStatus(const grpc::Status& s, const std::string& what);

bool IsLoopbackAddress(const std::string& listen);

}  // namespace shingleton::rpc
