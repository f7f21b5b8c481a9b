// The spectrum snapshot blob: a self-describing, little-endian byte layout of one averaged spectrum
// (header with magic, version, rate, lengths, window, scaling, sides, unit; then the bin values as
// float32 or float64). Documented in docs/storage.md, "Spectrum blob"; readable without Spinward.
// Thread-safety: pure functions.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"

namespace spinward::storage {

enum class BlobPrecision : std::uint8_t { kFloat32 = 4, kFloat64 = 8 };

struct SpectrumSnapshot {
  estimators::AveragedSpectrum spectrum;
  std::string unit;  // unit of the values, e.g. "(m/s^2)^2/Hz"
};

// Encodes a snapshot. Fails on an empty spectrum, a non-positive rate, or a unit longer than 255
// bytes.
Result<std::string> EncodeSpectrumBlob(const SpectrumSnapshot& snapshot,
                                       BlobPrecision precision = BlobPrecision::kFloat32);

// Decodes a blob, checking magic, version, lengths and the codes; a damaged blob yields an error
// naming the field and its value, never a partial spectrum.
Result<SpectrumSnapshot> DecodeSpectrumBlob(std::string_view blob);

// Names as written in the metadata columns and the blob doc.
std::string_view WindowKindName(estimators::WindowKind kind);
std::string_view ScalingName(estimators::Scaling scaling);

}  // namespace spinward::storage
