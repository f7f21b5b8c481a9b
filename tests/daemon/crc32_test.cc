#include "spinward/daemon/crc32.h"

#include <gtest/gtest.h>

#include <cstdint>
#include <fstream>
#include <random>
#include <string>
#include <string_view>
#include <vector>

#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

std::span<const std::uint8_t> Bytes(std::string_view text) {
  return {reinterpret_cast<const std::uint8_t*>(text.data()), text.size()};
}

// zlib.crc32 of a file's bytes, from Debian's Python (an independent implementation: zlib's C
// code).
std::uint32_t ZlibCrc32(const std::vector<std::uint8_t>& data, const std::string& name) {
  const auto dir = testing::FreshTempDir("crc32");
  const auto path = dir / (name + ".bin");
  std::ofstream(path, std::ios::binary)
      .write(reinterpret_cast<const char*>(data.data()), static_cast<std::streamsize>(data.size()));
  const auto result = testing::RunCommand(
      testing::ReferencePython() + " " +
      (testing::SourceDir() / "tests" / "reference" / "frame_reference.py").string() + " crc32 " +
      path.string());
  EXPECT_EQ(result.exit_code, 0) << result.error_output;
  return static_cast<std::uint32_t>(std::stoul(result.output));
}

TEST(Crc32, CatalogueCheckValue) {
  // CRC-32/ISO-HDLC (the zlib / IEEE 802.3 CRC) check value over "123456789": 0xCBF43926, from
  // Greg Cook's "Catalogue of parametrised CRC algorithms" (and Ross Williams' CRC guide).
  EXPECT_EQ(Crc32(Bytes("123456789")), 0xCBF43926u);
}

TEST(Crc32, EmptyInputIsZero) {
  // init 0xFFFFFFFF then xorout 0xFFFFFFFF with no bytes in between gives 0 (zlib.crc32(b"") == 0).
  EXPECT_EQ(Crc32({}), 0u);
}

TEST(Crc32, PangramValue) {
  // CRC-32 of "The quick brown fox jumps over the lazy dog" is 0x414FA339: a widely quoted test
  // vector, from memory (zlib.crc32 of the same string gives it too).
  EXPECT_EQ(Crc32(Bytes("The quick brown fox jumps over the lazy dog")), 0x414FA339u);
}

TEST(Crc32, MatchesZlibOnRandomData) {
  std::mt19937 rng(20260314);
  std::uniform_int_distribution<int> byte(0, 255);
  for (std::size_t size : {1u, 3u, 255u, 1000u, 65537u}) {
    std::vector<std::uint8_t> data(size);
    for (auto& b : data) b = static_cast<std::uint8_t>(byte(rng));
    EXPECT_EQ(Crc32(data), ZlibCrc32(data, "random" + std::to_string(size))) << "size " << size;
  }
}

TEST(Crc32, ChainingEqualsOneShot) {
  // zlib's convention: crc32(crc32(0, a), b) == crc32(0, a + b). Checked at every split point.
  std::mt19937 rng(7);
  std::vector<std::uint8_t> data(97);
  for (auto& b : data) b = static_cast<std::uint8_t>(rng());
  const std::uint32_t whole = ZlibCrc32(data, "chain");
  for (std::size_t split = 0; split <= data.size(); ++split) {
    const std::span<const std::uint8_t> all(data);
    EXPECT_EQ(Crc32(all.subspan(split), Crc32(all.first(split))), whole) << "split " << split;
  }
}

}  // namespace
}  // namespace spinward::daemon
