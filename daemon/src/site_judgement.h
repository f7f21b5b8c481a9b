// Turns a loaded site's plain config structs into the daemon's judging and storage options: each
// point's alarm rules and sensor-check thresholds (PointJudgement, for the alarm stage) and the
// trend store's options. config/ knows nothing of the daemon, so the mapping lives here: the ISO
// 10816-3 preset is resolved to limits from the machine's group and support (iso_presets.h), the
// unit of each rule is the band's unit (the sample unit for the overall indicators, none for
// crest factor and kurtosis), and every rule and threshold passes its own Validate before it is
// returned. The site should have loaded without problems; a check the loader cannot make (a low
// limit against a preset's alert) still comes back as an error naming the point and measure.
// Thread-safety: pure functions.
#pragma once

#include <string>
#include <vector>

#include "spinward/config/site_config.h"
#include "spinward/daemon/alarm_stage.h"
#include "spinward/estimators/result.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {

Result<std::vector<PointJudgement>> JudgementsFromSite(const config::SiteConfig& site);

// A learned baseline (storage/baseline_store.h) as the judgement uses it.
struct LearnedBaseline {
  std::string point;
  std::string measure;
  double median = 0.0;
  double alert = 0.0;
  double danger = 0.0;
};
// As above, with learned baselines: an ISO 10816-3 alarm with a `baseline:` takes the learned
// median of its measure as the baseline instead of the configured value; a measure without a
// configured alarm gets one at the learned alert and danger limits (other settings at their
// defaults). Baselines of points or measures the site no longer has are ignored.
Result<std::vector<PointJudgement>> JudgementsFromSite(const config::SiteConfig& site,
                                                       const std::vector<LearnedBaseline>& learned);
// The learned baselines in the database at `path` (none when it holds no baselines table yet).
Result<std::vector<LearnedBaseline>> ReadLearnedBaselines(const std::string& path);

storage::StoreOptions StoreOptionsFromSite(const config::SiteConfig& site);

}  // namespace spinward::daemon
