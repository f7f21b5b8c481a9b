// `spinward check-config FILE`: loads a site file the way the daemon would and either lists every
// problem (stderr, `file:line:column: key: problem`, exit 1) or prints what the site describes
// (stdout, exit 0), so a file can be checked before a reload. Usage errors exit 2.
#include <cstdio>
#include <string>
#include <string_view>

#include "commands.h"
#include "site_judgement.h"
#include "spinward/config/point_options.h"
#include "spinward/config/site_loader.h"

namespace spinward::daemon {
namespace {

constexpr std::string_view kUsage = R"usage(usage: spinward check-config FILE

Loads the site file FILE and checks it as the daemon would at start and on reload. Every problem is
printed as FILE:LINE:COLUMN: KEY: PROBLEM and the exit code is 1; a file without problems prints a
summary of its machines, points, profiles and sample sources, with exit code 0.
)usage";

std::string Number(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%g", value);
  return text;
}

void PrintPoint(const config::SiteConfig& site, const config::PointConfig& point) {
  std::string sensor = point.sensor;
  if (point.sensitivity) {
    std::string unit(estimators::ToString(point.sensitivity->unit));
    if (unit.find('/') != std::string::npos) unit = "(" + unit + ")";  // mV/(m/s^2)
    sensor += " (" + Number(point.sensitivity->volts_per_unit * 1000.0) + " mV/" + unit +
              ", frames in volts)";
  } else {
    sensor += " (frames in " + std::string(estimators::ToString(point.unit)) + ")";
  }
  std::string where = point.location.empty() ? "" : point.location + ", ";
  std::printf("    %s: %s%s, sensor %s\n", point.id.c_str(), where.c_str(),
              std::string(config::ToString(point.direction)).c_str(), sensor.c_str());
  estimators::WelchOptions welch = config::PointWelchOptions(site, point);
  std::printf("      %s Hz, profile %s (%zu segments of %zu per average)\n",
              Number(point.sample_rate_hz).c_str(), point.profile.c_str(),
              welch.segments_per_average, welch.segment_length);
  for (const auto& band : point.bands) {
    std::printf("      band %s: %s to %s Hz, %s RMS in %s\n", band.name.c_str(),
                Number(band.lo_hz).c_str(), Number(band.hi_hz).c_str(),
                std::string(estimators::ToString(estimators::QuantityOf(band.unit))).c_str(),
                std::string(estimators::ToString(band.unit)).c_str());
  }
}

void PrintSummary(const std::string& file, const config::SiteConfig& site) {
  std::printf("%s: no problems\nsite: %s\n", file.c_str(), site.site.name.c_str());
  std::printf("machines: %zu, points: %zu\n", site.machines.size(), site.points.size());
  for (const auto& machine : site.machines) {
    std::printf("  %s%s%s: %s, %s rpm, ISO 10816-3 group %d, %s support\n", machine.id.c_str(),
                machine.name.empty() ? "" : " ", machine.name.c_str(),
                std::string(config::ToString(machine.kind)).c_str(),
                Number(machine.speed_rpm).c_str(), machine.iso_group,
                std::string(config::ToString(machine.support)).c_str());
    for (const auto& point : site.points) {
      if (point.machine == machine.id) PrintPoint(site, point);
    }
  }
  std::printf("profiles: %zu\n", site.profiles.size());
  for (const auto& profile : site.profiles) {
    std::printf(
        "  %s: segment %zu, overlap %zu, FFT %zu, window %s, detrend %s, %s averaging "
        "over %s s\n",
        profile.id.c_str(), profile.segment_length, profile.overlap,
        profile.fft_length == 0 ? profile.segment_length : profile.fft_length,
        estimators::ToString(profile.window).c_str(),
        std::string(estimators::ToString(profile.detrend)).c_str(),
        std::string(estimators::ToString(profile.averaging)).c_str(),
        Number(profile.interval_s).c_str());
    if (profile.averaging == estimators::Averaging::kExponential) {
      std::printf("    time constant %s s\n", Number(profile.time_constant_s).c_str());
    }
  }
  std::printf("listeners: %zu\n", site.listeners.size());
  for (const auto& listener : site.listeners) {
    std::string peers = listener.allowed_peers.empty() ? "any peer" : "";
    for (const auto& peer : listener.allowed_peers) {
      peers += (peers.empty() ? "" : ", ") + peer;
    }
    std::printf("  %s %s port %u, frames up to %zu bytes, from %s\n",
                std::string(config::ToString(listener.type)).c_str(), listener.address.c_str(),
                static_cast<unsigned>(listener.port), listener.max_frame_bytes, peers.c_str());
  }
  if (site.drop_directory) {
    std::printf("drop directory: %s (every %s s)\n", site.drop_directory->path.c_str(),
                Number(site.drop_directory->poll_interval_s).c_str());
    for (const auto& rule : site.drop_directory->files) {
      std::printf("  %s -> %s (%s)\n", rule.pattern.c_str(), rule.point.c_str(),
                  std::string(config::ToString(rule.format)).c_str());
    }
  }
  std::printf("storage: %s\nlogging: %s%s%s\n", site.storage.path.c_str(),
              std::string(config::ToString(site.logging.level)).c_str(),
              site.logging.file.empty() ? " to standard error" : " to ", site.logging.file.c_str());
}

}  // namespace

int CommandCheckConfig(const Arguments& args) {
  if (args.size() == 1 && (args[0] == "--help" || args[0] == "-h")) {
    std::fputs(std::string(kUsage).c_str(), stdout);
    return 0;
  }
  if (args.size() != 1 || args[0].empty() || args[0][0] == '-') {
    std::fputs(std::string(kUsage).c_str(), stderr);
    return 2;
  }
  config::LoadedSite loaded = config::LoadSiteFile(args[0]);
  if (!loaded.ok()) {
    for (const auto& problem : loaded.problems) {
      std::fprintf(stderr, "%s\n", problem.ToString().c_str());
    }
    std::fprintf(stderr, "%s: %zu problem%s; the site was not loaded\n", args[0].c_str(),
                 loaded.problems.size(), loaded.problems.size() == 1 ? "" : "s");
    return 1;
  }
  // The alarm rules as the daemon will build them: catches what needs the ISO tables (a low limit
  // above a preset's alert), which the loader does not know.
  if (auto judgements = JudgementsFromSite(loaded.site); !judgements.ok()) {
    std::fprintf(stderr, "%s: alarms: %s\n", args[0].c_str(), judgements.message().c_str());
    return 1;
  }
  PrintSummary(args[0], loaded.site);
  return 0;
}

}  // namespace spinward::daemon
