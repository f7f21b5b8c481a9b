// What changed between two loaded sites, for a reload on SIGHUP: which points keep running as they
// are, which must be rebuilt, which start and which stop, and which site-wide parts changed.
// A point counts as changed when anything its pipeline uses differs: its own keys, its bands, its
// alarm limit sets and sensor checks, its profile's settings or its machine's settings (the
// machine feeds the ISO preset's limits). Storage counts as changed when any of its keys does.
// Thread-safety: pure function.
#pragma once

#include <string>
#include <vector>

#include "spinward/config/site_config.h"

namespace spinward::config {

struct SiteDiff {
  // Point ids, each in the order of the site it comes from (removed: the old one).
  std::vector<std::string> unchanged;
  std::vector<std::string> changed;
  std::vector<std::string> added;
  std::vector<std::string> removed;
  bool site_changed = false;  // the site's name
  bool listeners_changed = false;
  bool drop_directory_changed = false;
  bool storage_changed = false;
  bool logging_changed = false;
  bool outlets_changed = false;  // health or messaging: taken at the next start

  bool empty() const {
    return changed.empty() && added.empty() && removed.empty() && !site_changed &&
           !listeners_changed && !drop_directory_changed && !storage_changed && !logging_changed &&
           !outlets_changed;
  }
};

SiteDiff DiffSites(const SiteConfig& before, const SiteConfig& after);

}  // namespace spinward::config
