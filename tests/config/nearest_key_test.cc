// The "did you mean" hint: Levenshtein distance and the nearest known key, alone and as the
// loader reports it.
#include "spinward/config/nearest_key.h"

#include <gtest/gtest.h>

#include <array>
#include <string_view>

#include "spinward/config/site_loader.h"

namespace spinward::config {
namespace {

TEST(NearestKey, EditDistanceKnownPairs) {
  // kitten -> sitting: 3 (the classic example: two substitutions and one insertion).
  EXPECT_EQ(EditDistance("kitten", "sitting"), 3u);
  EXPECT_EQ(EditDistance("sitting", "kitten"), 3u);  // symmetric by definition
  EXPECT_EQ(EditDistance("", "abc"), 3u);            // three insertions
  EXPECT_EQ(EditDistance("flaw", "lawn"), 2u);       // delete f, insert n
  EXPECT_EQ(EditDistance("segment", "segment"), 0u);
}

TEST(NearestKey, SuggestsCloseKeysOnly) {
  constexpr std::array<std::string_view, 4> kKeys{"segment", "overlap", "fft_length", "window"};
  EXPECT_EQ(NearestKey("segmnt", kKeys), "segment");      // one deletion
  EXPECT_EQ(NearestKey("overlpa", kKeys), "overlap");     // a swap is two edits; 7 / 3 allows 2
  EXPECT_EQ(NearestKey("fft_len", kKeys), "fft_length");  // three insertions; 10 / 3 allows 3
  EXPECT_EQ(NearestKey("colour", kKeys), std::nullopt);   // nothing close: no guess
  EXPECT_EQ(NearestKey("segment", kKeys), std::nullopt);  // a known key needs no hint
}

TEST(NearestKey, LoaderSuggestsInUnknownKeyProblem) {
  const char* text = R"(site: {name: x}
machines: [{id: M, speed_rpm: 1500}]
profiles: [{id: p}]
points:
  - {id: A, machine: M, sensor: S, sample_rate: 25600, profile: p}
listeners: [{port: 0}]
)";
  LoadedSite loaded = ParseSiteText(text, "t.yaml");
  bool found = false;
  for (const auto& problem : loaded.problems) {
    if (problem.key == "points[0].sample_rate") {
      found = true;
      EXPECT_EQ(problem.problem, "unknown key; did you mean 'sample_rate_hz'?");
      EXPECT_EQ(problem.line, 5);
      EXPECT_EQ(problem.column, 36);  // "  - {id: A, machine: M, sensor: S, " is 35 characters
    }
  }
  EXPECT_TRUE(found);
}

}  // namespace
}  // namespace spinward::config
