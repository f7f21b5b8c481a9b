#include "spinward/daemon/frame.h"

#include <cmath>
#include <cstdio>

namespace spinward::daemon {
namespace {

// Shortest text that reads back to the same double, so a log line shows the exact bad value.
std::string FormatDouble(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.17g", value);
  return text;
}

}  // namespace

std::size_t SampleFormatBytes(SampleFormat format) {
  switch (format) {
    case SampleFormat::kInt16:
      return 2;
    case SampleFormat::kInt32:
    case SampleFormat::kFloat32:
      return 4;
  }
  return 0;
}

std::string_view SampleFormatName(SampleFormat format) {
  switch (format) {
    case SampleFormat::kInt16:
      return "int16";
    case SampleFormat::kInt32:
      return "int32";
    case SampleFormat::kFloat32:
      return "float32";
  }
  return "unknown";
}

std::string_view ScaleUnitName(ScaleUnit unit) {
  return unit == ScaleUnit::kEngineering ? "engineering" : "volts";
}

bool IsValidSensorId(std::string_view id, std::string* why) {
  auto fail = [why](std::string text) {
    if (why != nullptr) *why = std::move(text);
    return false;
  };
  if (id.size() < kMinSensorIdBytes || id.size() > kMaxSensorIdBytes) {
    return fail("length " + std::to_string(id.size()) + " bytes, expected 1..64");
  }
  // UTF-8 per RFC 3629: lead byte gives the length; continuation bytes are 10xxxxxx; the code
  // point must need that many bytes (no overlong forms), not be a surrogate, and be <= U+10FFFF.
  std::size_t i = 0;
  while (i < id.size()) {
    const auto lead = static_cast<unsigned char>(id[i]);
    std::size_t extra = 0;
    std::uint32_t cp = 0;
    std::uint32_t min_cp = 0;
    if (lead < 0x80) {
      cp = lead;
    } else if ((lead & 0xE0) == 0xC0) {
      extra = 1, cp = lead & 0x1Fu, min_cp = 0x80;
    } else if ((lead & 0xF0) == 0xE0) {
      extra = 2, cp = lead & 0x0Fu, min_cp = 0x800;
    } else if ((lead & 0xF8) == 0xF0) {
      extra = 3, cp = lead & 0x07u, min_cp = 0x10000;
    } else {
      return fail("byte " + std::to_string(i) + " is not valid UTF-8");
    }
    if (i + extra >= id.size()) {
      return fail("byte " + std::to_string(i) + " starts a UTF-8 sequence cut short");
    }
    for (std::size_t k = 1; k <= extra; ++k) {
      const auto next = static_cast<unsigned char>(id[i + k]);
      if ((next & 0xC0) != 0x80) {
        return fail("byte " + std::to_string(i + k) + " is not valid UTF-8");
      }
      cp = (cp << 6) | (next & 0x3Fu);
    }
    if (extra > 0 && (cp < min_cp || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))) {
      return fail("bytes " + std::to_string(i) + ".." + std::to_string(i + extra) +
                  " are not valid UTF-8");
    }
    if (cp < 0x20 || cp == 0x7F) {
      char hex[8];
      std::snprintf(hex, sizeof hex, "0x%02X", static_cast<unsigned>(cp));
      return fail("byte " + std::to_string(i) + " is the control character " + hex);
    }
    i += extra + 1;
  }
  return true;
}

Status FrameMetadata::Validate() const {
  std::string why;
  if (!IsValidSensorId(sensor_id, &why)) return Status::Fail("sensor_id: " + why);
  if (!(std::isfinite(sample_rate_hz) && sample_rate_hz > 0.0)) {
    return Status::Fail("sample_rate_hz " + FormatDouble(sample_rate_hz) +
                        ": must be finite and > 0");
  }
  if (!(std::isfinite(scale) && scale > 0.0)) {
    return Status::Fail("scale " + FormatDouble(scale) + ": must be finite and > 0");
  }
  if (scale_unit != ScaleUnit::kVolts && scale_unit != ScaleUnit::kEngineering) {
    return Status::Fail("scale_unit " + std::to_string(static_cast<int>(scale_unit)) +
                        ": must be volts (0) or engineering (1)");
  }
  return Status::Ok();
}

}  // namespace spinward::daemon
