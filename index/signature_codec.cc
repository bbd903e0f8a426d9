#include "index/signature_codec.h"

#include <cctype>

namespace shingleton {

bool ValidJobName(const std::string& job) {
  if (job.empty() || job.size() > 128 || job == "." || job == "..") return false;
  for (char c : job) {
    if (!(std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.')) return false;
  }
  return true;
}

}  // namespace shingleton
