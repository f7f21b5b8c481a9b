// `spinward replay FILE --point ID`: processes a recording through one point's pipeline exactly as
// if it had streamed in, in frame-sized blocks, and prints the records as JSON lines. A progress
// bar is drawn on standard error when it is a terminal.
#include <unistd.h>

#include <cstdio>

#include "commands.h"
#include "option_reader.h"
#include "spinward/config/demo_site.h"
#include "spinward/config/site_loader.h"
#include "spinward/daemon/json_lines_sink.h"
#include "spinward/daemon/point_router.h"
#include "spinward/daemon/recording_reader.h"
#include "spinward/daemon/site_settings.h"

namespace spinward::daemon {
namespace {

constexpr const char* kReplayHelp =
    "usage: spinward replay FILE --point ID [options]\n"
    "\n"
    "Feeds a recording (WAV, CSV or raw samples, in the point's engineering units) through the\n"
    "point's pipeline as if it streamed in, and prints one JSON record per averaging interval.\n"
    "\n"
    "options:\n"
    "  --point ID         the measurement point whose settings apply\n"
    "  --config FILE      the site configuration (default: the built-in demo site)\n"
    "  --records FILE     write the records to FILE instead of standard output\n"
    "  --with-spectra     include each record's averaged spectrum\n"
    "  --rate HZ          sample rate for CSV without a time column and raw files\n"
    "  --channel N        channel (column) to read (default 0)\n"
    "  --block N          samples per block (default 2560)\n";

class CountingSink final : public RecordSink {
 public:
  explicit CountingSink(std::FILE* out, bool spectra) : out_(out), spectra_(spectra) {}
  void Consume(const storage::MeasurementRecord& record) override {
    std::fprintf(out_, "%s\n", RecordToJson(record, spectra_).c_str());
    ++count_;
  }
  std::size_t count() const { return count_; }

 private:
  std::FILE* out_;
  bool spectra_;
  std::size_t count_ = 0;
};

void DrawProgress(std::size_t done, std::size_t total) {
  const int width = 40;
  const double fraction = total ? static_cast<double>(done) / static_cast<double>(total) : 1.0;
  const int filled = static_cast<int>(fraction * width);
  std::fprintf(
      stderr, "\r[%s%s] %5.1f%%", std::string(static_cast<std::size_t>(filled), '#').c_str(),
      std::string(static_cast<std::size_t>(width - filled), '.').c_str(), fraction * 100.0);
  std::fflush(stderr);
}

}  // namespace

int CommandReplay(const Arguments& args) {
  auto opt = OptionReader::Parse(
      args, {"--point", "--config", "--records", "--rate", "--channel", "--block"},
      {"--help", "--with-spectra"});
  auto fail = [](const std::string& message, int code) {
    std::fprintf(stderr, "spinward replay: %s\n", message.c_str());
    return code;
  };
  if (!opt.ok()) return fail(opt.message(), 2);
  if (opt->Has("--help")) {
    std::fputs(kReplayHelp, stdout);
    return 0;
  }
  if (opt->positional().size() != 1) return fail("give exactly one recording FILE", 2);
  auto point_id = opt->Value("--point");
  if (!point_id) return fail("--point ID is required", 2);
  auto rate = opt->Number("--rate", 0.0);
  auto channel = opt->Integer("--channel", 0, 0, 1024);
  auto block_size = opt->Integer("--block", 2560, 1, 1 << 24);
  for (const Status& s : {rate.status(), channel.status(), block_size.status()}) {
    if (!s.ok()) return fail(s.message(), 2);
  }

  auto loaded = opt->Value("--config") ? config::LoadSiteFile(*opt->Value("--config"))
                                       : config::ParseSiteText(config::DemoSiteYaml(), "demo site");
  if (!loaded.ok()) {
    for (const auto& p : loaded.problems) std::fprintf(stderr, "%s\n", p.ToString().c_str());
    return fail("the configuration is not valid", 1);
  }
  const auto* point = loaded.site.FindPoint(*point_id);
  if (point == nullptr) return fail("no point '" + *point_id + "' in the configuration", 2);

  ReadOptions read;
  read.channel = static_cast<std::size_t>(*channel);
  read.sample_rate_hz = *rate;
  auto recording = ReadRecording(opt->positional()[0], read);
  if (!recording.ok()) return fail(recording.message(), 1);

  std::FILE* out = stdout;
  if (auto path = opt->Value("--records")) {
    out = std::fopen(path->c_str(), "w");
    if (out == nullptr) return fail(*path + ": cannot open for writing", 1);
  }
  auto sink = std::make_shared<CountingSink>(out, opt->Has("--with-spectra"));
  PointRouter router(RouterOptions{1, std::size_t{1} << 22}, sink,
                     [](const std::string& point_name, const std::string& message) {
                       std::fprintf(stderr, "\npoint %s: %s\n", point_name.c_str(),
                                    message.c_str());
                     });
  auto settings = PointSettingsFor(loaded.site, *point);
  settings.sensitivity.reset();  // a recording holds engineering units
  auto configured = router.Configure({settings});
  if (!configured.ok()) return fail(configured.message(), 1);

  const bool show_progress = ::isatty(STDERR_FILENO) != 0;
  const auto& samples = recording->samples;
  const auto n = static_cast<std::size_t>(*block_size);
  std::uint64_t sequence = 0;
  for (std::size_t pos = 0; pos < samples.size(); pos += n) {
    SampleBlock block;
    block.sensor_id = settings.sensor_id;
    block.sample_rate_hz = recording->sample_rate_hz;
    block.first_sample_ns =
        static_cast<std::int64_t>(static_cast<double>(pos) * 1e9 / recording->sample_rate_hz);
    block.sequence = sequence++;
    block.samples.assign(
        samples.begin() + static_cast<std::ptrdiff_t>(pos),
        samples.begin() + static_cast<std::ptrdiff_t>(std::min(pos + n, samples.size())));
    while (router.Offer(SampleBlock(block)) == OfferResult::kFull) router.Drain();
    if (show_progress && (sequence % 64 == 0)) DrawProgress(pos, samples.size());
  }
  router.FlushAll();
  router.Stop();
  if (show_progress) {
    DrawProgress(samples.size(), samples.size());
    std::fputc('\n', stderr);
  }
  const auto totals = router.Totals();
  if (out != stdout) std::fclose(out);
  std::fprintf(stderr,
               "replayed %s through point %s: %zu records, %llu segments, %llu blocks rejected\n",
               recording->source.c_str(), point_id->c_str(), sink->count(),
               static_cast<unsigned long long>(totals.segments),
               static_cast<unsigned long long>(totals.rejected_rate + totals.rejected_non_finite +
                                               totals.rejected_other));
  return totals.rejected_rate + totals.rejected_non_finite + totals.rejected_other == 0 ? 0 : 1;
}

}  // namespace spinward::daemon
