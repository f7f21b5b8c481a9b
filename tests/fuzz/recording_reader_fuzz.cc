// libFuzzer entry point for the recording readers a dropped file goes through: WAV (ParseWav) and
// CSV (ParseCsv), both on every input, with read options chosen by the input's first byte.
// Beyond "no crash, no sanitizer report": a refused input has a message; an accepted one has a
// positive sample rate and a selected channel the file holds; CSV samples are all finite (the
// reader promises to refuse any cell that is not); integer WAV samples stay in [-1, 1].
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "spinward/daemon/csv_reader.h"
#include "spinward/daemon/wav_reader.h"

namespace {

using spinward::daemon::ReadOptions;
using spinward::daemon::Recording;

void Check(bool condition) {
  if (!condition) __builtin_trap();
}

void CheckRecording(const spinward::Result<Recording>& read, const ReadOptions& options) {
  if (!read.ok()) {
    Check(!read.message().empty());
    return;
  }
  const Recording& r = read.value();
  Check(r.sample_rate_hz > 0.0 && std::isfinite(r.sample_rate_hz));
  Check(r.channel < r.channel_count);
  if (options.sample_rate_hz > 0.0) Check(r.sample_rate_hz == options.sample_rate_hz);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0 || size > 1 << 16) return 0;
  const std::uint8_t selector = data[0];
  const std::string_view bytes(reinterpret_cast<const char*>(data + 1), size - 1);
  ReadOptions options;
  options.channel = selector & 0x3;
  options.sample_rate_hz = (selector & 0x4) ? 25600.0 : 0.0;
  if (selector & 0x8) options.column = "accel";

  const auto csv = spinward::daemon::ParseCsv(bytes, "fuzz.csv", options);
  CheckRecording(csv, options);
  if (csv.ok())
    for (double x : csv.value().samples) Check(std::isfinite(x));

  options.column.clear();
  const auto wav = spinward::daemon::ParseWav(bytes, "fuzz.wav", options);
  CheckRecording(wav, options);
  if (wav.ok() && wav.value().source.find("PCM") != std::string::npos)
    for (double x : wav.value().samples) Check(x >= -1.0 && x <= 1.0);
  return 0;
}
