// A block of samples from one sensor, as a source delivers it to the router: decoded from a frame,
// read from a dropped file, or made by a test. Samples are already multiplied by the frame's scale
// factor; `in_volts` says whether they are volts (the point's sensitivity then applies) or
// engineering units.
// Thread-safety: a plain value, moved from the source's thread to the point's worker.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace spinward::daemon {

struct SampleBlock {
  std::string sensor_id;
  double sample_rate_hz = 0.0;
  std::int64_t first_sample_ns = 0;  // UTC, ns since the Unix epoch
  std::uint64_t sequence = 0;        // per sensor, +1 per block
  bool has_sequence = true;  // files carry none: their blocks are consecutive by construction
  bool in_volts = false;
  std::vector<double> samples;
};

}  // namespace spinward::daemon
