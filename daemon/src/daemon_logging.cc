#include "daemon_logging.h"

#include <spdlog/sinks/basic_file_sink.h>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>
#include <unistd.h>

namespace spinward::daemon {

Status SetUpLogging(const std::string& level, const std::string& file) {
  try {
    std::vector<spdlog::sink_ptr> sinks;
    auto console = std::make_shared<spdlog::sinks::stderr_color_sink_mt>(
        ::isatty(STDERR_FILENO) ? spdlog::color_mode::automatic : spdlog::color_mode::never);
    sinks.push_back(console);
    if (!file.empty()) sinks.push_back(std::make_shared<spdlog::sinks::basic_file_sink_mt>(file));
    auto logger = std::make_shared<spdlog::logger>("spinward", sinks.begin(), sinks.end());
    auto parsed = spdlog::level::from_str(level);
    if (parsed == spdlog::level::off && level != "off") {
      return Status::Fail("log level '" + level + "': use trace, debug, info, warn or error");
    }
    logger->set_level(parsed);
    logger->set_pattern("%Y-%m-%dT%H:%M:%S.%eZ %^%l%$ %v", spdlog::pattern_time_type::utc);
    logger->flush_on(spdlog::level::warn);
    spdlog::set_default_logger(logger);
  } catch (const spdlog::spdlog_ex& e) {
    return Status::Fail(std::string("logging: ") + e.what());
  }
  return Status::Ok();
}

void LogLine(const std::string& level, const std::string& message) {
  if (level == "error") {
    spdlog::error("{}", message);
  } else if (level == "warn") {
    spdlog::warn("{}", message);
  } else if (level == "debug") {
    spdlog::debug("{}", message);
  } else {
    spdlog::info("{}", message);
  }
}

}  // namespace spinward::daemon
