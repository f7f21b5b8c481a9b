// The demo's invented day at the Larkfield booster pump station: eight accelerometers on two pumps
// and a ventilation fan send an hourly snapshot of a few seconds each. Pump P-101's drive-end
// bearing worsens through the day (its outer-race impacts grow and its 1x line rises, as a failing
// bearing and the looseness that follows it do); P-102 and the fan stay healthy.
// The scenario is sent over real loopback sockets (pumps over TCP, the fan over UDP) to a running
// MonitoringService, exactly as acquisition boxes would send it.
// Thread-safety: call from one thread.
#pragma once

#include <cstdint>
#include <functional>
#include <string>

#include "demo_signal.h"
#include "spinward/daemon/monitoring_service.h"

namespace spinward::daemon {

struct DemoScenarioOptions {
  int hours = 24;
  double seconds_per_hour = 3.0;  // signal sent per point per hour
  std::int64_t day_start_ns = 0;  // time of the first snapshot
  std::size_t frame_samples = 2560;
};

// The signal of one demo point at `hour` of `hours`.
PumpSignalSpec DemoSignalFor(const std::string& point_id, int hour, int hours);

// Sends the whole day; `progress` is called after each hour with the hour just sent.
Status SendDemoDay(MonitoringService& service, const DemoScenarioOptions& options,
                   const std::function<void(int hour)>& progress = {});

}  // namespace spinward::daemon
