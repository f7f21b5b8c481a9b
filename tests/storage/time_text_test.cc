// Command-line times. Epoch seconds from Python's datetime (Debian's /usr/bin/python3):
// datetime(2026,3,2,10,tzinfo=utc).timestamp() = 1772445600, datetime(2026,3,2) = 1772409600,
// datetime(2024,2,29,23,59,59) = 1709251199 (a leap day), datetime(1969,12,31,23) = -3600.
#include "spinward/storage/time_text.h"

#include <gtest/gtest.h>

namespace spinward::storage {
namespace {

constexpr std::int64_t kS = 1000000000LL;

TEST(TimeText, ParsesIsoUtcForms) {
  EXPECT_EQ(*ParseTimeArgument("2026-03-02T10:00:00Z", 0), 1772445600LL * kS);
  EXPECT_EQ(*ParseTimeArgument("2026-03-02T10:00Z", 0), 1772445600LL * kS);
  EXPECT_EQ(*ParseTimeArgument("2026-03-02", 0), 1772409600LL * kS);
  EXPECT_EQ(*ParseTimeArgument("2024-02-29T23:59:59Z", 0), 1709251199LL * kS);
  EXPECT_EQ(*ParseTimeArgument("1969-12-31T23:00:00Z", 0), -3600LL * kS);
  EXPECT_EQ(*ParseTimeArgument("2026-03-02T10:00:00.25Z", 0), 1772445600LL * kS + kS / 4);
}

TEST(TimeText, ParsesRelativeToNow) {
  const std::int64_t now = 1772445600LL * kS;
  EXPECT_EQ(*ParseTimeArgument("24h", now), now - 86400LL * kS);
  EXPECT_EQ(*ParseTimeArgument("7d", now), now - 7 * 86400LL * kS);
  EXPECT_EQ(*ParseTimeArgument("2w", now), now - 14 * 86400LL * kS);
  EXPECT_EQ(*ParseTimeArgument("30m", now), now - 1800LL * kS);
  EXPECT_EQ(*ParseTimeArgument("90s", now), now - 90LL * kS);
  EXPECT_EQ(*ParseTimeArgument("now", now), now);
}

TEST(TimeText, RejectsWithTheTextNamed) {
  for (const char* bad : {"", "yesterday", "24", "h", "2026-02-30", "2026-03-02T25:00Z", "2026-3-2",
                          "2026-03-02T10:00:00+01:00", "-5h"}) {
    auto parsed = ParseTimeArgument(bad, 0);
    ASSERT_FALSE(parsed.ok()) << bad;
    EXPECT_NE(parsed.message().find(std::string("'") + bad + "'"), std::string::npos)
        << parsed.message();
  }
}

TEST(TimeText, FormatsIsoUtc) {
  EXPECT_EQ(FormatIsoUtc(1772445600LL * kS), "2026-03-02T10:00:00Z");
  EXPECT_EQ(FormatIsoUtc(1709251199LL * kS), "2024-02-29T23:59:59Z");
  EXPECT_EQ(FormatIsoUtc(-3600LL * kS), "1969-12-31T23:00:00Z");
  EXPECT_EQ(FormatIsoUtc(1772445600LL * kS + kS / 4), "2026-03-02T10:00:00.250Z");
}

}  // namespace
}  // namespace spinward::storage
