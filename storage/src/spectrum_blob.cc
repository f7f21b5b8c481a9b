// Byte-by-byte little-endian writing and reading, so the layout does not depend on the host's
// endianness or struct padding. Codes in the header are storage-format codes, fixed by
// docs/storage.md, deliberately not the estimator enums' underlying values (which may be
// reordered).
#include "spinward/storage/spectrum_blob.h"

#include <array>
#include <bit>
#include <cmath>
#include <cstring>

namespace spinward::storage {
namespace {

constexpr std::array<char, 4> kMagic = {'S', 'W', 'S', 'P'};
constexpr std::uint16_t kBlobVersion = 1;
constexpr std::size_t kFixedHeaderBytes = 45;

using estimators::Averaging;
using estimators::Scaling;
using estimators::Sides;
using estimators::WindowKind;
using estimators::WindowSymmetry;

constexpr std::array<WindowKind, 7> kWindowCodes = {
    WindowKind::kRectangular,    WindowKind::kHann,    WindowKind::kHamming, WindowKind::kBlackman,
    WindowKind::kBlackmanHarris, WindowKind::kFlatTop, WindowKind::kKaiser};
constexpr std::array<Averaging, 4> kAveragingCodes = {
    Averaging::kMean, Averaging::kMedian, Averaging::kExponential, Averaging::kPeakHold};

template <typename T, std::size_t N>
std::uint8_t CodeOf(const std::array<T, N>& table, T value) {
  for (std::size_t i = 0; i < N; ++i) {
    if (table[i] == value) return static_cast<std::uint8_t>(i);
  }
  return 0xff;
}

void PutU64(std::string& out, std::uint64_t v) {
  for (int i = 0; i < 8; ++i) out.push_back(static_cast<char>((v >> (8 * i)) & 0xff));
}
void PutU32(std::string& out, std::uint32_t v) {
  for (int i = 0; i < 4; ++i) out.push_back(static_cast<char>((v >> (8 * i)) & 0xff));
}
void PutU16(std::string& out, std::uint16_t v) {
  out.push_back(static_cast<char>(v & 0xff));
  out.push_back(static_cast<char>(v >> 8));
}
void PutF64(std::string& out, double v) { PutU64(out, std::bit_cast<std::uint64_t>(v)); }

std::uint64_t GetUnsigned(std::string_view in, std::size_t at, int bytes) {
  std::uint64_t v = 0;
  for (int i = 0; i < bytes; ++i) {
    v |=
        static_cast<std::uint64_t>(static_cast<unsigned char>(in[at + static_cast<std::size_t>(i)]))
        << (8 * i);
  }
  return v;
}

}  // namespace

std::string_view WindowKindName(WindowKind kind) {
  switch (kind) {
    case WindowKind::kRectangular:
      return "rectangular";
    case WindowKind::kHann:
      return "hann";
    case WindowKind::kHamming:
      return "hamming";
    case WindowKind::kBlackman:
      return "blackman";
    case WindowKind::kBlackmanHarris:
      return "blackmanharris";
    case WindowKind::kFlatTop:
      return "flattop";
    case WindowKind::kKaiser:
      return "kaiser";
  }
  return "unknown";
}

std::string_view ScalingName(Scaling scaling) {
  return scaling == Scaling::kDensity ? "density" : "spectrum";
}

Result<std::string> EncodeSpectrumBlob(const SpectrumSnapshot& snapshot, BlobPrecision precision) {
  const auto& s = snapshot.spectrum;
  if (s.values.empty()) return Error{"spectrum blob: the spectrum has no values"};
  if (!(s.sample_rate_hz > 0.0) || !std::isfinite(s.sample_rate_hz)) {
    return Error{"spectrum blob: sample_rate_hz " + std::to_string(s.sample_rate_hz) +
                 " must be positive and finite"};
  }
  if (snapshot.unit.size() > 255) {
    return Error{"spectrum blob: unit '" + snapshot.unit.substr(0, 40) +
                 "...' is longer than 255 bytes"};
  }
  if (s.values.size() > UINT32_MAX || s.fft_length > UINT32_MAX || s.segment_length > UINT32_MAX ||
      s.segment_count > UINT32_MAX) {
    return Error{"spectrum blob: a length exceeds 32 bits"};
  }
  std::string out;
  out.reserve(kFixedHeaderBytes + snapshot.unit.size() +
              s.values.size() * static_cast<std::size_t>(precision));
  out.append(kMagic.data(), kMagic.size());
  PutU16(out, kBlobVersion);
  out.push_back(static_cast<char>(precision));
  out.push_back(static_cast<char>(CodeOf(kWindowCodes, s.window.kind)));
  out.push_back(static_cast<char>(s.window.symmetry == WindowSymmetry::kPeriodic ? 0 : 1));
  out.push_back(static_cast<char>(s.scaling == Scaling::kDensity ? 0 : 1));
  out.push_back(static_cast<char>(s.sides == Sides::kOneSided ? 0 : 1));
  out.push_back(static_cast<char>(CodeOf(kAveragingCodes, s.averaging)));
  PutF64(out, s.sample_rate_hz);
  PutF64(out, s.window.kaiser_beta);
  PutU32(out, static_cast<std::uint32_t>(s.fft_length));
  PutU32(out, static_cast<std::uint32_t>(s.segment_length));
  PutU32(out, static_cast<std::uint32_t>(s.segment_count));
  PutU32(out, static_cast<std::uint32_t>(s.values.size()));
  out.push_back(static_cast<char>(snapshot.unit.size()));
  out.append(snapshot.unit);
  for (double v : s.values) {
    if (precision == BlobPrecision::kFloat32) {
      PutU32(out, std::bit_cast<std::uint32_t>(static_cast<float>(v)));
    } else {
      PutF64(out, v);
    }
  }
  return out;
}

Result<SpectrumSnapshot> DecodeSpectrumBlob(std::string_view blob) {
  if (blob.size() < kFixedHeaderBytes) {
    return Error{"spectrum blob: " + std::to_string(blob.size()) + " bytes is shorter than the " +
                 std::to_string(kFixedHeaderBytes) + "-byte header"};
  }
  if (std::memcmp(blob.data(), kMagic.data(), kMagic.size()) != 0) {
    return Error{"spectrum blob: bad magic (expected 'SWSP')"};
  }
  auto version = GetUnsigned(blob, 4, 2);
  if (version != kBlobVersion) {
    return Error{"spectrum blob: version " + std::to_string(version) +
                 " is not supported (expected " + std::to_string(kBlobVersion) + ")"};
  }
  auto precision = static_cast<std::uint8_t>(blob[6]);
  if (precision != 4 && precision != 8) {
    return Error{"spectrum blob: value width " + std::to_string(precision) + " must be 4 or 8"};
  }
  auto window_code = static_cast<std::uint8_t>(blob[7]);
  auto symmetry = static_cast<std::uint8_t>(blob[8]);
  auto scaling = static_cast<std::uint8_t>(blob[9]);
  auto sides = static_cast<std::uint8_t>(blob[10]);
  auto averaging = static_cast<std::uint8_t>(blob[11]);
  if (window_code >= kWindowCodes.size()) {
    return Error{"spectrum blob: window code " + std::to_string(window_code) + " is unknown"};
  }
  if (symmetry > 1 || scaling > 1 || sides > 1) {
    return Error{"spectrum blob: symmetry/scaling/sides codes " + std::to_string(symmetry) + "/" +
                 std::to_string(scaling) + "/" + std::to_string(sides) + " must each be 0 or 1"};
  }
  if (averaging >= kAveragingCodes.size()) {
    return Error{"spectrum blob: averaging code " + std::to_string(averaging) + " is unknown"};
  }
  SpectrumSnapshot snapshot;
  auto& s = snapshot.spectrum;
  s.window.kind = kWindowCodes[window_code];
  s.window.symmetry = symmetry == 0 ? WindowSymmetry::kPeriodic : WindowSymmetry::kSymmetric;
  s.scaling = scaling == 0 ? Scaling::kDensity : Scaling::kSpectrum;
  s.sides = sides == 0 ? Sides::kOneSided : Sides::kTwoSided;
  s.averaging = kAveragingCodes[averaging];
  s.sample_rate_hz = std::bit_cast<double>(GetUnsigned(blob, 12, 8));
  s.window.kaiser_beta = std::bit_cast<double>(GetUnsigned(blob, 20, 8));
  s.fft_length = GetUnsigned(blob, 28, 4);
  s.segment_length = GetUnsigned(blob, 32, 4);
  s.segment_count = GetUnsigned(blob, 36, 4);
  std::size_t bins = GetUnsigned(blob, 40, 4);
  std::size_t unit_length = static_cast<unsigned char>(blob[44]);
  std::size_t expected = kFixedHeaderBytes + unit_length + bins * precision;
  if (blob.size() != expected) {
    return Error{"spectrum blob: " + std::to_string(blob.size()) + " bytes, but the header (" +
                 std::to_string(bins) + " bins of " + std::to_string(precision) +
                 " bytes) calls for " + std::to_string(expected)};
  }
  snapshot.unit = std::string(blob.substr(kFixedHeaderBytes, unit_length));
  s.values.resize(bins);
  std::size_t at = kFixedHeaderBytes + unit_length;
  for (std::size_t i = 0; i < bins; ++i, at += precision) {
    if (precision == 4) {
      s.values[i] = std::bit_cast<float>(static_cast<std::uint32_t>(GetUnsigned(blob, at, 4)));
    } else {
      s.values[i] = std::bit_cast<double>(GetUnsigned(blob, at, 8));
    }
  }
  return snapshot;
}

}  // namespace spinward::storage
