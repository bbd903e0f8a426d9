#include "tests/test_util.h"

#include <gtest/gtest.h>
#include <simdjson.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "index/json_writer.h"

namespace shingleton::testing {

namespace fs = std::filesystem;

TempDir::TempDir() {
  const char* base = std::getenv("TMPDIR");
  std::string templ = std::string(base && *base ? base : "/tmp") + "/shingleton-test-XXXXXX";
  char* made = ::mkdtemp(templ.data());
  if (!made) std::abort();
  path_ = made;
}

TempDir::~TempDir() {
  std::error_code ec;
  fs::remove_all(path_, ec);
}

std::string ReadFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

void WriteFile(const std::string& path, const std::string& data) {
  std::ofstream out(path, std::ios::binary);
  out << data;
}

bool FileExists(const std::string& path) { return fs::exists(path); }

std::string JsonLine(const std::string& id, const std::string& text, const std::string& url) {
  JsonWriter w;
  w.BeginObject();
  w.Key("id");
  w.String(id);
  w.Key("text");
  w.String(text);
  if (!url.empty()) {
    w.Key("url");
    w.String(url);
  }
  w.EndObject();
  return w.Take() + "\n";
}

Manifests ReadManifests(const std::string& out_dir) {
  Manifests m;
  simdjson::dom::parser parser;
  for (const char* name : {"keep.jsonl", "drop.jsonl"}) {
    std::ifstream in(out_dir + "/" + name);
    EXPECT_TRUE(in.good()) << "missing " << out_dir << "/" << name;
    for (std::string line; std::getline(in, line);) {
      simdjson::dom::element e;
      EXPECT_FALSE(parser.parse(line).get(e)) << line;
      std::string id{std::string_view(e["id"])};
      EXPECT_EQ(m.kept_of.count(id), 0u) << "id twice in manifests: " << id;
      if (std::string(name) == "keep.jsonl") {
        m.kept_of[id] = id;
        m.kept.insert(id);
      } else {
        m.kept_of[id] = std::string(std::string_view(e["duplicate_of"]));
        m.similarity[id] = double(e["similarity"]);
      }
    }
  }
  return m;
}

std::string CommonLicense(const std::string& name) {
  return ReadFile("/usr/share/common-licenses/" + name);
}

}  // namespace shingleton::testing
