// AtomicFile: a file that appears at its final path complete or not at all.
//
// Data goes to "<dir>/.<name>.tmp-<pid>"; Commit() flushes, fsyncs and renames it
// over the final path (rename(2) is atomic within a file system). A file that is
// never committed is removed by the destructor. Two-phase use lets a job prepare
// several files and publish them only once all were written.
//
// Thread safety: one owner.
#pragma once

#include <cstdio>
#include <string>
#include <string_view>

#include "index/status.h"

namespace shingleton {

class AtomicFile {
 public:
  explicit AtomicFile(std::string path);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  Status Open();
  Status Append(std::string_view data);
  // Flushes and fsyncs the temporary file (still invisible at the final path).
  Status Finish();
  // REQUIRES: Finish() succeeded. Renames into place.
  Status Commit();
  const std::string& path() const { return path_; }

 private:
  std::string path_;
  std::string temp_path_;
  std::FILE* file_ = nullptr;
  bool committed_ = false;
};

// Writes `data` to `path` atomically in one call.
Status WriteFileAtomically(const std::string& path, std::string_view data);

}  // namespace shingleton
