#pragma once
// Names to indices in an open-addressing table whose keys live elsewhere
// (the names vector of the caller, in index order).
//
// A std::unordered_map<std::string, int> allocates one node per name and
// reaches it through a bucket: two cache misses and a malloc per lookup or
// insert once a netlist's names outgrow the caches (at 100k elements its
// hash inserts were a fifth of a load). Here a lookup probes an array of
// (hash tag, index) slots, linearly from the hash, and compares the name at
// the index: one miss in the table and one in the caller's names.

#include <cstddef>
#include <cstdint>
#include <functional>
#include <string_view>
#include <utility>
#include <vector>

namespace tacet {

class NameIndex {
 public:
  /// Room for `count` names before the table grows.
  void reserve(std::size_t count) {
    if (count * 2 > slots_.size()) rebuild(capacity_for(count));
  }
  /// The index of `name`, -1 when absent; key_at(i) is the name at index i.
  template <typename KeyAt>
  int find(std::string_view name, KeyAt&& key_at) const {
    if (slots_.empty()) return -1;
    const std::uint32_t h = hash(name);
    for (std::size_t at = h & mask();; at = (at + 1) & mask()) {
      const Slot& slot = slots_[at];
      if (slot.index < 0) return -1;
      if (slot.hash == h && std::string_view(key_at(slot.index)) == name) return slot.index;
    }
  }
  /// The index of `name`, or `next` after recording it there (the caller then
  /// appends the name as index `next`): {index, whether it was added}.
  template <typename KeyAt>
  std::pair<int, bool> insert(std::string_view name, int next, KeyAt&& key_at) {
    if ((count_ + 1) * 2 > slots_.size()) rebuild(capacity_for(count_ + 1));
    const std::uint32_t h = hash(name);
    for (std::size_t at = h & mask();; at = (at + 1) & mask()) {
      Slot& slot = slots_[at];
      if (slot.index < 0) {
        slot = {h, next};
        ++count_;
        return {next, true};
      }
      if (slot.hash == h && std::string_view(key_at(slot.index)) == name) return {slot.index, false};
    }
  }
  std::size_t size() const { return count_; }

 private:
  struct Slot {
    std::uint32_t hash = 0;   // the name's hash, low 32 bits: its home slot too
    std::int32_t index = -1;  // -1: empty
  };
  static std::uint32_t hash(std::string_view name) {
    return static_cast<std::uint32_t>(std::hash<std::string_view>{}(name));
  }
  std::size_t mask() const { return slots_.size() - 1; }
  static std::size_t capacity_for(std::size_t count) {
    std::size_t capacity = 16;
    while (capacity < count * 2) capacity *= 2;  // at most half full
    return capacity;
  }
  // Every slot re-placed from its kept hash in a table of `capacity`.
  void rebuild(std::size_t capacity) {
    std::vector<Slot> old(capacity, Slot{});
    old.swap(slots_);
    for (const Slot& slot : old) {
      if (slot.index < 0) continue;
      std::size_t at = slot.hash & mask();
      while (slots_[at].index >= 0) at = (at + 1) & mask();
      slots_[at] = slot;
    }
  }
  std::vector<Slot> slots_;
  std::size_t count_ = 0;
};

}  // namespace tacet
