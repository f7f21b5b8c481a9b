// libFuzzer entry point for the frame decoder and the stream assembler (docs/protocol.md, "Test
// frames and fuzzing"). Beyond "no crash, no sanitizer report", it checks that the two ways of
// reading a frame agree: a buffer that DecodeFrame accepts comes out of the FrameAssembler as the
// same single frame whatever the split, and a buffer it rejects for a field is rejected by the
// assembler for the same reason.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "spinward/daemon/frame_codec.h"

namespace {

using spinward::daemon::DecodeFrame;
using spinward::daemon::DecodeLimits;
using spinward::daemon::Frame;
using spinward::daemon::FrameAssembler;
using spinward::daemon::FrameErrorReason;

void Check(bool condition) {
  if (!condition) __builtin_trap();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::span<const std::uint8_t> bytes(data, size);
  DecodeLimits limits;
  limits.max_frame_bytes = 1 << 16;  // keeps the fuzzer's memory small
  const auto direct = DecodeFrame(bytes, limits);

  // Split the stream at a point chosen by the input itself.
  const std::size_t split = size == 0 ? 0 : data[size - 1] % (size + 1);
  FrameAssembler assembler(limits);
  std::vector<Frame> frames;
  auto error = assembler.Feed(bytes.first(split), &frames);
  if (!error) error = assembler.Feed(bytes.subspan(split), &frames);
  Check(assembler.buffered_bytes() <= limits.max_frame_bytes);

  if (direct.ok()) {
    const Frame& want = direct.value();
    Check(!error && frames.size() == 1);
    Check(frames[0].samples == want.samples);
    Check(frames[0].metadata.sequence == want.metadata.sequence);
    for (double sample : want.samples) Check(std::isfinite(sample));
    return 0;
  }
  const FrameErrorReason reason = direct.error().reason;
  Check(!direct.error().message.empty());
  if (reason == FrameErrorReason::kTruncated) {
    Check(!error && frames.empty());  // a stream just waits for more bytes
  } else if (reason != FrameErrorReason::kBadLength) {
    Check(error && error->reason == reason && frames.empty());
  }
  // kBadLength with bytes after the frame: the assembler reads a frame and then more; no claim.
  return 0;
}
