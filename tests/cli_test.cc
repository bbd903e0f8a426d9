// The `shingleton` binary as a user runs it: --help documents every option with
// its default, errors go to stderr with file and line, exit codes are non-zero
// on failure and no manifest appears.
#include <gtest/gtest.h>
#include <sys/wait.h>

#include <array>
#include <cstdio>
#include <string>

#include "tests/test_util.h"

namespace shingleton {
namespace {

using testing::FileExists;
using testing::JsonLine;
using testing::TempDir;
using testing::WriteFile;

struct Result {
  int exit_code;
  std::string output;  // stdout and stderr together
};

Result Shingleton(const std::string& args) {
  const std::string cmd = std::string(SHINGLETON_BINARY_DIR) + "/bin/shingleton " + args + " 2>&1";
  Result r{-1, ""};
  FILE* p = ::popen(cmd.c_str(), "r");
  if (!p) return r;
  std::array<char, 4096> buf;
  size_t n;
  while ((n = std::fread(buf.data(), 1, buf.size(), p)) > 0) r.output.append(buf.data(), n);
  const int status = ::pclose(p);
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return r;
}

TEST(CliTest, HelpDocumentsEveryOptionWithItsDefault) {
  Result top = Shingleton("--help");
  EXPECT_EQ(top.exit_code, 0);
  EXPECT_NE(top.output.find("dedup"), std::string::npos);
  Result help = Shingleton("dedup --help");
  EXPECT_EQ(help.exit_code, 0);
  for (const char* expected :
       {"--input", "--out", "--index", "--threshold FLOAT=0.8", "--threads INT=0", "--id-field TEXT=id",
        "--text-field TEXT=text", "--url-field TEXT=url", "--shingle TEXT=word", "--shingle-size INT=0",
        "--hashes INT=128", "--bands INT=0", "--rows INT=0", "--recall-weight FLOAT=0.95",
        "--seed", "default: 0x5348494e47", "--keep TEXT=longest", "--skip-bad", "--replace",
        "--excerpt-bytes UINT=160", "--all-pairs-limit UINT=64", "--max-leaders UINT=16", "--quiet", "--verbose"}) {
    EXPECT_NE(help.output.find(expected), std::string::npos) << "missing in --help: " << expected;
  }
}

TEST(CliTest, EverySubcommandHasHelp) {
  for (const char* sub : {"dedup", "shard", "coordinator", "ingest", "finalize", "health"}) {
    Result r = Shingleton(std::string(sub) + " --help");
    EXPECT_EQ(r.exit_code, 0) << sub;
    EXPECT_NE(r.output.find("Options:"), std::string::npos) << sub << ": " << r.output;
  }
  Result shard = Shingleton("shard --help");
  for (const char* expected : {"--listen TEXT=127.0.0.1:7410", "--db", "--port-file", "--tls-cert",
                               "--tls-key", "--tls-client-ca", "--token-file", "--allow-insecure",
                               "--max-message-mb INT=64"}) {
    EXPECT_NE(shard.output.find(expected), std::string::npos) << "shard --help lacks " << expected;
  }
  Result ingest = Shingleton("ingest --help");
  for (const char* expected : {"--coordinator TEXT=127.0.0.1:7400", "--job", "--deadline FLOAT=60",
                               "--threshold FLOAT=0.8", "--retries INT=5", "--ca", "--cert", "--key",
                               "--window UINT:INT in [1 - 64]=4", "--batch-docs UINT:INT in [1 - 1048576]=1024"}) {
    EXPECT_NE(ingest.output.find(expected), std::string::npos) << "ingest --help lacks " << expected;
  }
}

TEST(CliTest, BadRecordFailsWithFileAndLineAndWritesNothing) {
  TempDir dir;
  WriteFile(dir.File("in.jsonl"), JsonLine("a", "one two three") + "{\"id\":\"b\"}\n");
  Result r = Shingleton("dedup --input " + dir.File("in.jsonl") + " --out " + dir.File("out"));
  EXPECT_EQ(r.exit_code, 1);
  EXPECT_NE(r.output.find(dir.File("in.jsonl") + ":2: missing field \"text\""), std::string::npos)
      << r.output;
  EXPECT_NE(r.output.find("--skip-bad"), std::string::npos) << r.output;
  EXPECT_FALSE(FileExists(dir.File("out/keep.jsonl")));

  Result skipped = Shingleton("dedup --skip-bad --input " + dir.File("in.jsonl") + " --out " + dir.File("out"));
  EXPECT_EQ(skipped.exit_code, 0) << skipped.output;
  EXPECT_NE(skipped.output.find("skipped (bad)"), std::string::npos) << skipped.output;
  EXPECT_TRUE(FileExists(dir.File("out/keep.jsonl")));
}

TEST(CliTest, UsageErrorsAreReported) {
  TempDir dir;
  EXPECT_NE(Shingleton("dedup --out " + dir.File("o")).exit_code, 0);  // --input is required
  Result missing = Shingleton("dedup --input " + dir.File("absent.jsonl") + " --out " + dir.File("o"));
  EXPECT_NE(missing.exit_code, 0);
  EXPECT_NE(missing.output.find("absent.jsonl"), std::string::npos) << missing.output;
  WriteFile(dir.File("in.jsonl"), JsonLine("a", "x"));
  Result policy = Shingleton("dedup --keep biggest --input " + dir.File("in.jsonl") + " --out " + dir.File("o"));
  EXPECT_EQ(policy.exit_code, 2);
  EXPECT_NE(policy.output.find("unknown keep policy 'biggest'"), std::string::npos) << policy.output;
  Result threshold =
      Shingleton("dedup --threshold 1.5 --input " + dir.File("in.jsonl") + " --out " + dir.File("o"));
  EXPECT_EQ(threshold.exit_code, 1);
  EXPECT_NE(threshold.output.find("threshold"), std::string::npos) << threshold.output;
}

}  // namespace
}  // namespace shingleton
