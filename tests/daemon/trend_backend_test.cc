// "Restart keeps alarm state and latches": TrendBackend over a real TrendStore/TrendWriter in a
// temp directory. A latched danger alarm survives a stop and reopen; after the restart a normal
// value does not clear the latch and a further high value raises no second event (a duplicate would
// page people twice). An operator's `spinward ack` through the real binary, entered while the
// backend is open, is applied by Tick and releases the latch. Limits: ISO 10816-3 group 2 flexible
// zone boundaries B/C 4.5 and C/D 7.1 mm/s (REFERENCE_VALUES.md, as transcribed from Annex A);
// latching with acknowledgement is alarm-management practice (ISA-18.2, REFERENCE_VALUES.md).
#include "../../daemon/src/trend_backend.h"  // private to daemon/

#include <gtest/gtest.h>

#include <string>

#include "spinward/config/site_loader.h"
#include "spinward/storage/trend_store.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;

constexpr std::int64_t kSecond = 1'000'000'000;
constexpr std::int64_t kT0 = 1'780'000'000 * kSecond;

config::SiteConfig Site(const fs::path& db) {
  const std::string text = R"(site:
  name: Larkfield booster pump station (restart test)
machines:
  - {id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480}
profiles:
  - {id: standard, segment: 1280, overlap: 50%, interval_s: 0.425}
points:
  - id: P101-DE-H
    machine: P-101
    location: drive-end bearing
    sensor: LK-P101-DE-H
    sensitivity: 100 mV/g
    sample_rate_hz: 25600
    profile: standard
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, units: mm/s}
    alarms:
      - {measure: velocity, alert: 4.5, danger: 7.1, latching: true}
    sensor_checks: {full_scale: 50}
listeners:
  - {type: tcp, address: 127.0.0.1, port: 0}
storage:
  path: ")" + db.string() + R"("
)";
  auto loaded = config::ParseSiteText(text, "restart-site.yaml");
  EXPECT_TRUE(loaded.ok()) << (loaded.problems.empty() ? "" : loaded.problems[0].ToString());
  return loaded.site;
}

storage::MeasurementRecord Record(int index, double velocity) {
  storage::MeasurementRecord r;
  r.point_id = "P101-DE-H";
  r.interval_start_ns = kT0 + index * kSecond;
  r.interval_end_ns = r.interval_start_ns + kSecond;
  r.segment_count = 17;
  r.sample_unit = "g";
  r.indicators.count = 10880;
  r.indicators.rms = 0.3;
  r.indicators.min = -1.0;
  r.indicators.max = 1.0;
  r.indicators.peak = 1.0;
  r.indicators.peak_to_peak = 2.0;
  r.indicators.crest_factor = 3.3;
  r.indicators.kurtosis = 3.0;
  r.longest_identical_run = 2;
  r.bands.push_back({"velocity", "mm/s", 10.0, 1000.0, velocity});
  return r;
}

std::unique_ptr<TrendBackend> OpenBackend(const config::SiteConfig& site) {
  auto backend = TrendBackend::Open(site, {});
  EXPECT_TRUE(backend.ok()) << backend.message();
  return backend.ok() ? std::move(backend).value() : nullptr;
}

// Events stored for the point's velocity, from the database itself.
std::vector<storage::AlarmEventRecord> StoredEvents(const fs::path& db) {
  auto store = storage::TrendStore::OpenReadOnly(db.string());
  EXPECT_TRUE(store.ok()) << store.message();
  if (!store.ok()) return {};
  auto events = store->Alarms(INT64_MIN, /*open_only=*/false);
  EXPECT_TRUE(events.ok()) << events.message();
  std::vector<storage::AlarmEventRecord> out;
  if (events.ok())
    for (auto& e : *events)
      if (e.measure == "velocity") out.push_back(e);
  return out;
}

storage::AlarmStateRecord StoredState(const fs::path& db) {
  auto store = storage::TrendStore::OpenReadOnly(db.string());
  EXPECT_TRUE(store.ok()) << store.message();
  if (!store.ok()) return {};
  auto states = store->LoadAlarmStates();
  EXPECT_TRUE(states.ok()) << states.message();
  if (states.ok())
    for (auto& s : *states)
      if (s.measure == "velocity") return s;
  ADD_FAILURE() << "no stored state for velocity";
  return {};
}

TEST(TrendBackend, RestartKeepsAlarmStateAndLatches) {
  const fs::path dir = spinward::testing::FreshTempDir("trend-backend-restart");
  const fs::path db = dir / "trends.sqlite";
  const auto site = Site(db);
  {
    auto backend = OpenBackend(site);
    ASSERT_TRUE(backend);
    backend->Sink()->Consume(Record(0, 2.0));
    backend->Sink()->Consume(Record(1, 8.0));  // above C/D 7.1: danger, latched
    backend->Stop();
  }
  ASSERT_EQ(StoredEvents(db).size(), 1u);
  EXPECT_EQ(StoredEvents(db)[0].to_state, "danger");
  {
    const auto state = StoredState(db);
    EXPECT_EQ(state.state, "danger");
    EXPECT_TRUE(state.latched);
  }

  // Restart: the latch is restored, a normal value does not clear it, a high one raises nothing.
  {
    auto backend = OpenBackend(site);
    ASSERT_TRUE(backend);
    backend->Sink()->Consume(Record(2, 1.0));
    backend->Sink()->Consume(Record(3, 9.0));
    backend->Sink()->Consume(Record(4, 1.0));
    backend->Stop();
  }
  EXPECT_EQ(StoredEvents(db).size(), 1u) << "the restored alarm was raised again";
  {
    const auto state = StoredState(db);
    EXPECT_EQ(state.state, "danger");
    EXPECT_TRUE(state.latched);
  }

  // Acknowledged with the real CLI while a backend is open; Tick applies it.
  {
    auto backend = OpenBackend(site);
    ASSERT_TRUE(backend);
    const auto ack = spinward::testing::RunCommand(spinward::testing::SpinwardBinary().string() +
                                                   " ack P101-DE-H --db " + db.string() +
                                                   " --by R.Okafor --note 'bearing checked'");
    ASSERT_EQ(ack.exit_code, 0) << ack.output << ack.error_output;
    backend->Sink()->Consume(Record(5, 1.0));  // still latched before the acknowledgement
    backend->Tick(kT0 + 7 * kSecond);
    backend->Sink()->Consume(Record(7, 1.0));
    backend->Stop();
  }
  const auto state = StoredState(db);
  EXPECT_EQ(state.state, "normal");
  EXPECT_FALSE(state.latched);
  const auto events = StoredEvents(db);
  ASSERT_EQ(events.size(), 2u);
  EXPECT_EQ(events[1].from_state, "danger");
  EXPECT_EQ(events[1].to_state, "normal");
}

}  // namespace
}  // namespace spinward::daemon
