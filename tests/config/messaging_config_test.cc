// The health: and messaging: sections of a site file: defaults as written in site_config.h, values
// taken as written, and each mistake reported at its key with the file:line:column place an editor
// shows (lines and columns counted by hand from the texts below, 1-based).
#include <gtest/gtest.h>

#include <string>

#include "spinward/config/site_loader.h"

namespace spinward::config {
namespace {

// A valid site without health or messaging; each test appends its sections (from line 17 on).
constexpr const char* kBase = R"(site:
  name: Larkfield booster pump station
machines:
  - {id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480}
profiles:
  - {id: standard, segment: 1280, overlap: 50%, interval_s: 0.425}
points:
  - id: P101-DE-H
    machine: P-101
    sensor: LK-P101-DE-H
    sample_rate_hz: 25600
    profile: standard
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, units: mm/s}
listeners:
  - {type: tcp, address: 127.0.0.1, port: 0}
)";

LoadedSite Load(const std::string& extra) { return ParseSiteText(kBase + extra, "site.yaml"); }

std::string AllProblems(const LoadedSite& loaded) {
  std::string text;
  for (const auto& problem : loaded.problems) text += problem.ToString() + "\n";
  return text;
}

TEST(MessagingConfig, AbsentSectionsKeepTheDefaults) {
  LoadedSite loaded = Load("");
  ASSERT_TRUE(loaded.ok()) << AllProblems(loaded);
  EXPECT_TRUE(loaded.site.health.enabled);
  EXPECT_EQ(loaded.site.health.address, "127.0.0.1");  // loopback: the endpoint has no login
  EXPECT_EQ(loaded.site.health.port, 7480);
  EXPECT_FALSE(loaded.site.messaging.has_value());
}

TEST(MessagingConfig, EveryKeyIsTakenAsWritten) {
  LoadedSite loaded = Load(R"yaml(health: {enabled: true, address: "::1", port: 0}
messaging:
  host: broker.larkfield.example
  port: 8883
  client_id: larkfield-spinward
  protocol: "5"
  topic_prefix: water/larkfield
  keepalive_s: 45
  username: spinward
  password_file: /etc/spinward/mqtt-password
  tls: {ca_file: /etc/spinward/ca.pem, cert_file: /etc/spinward/client.pem, key_file: /etc/spinward/client.key}
  reconnect_min_s: 2
  reconnect_max_s: 120
  sent_retention_h: 168
  band_values: {every_intervals: 5, qos: 1}
  command_hook:
    program: /usr/local/bin/larkfield-sms
    args: [--to, duty-engineer, "$(not a shell)"]
    timeout_s: 15
)yaml");
  ASSERT_TRUE(loaded.ok()) << AllProblems(loaded);
  EXPECT_EQ(loaded.site.health.address, "::1");
  EXPECT_EQ(loaded.site.health.port, 0);
  ASSERT_TRUE(loaded.site.messaging.has_value());
  const MessagingConfig& m = *loaded.site.messaging;
  EXPECT_EQ(m.host, "broker.larkfield.example");
  EXPECT_EQ(m.port, 8883);
  EXPECT_EQ(m.client_id, "larkfield-spinward");
  EXPECT_EQ(m.protocol, MqttProtocol::kV5);
  EXPECT_EQ(m.topic_prefix, "water/larkfield");
  EXPECT_EQ(m.keepalive_s, 45);
  EXPECT_EQ(m.username, "spinward");
  EXPECT_EQ(m.password_file, "/etc/spinward/mqtt-password");
  ASSERT_TRUE(m.tls.has_value());
  EXPECT_EQ(m.tls->ca_file, "/etc/spinward/ca.pem");
  EXPECT_EQ(m.tls->cert_file, "/etc/spinward/client.pem");
  EXPECT_EQ(m.tls->key_file, "/etc/spinward/client.key");
  EXPECT_EQ(m.reconnect_min_s, 2.0);
  EXPECT_EQ(m.reconnect_max_s, 120.0);
  EXPECT_EQ(m.sent_retention_h, 168.0);
  EXPECT_TRUE(m.band_values.enabled);  // the section given turns it on
  EXPECT_EQ(m.band_values.every_intervals, 5);
  EXPECT_EQ(m.band_values.qos, 1);
  ASSERT_TRUE(m.command_hook.has_value());
  EXPECT_EQ(m.command_hook->program, "/usr/local/bin/larkfield-sms");
  ASSERT_EQ(m.command_hook->args.size(), 3u);
  EXPECT_EQ(m.command_hook->args[2], "$(not a shell)");
  EXPECT_EQ(m.command_hook->timeout_s, 15.0);
}

TEST(MessagingConfig, MessagingDefaults) {
  LoadedSite loaded = Load("messaging: {host: 127.0.0.1}\n");
  ASSERT_TRUE(loaded.ok()) << AllProblems(loaded);
  const MessagingConfig& m = *loaded.site.messaging;
  EXPECT_EQ(m.port, 1883);  // IANA's registered port for MQTT without TLS
  EXPECT_EQ(m.protocol, MqttProtocol::kV311);
  EXPECT_EQ(m.topic_prefix, "spinward");
  EXPECT_FALSE(m.tls.has_value());
  EXPECT_FALSE(m.band_values.enabled);
  EXPECT_FALSE(m.command_hook.has_value());
  EXPECT_EQ(m.sent_retention_h, 72.0);  // three days of delivery record: our choice, no source
}

struct BadCase {
  const char* text;  // appended to kBase: line 17 is its first line
  int line;
  int column;
  const char* key;
  const char* problem_part;
};

const BadCase kBadCases[] = {
    {"messaging: {port: 1883}\n", 17, 12, "messaging.host", "missing"},
    {"messaging:\n  host: b\n  passwrd_file: /x\n", 19, 3, "messaging.passwrd_file",
     "did you mean 'password_file'?"},
    // A password in the site file is refused: it belongs in password_file.
    {"messaging:\n  host: b\n  password: secret\n", 19, 3, "messaging.password", "unknown key"},
    {"messaging:\n  host: b\n  password_file: /x\n", 19, 18, "messaging.password_file",
     "needs a username"},
    {"messaging:\n  host: b\n  protocol: \"3.1\"\n", 19, 13, "messaging.protocol", "3.1.1"},
    {"messaging:\n  host: b\n  port: 70000\n", 19, 9, "messaging.port", "out of range"},
    {"messaging:\n  host: b\n  topic_prefix: plant/#\n", 19, 17, "messaging.topic_prefix", "'#'"},
    {"messaging:\n  host: b\n  keepalive_s: 2\n", 19, 16, "messaging.keepalive_s", "5 to 65535"},
    {"messaging:\n  host: b\n  reconnect_min_s: 30\n  reconnect_max_s: 10\n", 20, 20,
     "messaging.reconnect_max_s", "at least reconnect_min_s"},
    {"messaging:\n  host: b\n  sent_retention_h: 0\n", 19, 21, "messaging.sent_retention_h",
     "above 0"},
    {"messaging:\n  host: b\n  sent_retention_h: -24\n", 19, 21, "messaging.sent_retention_h",
     "above 0"},
    {"messaging:\n  host: b\n  sent_retention_h: a week\n", 19, 21, "messaging.sent_retention_h",
     ""},
    {"messaging:\n  host: b\n  sent_retention: 24\n", 19, 3, "messaging.sent_retention",
     "did you mean 'sent_retention_h'?"},
    {"messaging:\n  host: b\n  tls: {cert_file: /c.pem}\n", 19, 8, "messaging.tls.ca_file",
     "missing"},
    {"messaging:\n  host: b\n  tls: {ca_file: /ca.pem, cert_file: /c.pem}\n", 19, 8,
     "messaging.tls.key_file", "go together"},
    {"messaging:\n  host: b\n  band_values: {qos: 2}\n", 19, 22, "messaging.band_values.qos",
     "0 or 1"},
    {"messaging:\n  host: b\n  command_hook: {program: sms-gateway}\n", 19, 27,
     "messaging.command_hook.program", "absolute path"},
    {"messaging:\n  host: b\n  command_hook: {program: /bin/true, timeout_s: 0}\n", 19, 49,
     "messaging.command_hook.timeout_s", "above 0"},
    {"health: {adress: 0.0.0.0}\n", 17, 10, "health.adress", "did you mean 'address'?"},
    {"health: {address: localhost}\n", 17, 19, "health.address", "not a numeric"},
    {"health: {enabled: yes}\n", 17, 19, "health.enabled", ""},
};

TEST(MessagingConfig, EachMistakeIsReportedAtItsPlace) {
  for (const auto& c : kBadCases) {
    SCOPED_TRACE(c.text);
    LoadedSite loaded = Load(c.text);
    ASSERT_FALSE(loaded.ok());
    bool found = false;
    for (const auto& p : loaded.problems) {
      if (p.key != c.key) continue;
      found = true;
      EXPECT_EQ(p.line, c.line) << p.ToString();
      EXPECT_EQ(p.column, c.column) << p.ToString();
      EXPECT_NE(p.problem.find(c.problem_part), std::string::npos) << p.ToString();
      EXPECT_NE(p.ToString().find("site.yaml:" + std::to_string(c.line) + ":"), std::string::npos);
    }
    EXPECT_TRUE(found) << AllProblems(loaded);
  }
}

}  // namespace
}  // namespace spinward::config
