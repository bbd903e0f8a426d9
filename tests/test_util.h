// Helpers shared by the test suites: temporary directories, files, JSONL corpora
// and manifest readers. Real files and real RocksDB only.
#pragma once

#include <map>
#include <set>
#include <string>
#include <vector>

namespace shingleton::testing {

// A fresh directory under $TMPDIR (or /tmp), removed with its contents on destruction.
class TempDir {
 public:
  TempDir();
  ~TempDir();
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  const std::string& path() const { return path_; }
  std::string File(const std::string& name) const { return path_ + "/" + name; }

 private:
  std::string path_;
};

std::string ReadFile(const std::string& path);
void WriteFile(const std::string& path, const std::string& data);
bool FileExists(const std::string& path);

// {"id": id, "text": text} as one JSON line (with newline), properly escaped.
std::string JsonLine(const std::string& id, const std::string& text, const std::string& url = "");

// Parsed manifests: id -> duplicate_of (kept documents map to themselves).
struct Manifests {
  std::map<std::string, std::string> kept_of;   // every id
  std::map<std::string, double> similarity;     // dropped ids
  std::set<std::string> kept;
};
Manifests ReadManifests(const std::string& out_dir);

// Reads a text file of Debian's /usr/share/common-licenses.
std::string CommonLicense(const std::string& name);

}  // namespace shingleton::testing
