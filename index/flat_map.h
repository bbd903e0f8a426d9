// FlatMap: a hash map in one array (open addressing, linear probing, at most half
// full), so a lookup costs about one cache miss where a node-based map costs three
// (bucket, node, then the value). For keys that are already uniform hashes
// (document keys, content hashes): Hash only has to pick 64 of their bits, and
// Fibonacci hashing spreads those over the slots.
//
// Grows by doubling; no erase. Pointers to values are valid until the next insert of
// a new key.
// Thread safety: const methods are safe to call concurrently; inserts need
// exclusive access.
#pragma once

#include <cstddef>
#include <cstdint>
#include <utility>
#include <vector>

namespace shingleton {

template <typename Key, typename Value, typename Hash>
class FlatMap {
 public:
  // Inserts key -> value unless the key is present. Returns the value held for the
  // key (the new or the old one) and whether it was inserted.
  std::pair<Value*, bool> emplace(const Key& key, const Value& value) {
    size_t i = slots_.empty() ? 0 : SlotOf(key);
    if (!slots_.empty() && slots_[i].used) return {&slots_[i].value, false};
    if (2 * (size_ + 1) > slots_.size()) {  // grows only for a new key
      Rehash(slots_.empty() ? 16 : 2 * slots_.size());
      i = SlotOf(key);
    }
    Slot& s = slots_[i];
    s = Slot{key, value, true};
    ++size_;
    return {&s.value, true};
  }

  // The value held for `key`, or nullptr.
  const Value* find(const Key& key) const {
    if (slots_.empty()) return nullptr;
    const Slot& s = slots_[SlotOf(key)];
    return s.used ? &s.value : nullptr;
  }

  // Room for n keys without growing.
  void reserve(size_t n) {
    size_t slots = 16;
    while (slots < 2 * n) slots *= 2;
    if (slots > slots_.size()) Rehash(slots);
  }

  size_t size() const { return size_; }

 private:
  struct Slot {
    Key key;
    Value value;
    bool used;
  };

  // The slot holding `key`, or the free slot where it would go. REQUIRES: a free slot.
  size_t SlotOf(const Key& key) const {
    const size_t mask = slots_.size() - 1;
    for (size_t i = static_cast<size_t>((Hash()(key) * 0x9E3779B97F4A7C15ULL) >> shift_);; i = (i + 1) & mask) {
      if (!slots_[i].used || slots_[i].key == key) return i;
    }
  }

  void Rehash(size_t slots) {  // slots: a power of two
    std::vector<Slot> old(slots, Slot{Key(), Value(), false});
    old.swap(slots_);
    shift_ = 64;
    for (size_t s = slots; s > 1; s /= 2) --shift_;
    for (const Slot& s : old) {
      if (s.used) slots_[SlotOf(s.key)] = s;
    }
  }

  std::vector<Slot> slots_;
  int shift_ = 64;
  size_t size_ = 0;
};

// Hash of a 64-bit key that is itself a uniform hash.
struct IdentityHash64 {
  uint64_t operator()(uint64_t key) const { return key; }
};

}  // namespace shingleton
