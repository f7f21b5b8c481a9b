#include "spinward/estimators/bearing_geometry.h"

#include <cmath>
#include <cstdio>
#include <numbers>
#include <string>

namespace spinward::estimators {
namespace {

std::string Num(double value) {
  char text[32];
  std::snprintf(text, sizeof(text), "%.6g", value);
  return text;
}

bool PositiveFinite(double value) { return std::isfinite(value) && value > 0.0; }

}  // namespace

Status BearingGeometry::Validate() const {
  if (rolling_elements < 3) {
    return Error{"rolling_elements " + std::to_string(rolling_elements) + " must be at least 3"};
  }
  if (!PositiveFinite(element_diameter)) {
    return Error{"element_diameter " + Num(element_diameter) + " must be finite and positive"};
  }
  if (!PositiveFinite(pitch_diameter)) {
    return Error{"pitch_diameter " + Num(pitch_diameter) + " must be finite and positive"};
  }
  if (element_diameter >= pitch_diameter) {
    return Error{"element_diameter " + Num(element_diameter) +
                 " must be less than pitch_diameter " + Num(pitch_diameter)};
  }
  if (!std::isfinite(contact_angle_deg) || contact_angle_deg < 0.0 || contact_angle_deg >= 90.0) {
    return Error{"contact_angle_deg " + Num(contact_angle_deg) + " must be in [0, 90)"};
  }
  return Status::Ok();
}

Status DefectMultiples::Validate() const {
  const struct {
    const char* name;
    double value;
  } fields[] = {{"ftf", ftf}, {"bpfo", bpfo}, {"bpfi", bpfi}, {"bsf", bsf}};
  for (const auto& field : fields) {
    if (!PositiveFinite(field.value)) {
      return Error{std::string(field.name) + " " + Num(field.value) +
                   " must be finite and positive"};
    }
  }
  // The cage turns slower than the shaft; the inner race meets the elements more often than the
  // outer race does (BPFI - BPFO = n r > 0).
  if (ftf >= 1.0) return Error{"ftf " + Num(ftf) + " must be less than 1 (cage slower than shaft)"};
  if (bpfo >= bpfi) {
    return Error{"bpfo " + Num(bpfo) + " must be less than bpfi " + Num(bpfi)};
  }
  return Status::Ok();
}

Result<DefectMultiples> MultiplesFromGeometry(const BearingGeometry& geometry) {
  if (Status status = geometry.Validate(); !status.ok()) return status;
  const double n = static_cast<double>(geometry.rolling_elements);
  const double d_over_pitch = geometry.element_diameter / geometry.pitch_diameter;
  const double r = d_over_pitch * std::cos(geometry.contact_angle_deg * std::numbers::pi / 180.0);
  DefectMultiples m;
  m.ftf = 0.5 * (1.0 - r);
  m.bpfo = 0.5 * n * (1.0 - r);
  m.bpfi = 0.5 * n * (1.0 + r);
  m.bsf = (1.0 - r * r) / (2.0 * d_over_pitch);
  return m;
}

Result<DefectFrequencies> DefectFrequenciesAt(const DefectMultiples& multiples, double shaft_hz) {
  if (Status status = multiples.Validate(); !status.ok()) return status;
  if (!PositiveFinite(shaft_hz)) {
    return Error{"shaft_hz " + Num(shaft_hz) + " must be finite and positive"};
  }
  DefectFrequencies f;
  f.shaft_hz = shaft_hz;
  f.ftf_hz = multiples.ftf * shaft_hz;
  f.bpfo_hz = multiples.bpfo * shaft_hz;
  f.bpfi_hz = multiples.bpfi * shaft_hz;
  f.bsf_hz = multiples.bsf * shaft_hz;
  f.ball_pass_hz = multiples.BallPass() * shaft_hz;
  return f;
}

}  // namespace spinward::estimators
