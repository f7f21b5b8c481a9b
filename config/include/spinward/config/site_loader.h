// Loads a site YAML file into a SiteConfig and checks it, collecting every problem rather than
// stopping at the first: unknown keys (with the nearest known key), wrong types, missing required
// keys, duplicate ids and sensor ids, option values the estimators reject, bands above Nyquist,
// references to unknown machines, profiles and points, bad addresses and ports, and YAML syntax
// errors. Nothing is clamped or corrected: a value the loader cannot take as written is a problem.
// yaml-cpp stays inside config/: none of its types or exceptions leave these functions.
// Thread-safety: pure functions of their input; safe to call from any thread.
#pragma once

#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/config/config_problem.h"
#include "spinward/config/site_config.h"

namespace spinward::config {

struct LoadedSite {
  SiteConfig site;                      // filled as far as the file allowed; trust it only if ok()
  std::vector<ConfigProblem> problems;  // in file order (line, then column)

  bool ok() const { return problems.empty(); }
};

// Reads the file; an unreadable file is one problem with line 0.
LoadedSite LoadSiteFile(const std::filesystem::path& path);
// display_name is the `file` of every problem, e.g. the path the text came from.
LoadedSite ParseSiteText(std::string_view text, std::string display_name);

}  // namespace spinward::config
