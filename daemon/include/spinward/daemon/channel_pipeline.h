// One measurement point's processing chain: check the block (rate, sequence, time, finite samples)
// -> scale volts to engineering units -> streaming Welch and time-domain indicators -> at each
// completed average, a MeasurementRecord (indicators, band values, spectrum) to the sink.
//
// The averaging interval is a whole number of Welch segments, so records follow the samples' own
// time, not the daemon's clock: a replayed recording gives the same records as the live stream.
// Indicators cover the samples up to the end of the interval's last segment; each block is split at
// that point so the time-domain and spectral figures of a record describe the same stretch of
// signal. A sequence gap, a sequence number that goes back (a reconnected sender counting from 0:
// not counted as a loss) or a time jump ends the interval in progress early (a shorter record) and
// restarts the segmenting, so no segment and no average spans a gap; a block at another sample
// rate, or holding NaN/Inf, is rejected and counted. Thread-safety: one thread at
// a time per pipeline (the router runs each point on its own strand).
#pragma once

#include <atomic>
#include <cstdint>
#include <limits>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "spinward/daemon/point_diagnostics.h"
#include "spinward/daemon/record_sink.h"
#include "spinward/daemon/sample_block.h"
#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/overall_indicators.h"
#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/units.h"

namespace spinward::daemon {

struct PointSettings {
  std::string point_id;
  std::string sensor_id;
  double sample_rate_hz = 0.0;
  estimators::WelchOptions welch;  // density, one-sided; segments_per_average is the interval
  std::vector<estimators::BandSpec> bands;
  estimators::Unit sample_unit = estimators::Unit::kMetresPerSecondSquared;
  std::optional<estimators::Sensitivity> sensitivity;  // needed when blocks arrive in volts
  std::int64_t time_jump_tolerance_ns = 1'000'000;     // 1 ms; common practice, no source
  // Samples at or beyond +-clip_level (sample units) are counted for the clipping check.
  std::optional<double> clip_level;
  // Machine-aware measures (speed, order bands, envelope); inactive by default.
  DiagnosticSettings diagnostics;
  SpeedBoard* speed_board = nullptr;  // null: SpeedBoard::Shared()

  Status Validate() const;
  Status ValidateDiagnostics() const;
  bool operator==(const PointSettings&) const = default;
};

// Why a block was not used, for the counters and the logs.
enum class BlockVerdict {
  kAccepted,
  kRateMismatch,
  kNonFiniteSamples,
  kNotScalable,  // volts without a sensitivity
  kEmpty,
};

struct PipelineCounters {
  std::atomic<std::uint64_t> blocks{0};
  std::atomic<std::uint64_t> samples{0};
  std::atomic<std::uint64_t> rejected_rate{0};
  std::atomic<std::uint64_t> rejected_non_finite{0};
  std::atomic<std::uint64_t> rejected_other{0};
  std::atomic<std::uint64_t> sequence_gaps{0};
  std::atomic<std::uint64_t> time_jumps{0};
  std::atomic<std::uint64_t> segments{0};
  std::atomic<std::uint64_t> records{0};
};

class ChannelPipeline {
 public:
  static Result<std::unique_ptr<ChannelPipeline>> Create(PointSettings settings,
                                                         std::shared_ptr<RecordSink> sink);

  // Returns what became of the block, and a message when it was rejected or caused a restart.
  struct Outcome {
    BlockVerdict verdict = BlockVerdict::kAccepted;
    bool restarted = false;  // a gap or time jump restarted the segmenting
    std::string message;
  };
  Outcome Process(const SampleBlock& block);

  // Ends the interval in progress early (shutdown, reload): emits a record for the segments it has.
  void Flush();

  const PointSettings& settings() const { return settings_; }
  const PipelineCounters& counters() const { return counters_; }

 private:
  ChannelPipeline(PointSettings settings, estimators::StreamingWelch welch,
                  std::shared_ptr<RecordSink> sink);
  void Restart(const SampleBlock& block);
  void NoteRejected(const SampleBlock& block);
  void CountSensorFacts(std::span<const double> piece);
  std::size_t SamplesUntilAverageCompletes() const;
  void Emit(estimators::AveragedSpectrum spectrum, std::int64_t end_ns);
  std::int64_t TimeOfRunSample(std::uint64_t index) const;

  PointSettings settings_;
  estimators::StreamingWelch welch_;
  std::shared_ptr<RecordSink> sink_;
  estimators::IndicatorAccumulator indicators_;
  PointDiagnostics diagnostics_;
  PipelineCounters counters_;
  std::vector<double> scaled_;  // reused per block: the hot path does not allocate in steady state

  // A run is a gap-free stretch of stream: segments are cut from its start.
  bool in_run_ = false;
  std::int64_t run_start_ns_ = 0;
  std::uint64_t run_samples_ = 0;
  std::uint64_t last_sequence_ = 0;
  bool lost_block_ = false;  // a block was rejected since the last one used
  // Sensor-check facts of the interval in progress.
  double previous_sample_ = std::numeric_limits<double>::quiet_NaN();
  std::size_t identical_run_ = 0;
  std::size_t longest_identical_run_ = 0;
  std::size_t clipped_samples_ = 0;
  std::size_t interval_gaps_ = 0;
  std::int64_t interval_start_ns_ = 0;
  bool interval_open_ = false;
  std::optional<estimators::AveragedSpectrum> completed_;
};

std::string_view ToString(BlockVerdict verdict);

}  // namespace spinward::daemon
