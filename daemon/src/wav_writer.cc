#include "wav_writer.h"

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <string>

namespace spinward::daemon {
namespace {

void PutU16(std::string& out, std::uint32_t v) {
  out += static_cast<char>(v & 0xFF);
  out += static_cast<char>((v >> 8) & 0xFF);
}

void PutU32(std::string& out, std::uint32_t v) {
  PutU16(out, v & 0xFFFF);
  PutU16(out, v >> 16);
}

}  // namespace

Status WriteWavPcm24(const std::filesystem::path& path, std::span<const double> samples,
                     double sample_rate_hz) {
  const std::string name = path.string();
  constexpr double kFullScale = 8388608.0;  // 2^23
  const std::uint64_t data_bytes = static_cast<std::uint64_t>(samples.size()) * 3;
  if (data_bytes + 37 > 0xFFFFFFFFull) return Status::Fail(name + ": too long for a WAV file");
  const double rounded_rate = std::round(sample_rate_hz);
  if (!(rounded_rate >= 1.0) || rounded_rate != sample_rate_hz || rounded_rate > 4294967295.0) {
    return Status::Fail(name + ": sample rate " + std::to_string(sample_rate_hz) +
                        " Hz is not a whole number WAV can hold");
  }
  const auto rate = static_cast<std::uint32_t>(rounded_rate);

  std::string out;
  out.reserve(static_cast<std::size_t>(data_bytes) + 44);
  out += "RIFF";
  PutU32(out, static_cast<std::uint32_t>(36 + data_bytes + (data_bytes & 1)));
  out += "WAVEfmt ";
  PutU32(out, 16);
  PutU16(out, 1);  // integer PCM
  PutU16(out, 1);  // one channel
  PutU32(out, rate);
  PutU32(out, rate * 3);  // bytes per second
  PutU16(out, 3);         // bytes per frame
  PutU16(out, 24);
  out += "data";
  PutU32(out, static_cast<std::uint32_t>(data_bytes));
  for (std::size_t i = 0; i < samples.size(); ++i) {
    const double scaled = std::round(samples[i] * kFullScale);
    if (!(scaled >= -kFullScale && scaled <= kFullScale - 1.0)) {
      return Status::Fail(name + ": sample " + std::to_string(i) + " (" +
                          std::to_string(samples[i]) + ") is outside full scale [-1, 1)");
    }
    const auto code = static_cast<std::uint32_t>(static_cast<std::int32_t>(scaled));
    out += static_cast<char>(code & 0xFF);
    out += static_cast<char>((code >> 8) & 0xFF);
    out += static_cast<char>((code >> 16) & 0xFF);
  }
  if (data_bytes % 2 == 1) out += '\0';  // RIFF pads chunks to even length

  std::FILE* file = std::fopen(name.c_str(), "wb");
  if (file == nullptr) return Status::Fail(name + ": cannot open for writing");
  const bool written = std::fwrite(out.data(), 1, out.size(), file) == out.size();
  const bool closed = std::fclose(file) == 0;
  if (!written || !closed) return Status::Fail(name + ": write failed");
  return Status::Ok();
}

}  // namespace spinward::daemon
