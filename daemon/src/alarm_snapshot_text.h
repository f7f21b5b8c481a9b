// The alarm engine's snapshot of one (point, measure) as text, so trend storage can keep it in one
// column and a restarted daemon can restore the engine exactly (latch, acknowledgement, on-delay
// history), neither raising an alarm again nor forgetting one.
// Format: one `key=value` per line; backslash, newline and carriage return in values escaped.
// Thread-safety: pure functions.
#pragma once

#include <string>

#include "spinward/daemon/alarm_snapshot.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

std::string SnapshotToText(const AlarmSnapshot& snapshot);
Result<AlarmSnapshot> SnapshotFromText(const std::string& text);

}  // namespace spinward::daemon
