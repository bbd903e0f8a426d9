// TLS and mutual TLS between real processes on 127.0.0.1, with certificates made
// in the test by the openssl tool (Debian package openssl): a client without the
// CA, or without a client certificate where one is required, is refused; with
// them ingest, finalize and health work.
#include <gtest/gtest.h>

#include <cstdlib>

#include "tests/process_util.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

const std::string kCorpus = std::string(SHINGLETON_SOURCE_DIR) + "/demo_data/crawl-2026-11.jsonl";

bool MakeCertificates(const TempDir& d) {
  const std::string p = d.path() + "/";
  const std::string script =
      "cd " + p + " && "
      "openssl req -x509 -newkey rsa:2048 -nodes -keyout ca.key -out ca.pem -days 2 "
      "-subj '/CN=Vellory Test CA' && "
      "openssl req -newkey rsa:2048 -nodes -keyout server.key -out server.csr -subj '/CN=localhost' && "
      "printf 'subjectAltName=IP:127.0.0.1,DNS:localhost\\n' > san.ext && "
      "openssl x509 -req -in server.csr -CA ca.pem -CAkey ca.key -CAcreateserial -out server.pem "
      "-days 2 -extfile san.ext && "
      "openssl req -newkey rsa:2048 -nodes -keyout client.key -out client.csr -subj '/CN=worker' && "
      "openssl x509 -req -in client.csr -CA ca.pem -CAkey ca.key -CAcreateserial -out client.pem -days 2";
  return std::system(("(" + script + ") > " + p + "openssl.log 2>&1").c_str()) == 0;
}

TEST(TlsTest, MutualTlsRefusesClientsWithoutCertificates) {
  TempDir dir;
  ASSERT_TRUE(MakeCertificates(dir)) << ReadFile(dir.File("openssl.log"));
  const std::vector<std::string> tls = {"--tls-cert", dir.File("server.pem"), "--tls-key",
                                        dir.File("server.key"), "--tls-client-ca", dir.File("ca.pem")};
  ChildProcess shard, coordinator;
  std::vector<std::string> shard_args = {"shard", "--listen", "127.0.0.1:0", "--db", dir.File("s"),
                                         "--port-file", dir.File("s.port")};
  shard_args.insert(shard_args.end(), tls.begin(), tls.end());
  ASSERT_TRUE(shard.Start(shard_args, dir.File("s.log")));
  const std::string shard_addr = WaitForPortFile(dir.File("s.port"));
  ASSERT_FALSE(shard_addr.empty()) << ReadFile(dir.File("s.log"));
  std::vector<std::string> coord_args = {"coordinator", "--listen", "127.0.0.1:0", "--shards", shard_addr,
                                         "--state", dir.File("c"), "--port-file", dir.File("c.port"),
                                         "--shard-ca", dir.File("ca.pem"), "--shard-cert",
                                         dir.File("client.pem"), "--shard-key", dir.File("client.key")};
  coord_args.insert(coord_args.end(), tls.begin(), tls.end());
  ASSERT_TRUE(coordinator.Start(coord_args, dir.File("c.log")));
  const std::string addr = WaitForPortFile(dir.File("c.port"));
  ASSERT_FALSE(addr.empty()) << ReadFile(dir.File("c.log"));

  const std::vector<std::string> ingest = {"ingest", "--coordinator", addr, "--job", "demo", "--input",
                                           kCorpus, "--retries", "0", "--deadline", "10"};
  auto with = [](std::vector<std::string> a, const std::vector<std::string>& more) {
    a.insert(a.end(), more.begin(), more.end());
    return a;
  };
  // Plaintext against a TLS server, and TLS without a client certificate, both fail.
  RunResult plain = RunShingleton(ingest, 60);
  EXPECT_EQ(plain.exit_code, 1) << plain.output;
  RunResult no_cert = RunShingleton(with(ingest, {"--ca", dir.File("ca.pem")}), 60);
  EXPECT_EQ(no_cert.exit_code, 1) << no_cert.output;
  EXPECT_NE(no_cert.output.find("gRPC 14"), std::string::npos) << no_cert.output;  // UNAVAILABLE
  // With the CA and a client certificate everything works, including the
  // coordinator's own mutual-TLS calls to the shard.
  const std::vector<std::string> creds = {"--ca", dir.File("ca.pem"), "--cert", dir.File("client.pem"),
                                          "--key", dir.File("client.key")};
  RunResult ok = RunShingleton(with(ingest, creds), 120);
  EXPECT_EQ(ok.exit_code, 0) << ok.output << ReadFile(dir.File("c.log"));
  RunResult fin = RunShingleton(
      with({"finalize", "--coordinator", addr, "--job", "demo", "--out", dir.File("out")}, creds), 120);
  EXPECT_EQ(fin.exit_code, 0) << fin.output;
  EXPECT_EQ(ReadManifests(dir.File("out")).kept_of.size(), 2500u);
  RunResult health = RunShingleton(with({"health", "--coordinator", shard_addr}, creds), 20);
  EXPECT_EQ(health.exit_code, 0) << health.output;
  EXPECT_NE(health.output.find("SERVING"), std::string::npos);
  EXPECT_EQ(coordinator.Terminate(), 0);
  EXPECT_EQ(shard.Terminate(), 0);
}

}  // namespace
}  // namespace shingleton
