#include "index/document.h"

#include <xxhash.h>

namespace shingleton {

uint64_t DocKey(std::string_view id) { return XXH3_64bits_withSeed(id.data(), id.size(), 0); }

}  // namespace shingleton
