// An Env whose write-ahead logs give their pages back to the kernel once synced.
//
// A synced WAL is read again only when a store is recovered after a crash, yet
// every byte of it stays in the page cache after the write: each write then copies
// into fresh page-cache pages, which on the virtual machines measured here cost more
// than the rest of the write (the kernel's copy was 19% of a shard's ingest CPU).
// Dropping the synced part (posix_fadvise DONTNEED, on clean pages only) lets the
// next writes reuse those pages, as the bulk writer's SST files do.
//
// Thread safety: the Env is shared by every store of the process; a WAL file is
// synced by one thread at a time, and may be appended to meanwhile.
#pragma once

#include <rocksdb/env.h>

namespace shingleton {

// The process's Env for stores that sync their writes. Never null; lives until exit.
rocksdb::Env* WalPageDroppingEnv();

}  // namespace shingleton
