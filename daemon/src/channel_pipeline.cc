#include "spinward/daemon/channel_pipeline.h"

#include <cmath>
#include <limits>
#include <span>
#include <utility>

#include "spinward/estimators/finite_check.h"

namespace spinward::daemon {
namespace {

bool SameRate(double a, double b) { return std::fabs(a - b) <= 1e-9 * std::fabs(b); }

}  // namespace

std::string_view ToString(BlockVerdict verdict) {
  switch (verdict) {
    case BlockVerdict::kAccepted:
      return "accepted";
    case BlockVerdict::kRateMismatch:
      return "rate_mismatch";
    case BlockVerdict::kNonFiniteSamples:
      return "non_finite_samples";
    case BlockVerdict::kNotScalable:
      return "volts_without_sensitivity";
    case BlockVerdict::kEmpty:
      return "empty";
  }
  return "unknown";
}

Status PointSettings::Validate() const {
  if (point_id.empty()) return Status::Fail("point id is empty");
  if (!(sample_rate_hz > 0.0) || !std::isfinite(sample_rate_hz)) {
    return Status::Fail("point " + point_id + ": sample_rate_hz " + std::to_string(sample_rate_hz) +
                        " must be positive");
  }
  if (!SameRate(welch.sample_rate_hz, sample_rate_hz)) {
    return Status::Fail("point " + point_id + ": estimator sample rate " +
                        std::to_string(welch.sample_rate_hz) + " differs from the point's " +
                        std::to_string(sample_rate_hz));
  }
  if (Status s = welch.Validate(); !s.ok())
    return Status::Fail("point " + point_id + ": " + s.message());
  if (welch.scaling != estimators::Scaling::kDensity ||
      welch.sides != estimators::Sides::kOneSided) {
    return Status::Fail("point " + point_id +
                        ": the pipeline needs a one-sided density spectrum to integrate bands");
  }
  if (welch.segments_per_average == 0) {
    return Status::Fail("point " + point_id + ": segments_per_average 0: the interval must be set");
  }
  if (estimators::QuantityOf(sample_unit) != estimators::Quantity::kAcceleration) {
    return Status::Fail("point " + point_id + ": sample unit " +
                        std::string(estimators::ToString(sample_unit)) + " is not an acceleration");
  }
  // Volts / sensitivity gives the sensitivity's unit: records labelled otherwise would be wrong by
  // the conversion factor (9.80665 for g against m/s^2).
  if (sensitivity && sensitivity->unit != sample_unit) {
    return Status::Fail("point " + point_id + ": sensitivity is per " +
                        std::string(estimators::ToString(sensitivity->unit)) +
                        " but the samples are declared in " +
                        std::string(estimators::ToString(sample_unit)));
  }
  for (const auto& band : bands) {
    if (Status s = band.Validate(sample_rate_hz); !s.ok()) {
      return Status::Fail("point " + point_id + ": band " + band.name + ": " + s.message());
    }
  }
  return ValidateDiagnostics();
}

// The interval's samples feed the envelope spectrum: it must hold at least one envelope segment.
Status PointSettings::ValidateDiagnostics() const {
  const DiagnosticSettings& d = diagnostics;
  if (!d.Active()) return Status::Ok();
  const std::string where = "point " + point_id + ": ";
  if (d.machine_id.empty()) return Status::Fail(where + "diagnostics need the machine id");
  if (!(d.nominal_shaft_hz > 0.0) || !std::isfinite(d.nominal_shaft_hz)) {
    return Status::Fail(where + "nominal shaft speed " + std::to_string(d.nominal_shaft_hz) +
                        " Hz must be positive");
  }
  if (!(d.speed_search_fraction > 0.0 && d.speed_search_fraction < 1.0)) {
    return Status::Fail(where + "speed search fraction must be in (0, 1)");
  }
  for (const auto& order : d.order_bands) {
    if (Status s = order.Validate(); !s.ok()) return Status::Fail(where + s.message());
  }
  if (d.bearing) {
    if (Status s = d.bearing->Validate(); !s.ok())
      return Status::Fail(where + "bearing " + s.message());
  }
  if (d.envelope) {
    if (!d.bearing) return Status::Fail(where + "envelope measures need the machine's bearing");
    const EnvelopeSettings& e = *d.envelope;
    const bool automatic = e.band_low_hz == 0.0 && e.band_high_hz == 0.0;
    if (!automatic && !(e.band_low_hz >= 0.0 && e.band_high_hz > e.band_low_hz &&
                        e.band_high_hz <= sample_rate_hz / 2.0)) {
      return Status::Fail(where + "envelope band " + std::to_string(e.band_low_hz) + "-" +
                          std::to_string(e.band_high_hz) + " Hz must lie in [0, " +
                          std::to_string(sample_rate_hz / 2.0) + "] with low below high");
    }
    if (e.harmonics < 1) return Status::Fail(where + "envelope harmonics must be at least 1");
    if (!(e.tolerance > 0.0 && e.tolerance < 0.5)) {
      return Status::Fail(where + "envelope tolerance must be in (0, 0.5)");
    }
    const std::size_t interval_samples =
        welch.segment_length + (welch.segments_per_average - 1) * welch.Hop();
    if (e.segment_length < 16 || e.segment_length > interval_samples) {
      return Status::Fail(where + "envelope segment " + std::to_string(e.segment_length) +
                          " samples must be at least 16 and fit in the interval's " +
                          std::to_string(interval_samples) + " samples");
    }
  }
  return Status::Ok();
}

Result<std::unique_ptr<ChannelPipeline>> ChannelPipeline::Create(PointSettings settings,
                                                                 std::shared_ptr<RecordSink> sink) {
  if (Status s = settings.Validate(); !s.ok()) return Error{s.message()};
  auto welch = estimators::StreamingWelch::Create(settings.welch);
  if (!welch.ok()) return Error{"point " + settings.point_id + ": " + welch.message()};
  return std::unique_ptr<ChannelPipeline>(
      new ChannelPipeline(std::move(settings), std::move(welch).value(), std::move(sink)));
}

ChannelPipeline::ChannelPipeline(PointSettings settings, estimators::StreamingWelch welch,
                                 std::shared_ptr<RecordSink> sink)
    : settings_(std::move(settings)),
      welch_(std::move(welch)),
      sink_(std::move(sink)),
      diagnostics_(settings_.diagnostics, settings_.sample_rate_hz, settings_.sample_unit,
                   settings_.speed_board) {}

std::int64_t ChannelPipeline::TimeOfRunSample(std::uint64_t index) const {
  return run_start_ns_ + static_cast<std::int64_t>(std::llround(static_cast<double>(index) * 1e9 /
                                                                settings_.sample_rate_hz));
}

// Samples of the current run still needed before the average in progress completes: the end of
// segment j of a run is at L + j*H, and the average completes after segments_per_average segments.
std::size_t ChannelPipeline::SamplesUntilAverageCompletes() const {
  const auto& w = settings_.welch;
  const std::uint64_t length = w.segment_length;
  const std::uint64_t hop = w.Hop();
  const std::uint64_t done_in_run = run_samples_ < length ? 0 : (run_samples_ - length) / hop + 1;
  const std::uint64_t have = welch_.segments_in_average();
  const std::uint64_t need = w.segments_per_average > have ? w.segments_per_average - have : 1;
  const std::uint64_t end = length + (done_in_run + need - 1) * hop;
  return static_cast<std::size_t>(end - run_samples_);
}

void ChannelPipeline::NoteRejected(const SampleBlock& block) {
  if (!in_run_) return;
  lost_block_ = true;
  if (block.has_sequence) last_sequence_ = block.sequence;  // the gap is this block, not the next
}

// Raw facts for the sensor checks: the longest run of identical samples (a stuck sensor or a dead
// channel repeats one value) and the samples at or beyond the clip level.
void ChannelPipeline::CountSensorFacts(std::span<const double> piece) {
  if (piece.empty()) return;
  if (settings_.clip_level) {
    const double clip = *settings_.clip_level;
    std::size_t clipped = 0;
    for (double x : piece) clipped += (x >= clip) | (x <= -clip);
    clipped_samples_ += clipped;
  }
  // A live sensor never repeats a sample: check that first with a loop that vectorizes, and walk
  // the runs one sample at a time only when some neighbours are equal.
  bool any_repeat = piece[0] == previous_sample_;
  for (std::size_t i = 1; i < piece.size(); ++i) any_repeat |= piece[i] == piece[i - 1];
  if (!any_repeat) {
    identical_run_ = 1;
    previous_sample_ = piece.back();
    if (longest_identical_run_ < 1) longest_identical_run_ = 1;
    return;
  }
  for (double x : piece) {
    if (x == previous_sample_) {
      ++identical_run_;
    } else {
      identical_run_ = 1;
      previous_sample_ = x;
    }
    if (identical_run_ > longest_identical_run_) longest_identical_run_ = identical_run_;
  }
}

void ChannelPipeline::Restart(const SampleBlock& block) {
  // No average spans a gap: the interval in progress ends at the last sample before it, as a
  // shorter record (its segment count says so); samples too few for a segment are dropped with it.
  if (in_run_) {
    if (welch_.segments_in_average() > 0) {
      Emit(welch_.TakeAverage(), TimeOfRunSample(run_samples_));
    } else {
      indicators_.Reset();
      diagnostics_.Reset();
      interval_open_ = false;
    }
  }
  welch_.Reset();
  in_run_ = true;
  run_start_ns_ = block.first_sample_ns;
  run_samples_ = 0;
}

ChannelPipeline::Outcome ChannelPipeline::Process(const SampleBlock& block) {
  Outcome outcome;
  const std::size_t n = block.samples.size();
  if (n == 0) {
    counters_.rejected_other++;
    NoteRejected(block);
    return {BlockVerdict::kEmpty, false, "empty block"};
  }
  if (!SameRate(block.sample_rate_hz, settings_.sample_rate_hz)) {
    counters_.rejected_rate++;
    NoteRejected(block);
    return {BlockVerdict::kRateMismatch, false,
            "sample rate " + std::to_string(block.sample_rate_hz) +
                " Hz differs from the configured " + std::to_string(settings_.sample_rate_hz) +
                " Hz"};
  }
  if (!estimators::AllFinite(block.samples)) {
    std::size_t i = 0;
    while (std::isfinite(block.samples[i])) ++i;
    counters_.rejected_non_finite++;
    NoteRejected(block);
    return {BlockVerdict::kNonFiniteSamples, false,
            "non-finite sample at index " + std::to_string(i) + " of " + std::to_string(n)};
  }
  if (block.in_volts && !settings_.sensitivity) {
    counters_.rejected_other++;
    NoteRejected(block);
    return {BlockVerdict::kNotScalable, false,
            "block in volts but the point has no sensitivity configured"};
  }

  // Gap-free continuation, or a restart of the segmenting.
  if (!in_run_) {
    Restart(block);
  } else if (lost_block_) {
    // A block was rejected since the last one used: its samples are missing from the stream.
    ++interval_gaps_;
    outcome.restarted = true;
    outcome.message = "restarted after a rejected block";
    Restart(block);
  } else if (block.has_sequence && block.sequence > last_sequence_ + 1) {
    counters_.sequence_gaps++;
    ++interval_gaps_;
    outcome.restarted = true;
    outcome.message = "sequence gap: expected " + std::to_string(last_sequence_ + 1) + ", got " +
                      std::to_string(block.sequence);
    Restart(block);
  } else if (block.has_sequence && block.sequence <= last_sequence_) {
    // A sender that counts again (a box reconnecting starts at 0), a duplicate or a reordered
    // frame: no frame is known lost (docs/protocol.md), so no gap is counted for the sensor's
    // dropout check; the segmenting still restarts, as the samples may repeat ones already used.
    outcome.restarted = true;
    outcome.message = "sequence restart: expected " + std::to_string(last_sequence_ + 1) +
                      ", got " + std::to_string(block.sequence);
    Restart(block);
  } else {
    const std::int64_t expected = TimeOfRunSample(run_samples_);
    const std::int64_t jump = block.first_sample_ns - expected;
    if (jump > settings_.time_jump_tolerance_ns || -jump > settings_.time_jump_tolerance_ns) {
      counters_.time_jumps++;  // not a loss: a box that sends snapshots jumps between them
      outcome.restarted = true;
      outcome.message = "time jump of " + std::to_string(jump) + " ns";
      Restart(block);
    }
  }
  last_sequence_ = block.sequence;
  lost_block_ = false;

  // Samples in engineering units are used as they came; volts go through the sensitivity first.
  std::span<const double> samples = block.samples;
  if (block.in_volts) {
    scaled_.resize(n);
    for (std::size_t i = 0; i < n; ++i)
      scaled_[i] = settings_.sensitivity->VoltsToUnits(block.samples[i]);
    samples = scaled_;
  }

  const estimators::StreamingWelch::AverageCallback on_average =
      [this](const estimators::AveragedSpectrum& spectrum) { completed_ = spectrum; };
  std::size_t pos = 0;
  while (pos < n) {
    if (!interval_open_) {
      interval_start_ns_ = TimeOfRunSample(run_samples_);
      interval_open_ = true;
    }
    const std::size_t take = std::min(n - pos, SamplesUntilAverageCompletes());
    std::span<const double> piece = samples.subspan(pos, take);
    const std::size_t segments_before = welch_.segments_total();
    welch_.Push(piece, on_average).IgnoreError();  // finite already checked above
    counters_.segments += welch_.segments_total() - segments_before;
    indicators_.Add(piece);
    diagnostics_.Add(piece);
    CountSensorFacts(piece);
    run_samples_ += take;
    pos += take;
    if (completed_) {
      Emit(std::move(*completed_), TimeOfRunSample(run_samples_));
      completed_.reset();
    }
  }
  counters_.blocks++;
  counters_.samples += n;
  return outcome;
}

void ChannelPipeline::Flush() {
  if (welch_.segments_in_average() == 0) return;
  Emit(welch_.TakeAverage(), TimeOfRunSample(run_samples_));
}

void ChannelPipeline::Emit(estimators::AveragedSpectrum spectrum, std::int64_t end_ns) {
  storage::MeasurementRecord record;
  record.point_id = settings_.point_id;
  record.interval_start_ns = interval_start_ns_;
  record.interval_end_ns = end_ns;
  record.segment_count = spectrum.segment_count;
  record.sample_unit = std::string(estimators::ToString(settings_.sample_unit));
  record.indicators = indicators_.Current();
  record.clipped_samples = clipped_samples_;
  record.longest_identical_run = longest_identical_run_;
  record.sequence_gaps = interval_gaps_;
  clipped_samples_ = 0;
  longest_identical_run_ = identical_run_;  // a run in progress carries into the next interval
  interval_gaps_ = 0;
  record.bands.reserve(settings_.bands.size());
  for (const auto& band : settings_.bands) {
    storage::BandReading reading;
    reading.name = band.name;
    reading.unit = std::string(estimators::ToString(band.unit));
    reading.lo_hz = band.lo_hz;
    reading.hi_hz = band.hi_hz;
    auto value = estimators::IntegrateBand(spectrum, band, settings_.sample_unit);
    reading.rms = value.ok() ? value->rms : std::numeric_limits<double>::quiet_NaN();
    record.bands.push_back(std::move(reading));
  }
  for (auto& reading : diagnostics_.Measure(spectrum, end_ns)) {
    record.bands.push_back(std::move(reading));
  }
  record.spectrum = std::move(spectrum);
  indicators_.Reset();
  interval_open_ = false;
  counters_.records++;
  if (sink_) sink_->Consume(record);
}

}  // namespace spinward::daemon
