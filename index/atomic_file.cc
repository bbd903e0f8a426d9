#include "index/atomic_file.h"

#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>

namespace shingleton {
namespace {
Status Errno(const std::string& what) { return Status::IoError(what + ": " + std::strerror(errno)); }
}  // namespace

AtomicFile::AtomicFile(std::string path) : path_(std::move(path)) {
  std::filesystem::path p(path_);
  temp_path_ = (p.parent_path() / ("." + p.filename().string() + ".tmp-" +
                                   std::to_string(::getpid()))).string();
}

AtomicFile::~AtomicFile() {
  if (file_) std::fclose(file_);
  if (!committed_) std::remove(temp_path_.c_str());
}

Status AtomicFile::Open() {
  file_ = std::fopen(temp_path_.c_str(), "wb");
  if (!file_) return Errno("cannot create " + temp_path_);
  return Status::Ok();
}

Status AtomicFile::Append(std::string_view data) {
  if (std::fwrite(data.data(), 1, data.size(), file_) != data.size()) {
    return Errno("cannot write " + temp_path_);
  }
  return Status::Ok();
}

Status AtomicFile::Finish() {
  if (std::fflush(file_) != 0) return Errno("cannot write " + temp_path_);
  if (::fsync(::fileno(file_)) != 0) return Errno("cannot sync " + temp_path_);
  if (std::fclose(file_) != 0) {
    file_ = nullptr;
    return Errno("cannot close " + temp_path_);
  }
  file_ = nullptr;
  return Status::Ok();
}

Status AtomicFile::Commit() {
  if (std::rename(temp_path_.c_str(), path_.c_str()) != 0) {
    return Errno("cannot rename " + temp_path_ + " to " + path_);
  }
  committed_ = true;
  return Status::Ok();
}

Status WriteFileAtomically(const std::string& path, std::string_view data) {
  AtomicFile f(path);
  SHINGLETON_RETURN_IF_ERROR(f.Open());
  SHINGLETON_RETURN_IF_ERROR(f.Append(data));
  SHINGLETON_RETURN_IF_ERROR(f.Finish());
  return f.Commit();
}

}  // namespace shingleton
