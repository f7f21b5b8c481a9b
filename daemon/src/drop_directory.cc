#include "spinward/daemon/drop_directory.h"

#include <fnmatch.h>

#include <cmath>
#include <fstream>

#include "spinward/daemon/frame_codec.h"
#include "thread_name.h"

namespace spinward::daemon {
namespace fs = std::filesystem;

namespace {

std::int64_t FileTimeNs(const fs::file_time_type& time) {
  auto system = std::chrono::file_clock::to_sys(time);
  return std::chrono::duration_cast<std::chrono::nanoseconds>(system.time_since_epoch()).count();
}

}  // namespace

DropDirectory::DropDirectory(DropDirectoryOptions options, BlockConsumer& consumer,
                             SourceReporter report)
    : options_(std::move(options)), consumer_(consumer), report_(std::move(report)) {}

DropDirectory::~DropDirectory() { Stop(); }

std::string DropDirectory::Describe() const { return "drop directory " + options_.path.string(); }

Status DropDirectory::Start() {
  std::error_code ec;
  fs::create_directories(options_.path / "done", ec);
  if (!ec) fs::create_directories(options_.path / "rejected", ec);
  if (ec) return Status::Fail(Describe() + ": " + ec.message());
  thread_ = std::thread([this] {
    NameThisThread("spw-drop-dir");
    while (!stopping_) {
      ScanOnce();
      auto until = std::chrono::steady_clock::now() + options_.poll_interval;
      while (!stopping_ && std::chrono::steady_clock::now() < until) {
        std::this_thread::sleep_for(std::chrono::milliseconds(20));
      }
    }
  });
  return Status::Ok();
}

void DropDirectory::Stop() {
  stopping_ = true;
  if (thread_.joinable()) thread_.join();
}

std::size_t DropDirectory::ScanOnce() {
  std::vector<fs::path> candidates;
  std::error_code ec;
  for (fs::directory_iterator it(options_.path, ec), end; !ec && it != end; it.increment(ec)) {
    if (!it->is_regular_file()) continue;
    const std::string name = it->path().filename().string();
    if (name.empty() || name[0] == '.') continue;  // hidden files: a box's temporary names
    candidates.push_back(it->path());
  }
  std::sort(candidates.begin(), candidates.end());  // oldest names first for dated file names
  std::size_t moved = 0;
  const auto now = fs::file_time_type::clock::now();
  for (const auto& file : candidates) {
    if (stopping_) break;
    std::error_code time_error;
    auto modified = fs::last_write_time(file, time_error);
    if (time_error || now - modified < options_.settle_time) continue;  // still being written
    const std::string name = file.filename().string();
    const DropFileRule* rule = nullptr;
    for (const auto& r : options_.rules) {
      if (::fnmatch(r.pattern.c_str(), name.c_str(), 0) == 0) {
        rule = &r;
        break;
      }
    }
    if (rule == nullptr) {
      Move(file, false, "no drop_directory.files pattern matches '" + name + "'");
    } else if (Status s = ProcessFile(file, *rule); !s.ok()) {
      Move(file, false, s.message());
    } else {
      Move(file, true, "");
    }
    ++moved;
  }
  return moved;
}

Status DropDirectory::OfferWaiting(SampleBlock&& block) {
  for (;;) {
    auto result = consumer_.Offer(std::move(block));
    if (result == OfferResult::kQueued) return Status::Ok();
    if (result == OfferResult::kUnknownSensor) {
      return Status::Fail("sensor '" + block.sensor_id + "' is not configured");
    }
    if (stopping_) return Status::Fail("daemon stopping before the file was fully read");
    counters_.paused_full++;
    std::this_thread::sleep_for(std::chrono::milliseconds(5));  // the point is behind: wait
  }
}

Status DropDirectory::ProcessFile(const fs::path& file, const DropFileRule& rule) {
  std::error_code ec;
  const auto modified = fs::last_write_time(file, ec);
  if (ec) return Status::Fail(file.filename().string() + ": " + ec.message());

  if (rule.frames) {
    auto bytes = ReadFileBytes(file);
    if (!bytes.ok()) return bytes.status();
    FrameAssembler assembler(DecodeLimits{options_.max_frame_bytes});
    std::vector<Frame> frames;
    auto error =
        assembler.Feed(std::span<const std::uint8_t>(
                           reinterpret_cast<const std::uint8_t*>(bytes->data()), bytes->size()),
                       &frames);
    if (error) {
      counters_.bad_frames[static_cast<std::size_t>(error->reason)]++;
      return Status::Fail(file.filename().string() + ": frame " + std::to_string(frames.size()) +
                          ": " + std::string(FrameErrorReasonName(error->reason)) + ": " +
                          error->message);
    }
    if (assembler.buffered_bytes() != 0) {
      return Status::Fail(file.filename().string() + ": ends inside a frame (" +
                          std::to_string(assembler.buffered_bytes()) + " bytes left over)");
    }
    for (auto& frame : frames) {
      if (frame.metadata.sensor_id != rule.sensor_id) {
        return Status::Fail(file.filename().string() + ": frame for sensor '" +
                            frame.metadata.sensor_id + "' but the pattern maps to point " +
                            rule.point_id + " (sensor '" + rule.sensor_id + "')");
      }
    }
    for (auto& frame : frames) {
      counters_.frames++;
      if (Status s = OfferWaiting(BlockFromFrame(std::move(frame))); !s.ok()) return s;
    }
    return Status::Ok();
  }

  auto recording = ReadRecording(file, rule.read);
  if (!recording.ok()) return recording.status();
  if (std::fabs(recording->sample_rate_hz - rule.point_sample_rate_hz) >
      1e-9 * rule.point_sample_rate_hz) {
    return Status::Fail(file.filename().string() + ": sample rate " +
                        std::to_string(recording->sample_rate_hz) + " Hz differs from point " +
                        rule.point_id + "'s " + std::to_string(rule.point_sample_rate_hz) + " Hz");
  }
  for (double v : recording->samples) {
    if (!std::isfinite(v))
      return Status::Fail(file.filename().string() + ": holds NaN or Inf samples");
  }
  const auto& samples = recording->samples;
  const double rate = recording->sample_rate_hz;
  // The last sample was taken when the file was written.
  const std::int64_t end_ns = FileTimeNs(modified);
  const std::int64_t start_ns =
      end_ns -
      static_cast<std::int64_t>(std::llround(static_cast<double>(samples.size()) * 1e9 / rate));
  for (std::size_t pos = 0; pos < samples.size(); pos += options_.block_samples) {
    const std::size_t n = std::min(options_.block_samples, samples.size() - pos);
    SampleBlock block;
    block.sensor_id = rule.sensor_id;
    block.sample_rate_hz = rate;
    block.first_sample_ns =
        start_ns + static_cast<std::int64_t>(std::llround(static_cast<double>(pos) * 1e9 / rate));
    block.has_sequence = false;
    block.in_volts = false;  // recordings hold engineering units (see docs/configuration.md)
    block.samples.assign(samples.begin() + static_cast<std::ptrdiff_t>(pos),
                         samples.begin() + static_cast<std::ptrdiff_t>(pos + n));
    if (Status s = OfferWaiting(std::move(block)); !s.ok()) return s;
  }
  return Status::Ok();
}

void DropDirectory::Move(const fs::path& file, bool accepted, const std::string& reason) {
  const fs::path target = options_.path / (accepted ? "done" : "rejected") / file.filename();
  std::error_code ec;
  fs::rename(file, target, ec);
  if (ec) {
    // Cannot move: delete nothing, but say so; the file would otherwise be read again next pass.
    if (report_) report_(Describe(), "cannot move " + file.string() + ": " + ec.message());
    return;
  }
  if (accepted) {
    counters_.files_done++;
    if (report_) report_(Describe(), "processed " + file.filename().string());
  } else {
    counters_.files_rejected++;
    std::ofstream(target.string() + ".reason.txt") << reason << "\n";
    if (report_) report_(Describe(), "rejected " + file.filename().string() + ": " + reason);
  }
}

}  // namespace spinward::daemon
