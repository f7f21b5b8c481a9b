// Counters every network and file source keeps: what arrived, what was refused and why. Read by the
// logs, the demo and (later) /metrics.
// Thread-safety: atomics; any thread may read or bump them.
#pragma once

#include <array>
#include <atomic>
#include <cstdint>

#include "spinward/daemon/frame_codec.h"

namespace spinward::daemon {

struct SourceCounters {
  std::atomic<std::uint64_t> frames{0};
  std::atomic<std::uint64_t> bytes{0};
  std::array<std::atomic<std::uint64_t>, kFrameErrorReasonCount> bad_frames{};
  std::atomic<std::uint64_t> unknown_sensor{0};
  std::atomic<std::uint64_t> dropped_full{0};  // UDP frames dropped because a point was behind
  std::atomic<std::uint64_t> paused_full{0};   // TCP reads held back because a point was behind
  std::atomic<std::uint64_t> refused_peer{0};  // not in allowed_peers
  std::atomic<std::uint64_t> refused_connections{0};  // over max_connections
  std::atomic<std::uint64_t> idle_closed{0};
  std::atomic<std::uint64_t> connections{0};
  std::atomic<std::uint64_t> files_done{0};
  std::atomic<std::uint64_t> files_rejected{0};

  std::uint64_t BadFramesTotal() const {
    std::uint64_t total = 0;
    for (const auto& c : bad_frames) total += c.load();
    return total;
  }
};

}  // namespace spinward::daemon
