#include "spinward/daemon/frame_codec.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <fstream>
#include <limits>
#include <map>
#include <optional>
#include <random>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

using Bytes = std::vector<std::uint8_t>;

Bytes ReadFile(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  EXPECT_TRUE(in.good()) << path;
  return Bytes(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

std::string ReadText(const std::filesystem::path& path) {
  std::ifstream in(path);
  EXPECT_TRUE(in.good()) << path;
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

void WriteFile(const std::filesystem::path& path, const Bytes& data) {
  std::ofstream(path, std::ios::binary)
      .write(reinterpret_cast<const char*>(data.data()), static_cast<std::streamsize>(data.size()));
}

Bytes ParseHex(const std::string& text) {
  Bytes out;
  std::istringstream in(text);
  std::string token;
  while (in >> token) out.push_back(static_cast<std::uint8_t>(std::stoul(token, nullptr, 16)));
  return out;
}

std::filesystem::path FramesDir() { return testing::TestDataDir() / "frames"; }

std::string Reference() {
  return testing::ReferencePython() + " " +
         (testing::SourceDir() / "tests" / "reference" / "frame_reference.py").string();
}

// key=value lines printed by frame_reference.py decode.
std::map<std::string, std::string> ParseKeyValues(const std::string& text) {
  std::map<std::string, std::string> out;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    const auto eq = line.find('=');
    if (eq != std::string::npos) out[line.substr(0, eq)] = line.substr(eq + 1);
  }
  return out;
}

std::vector<double> ParseDoubles(const std::string& text) {
  std::vector<double> out;
  std::istringstream in(text);
  std::string token;
  while (in >> token) out.push_back(std::strtod(token.c_str(), nullptr));
  return out;
}

// The worked example of docs/protocol.md, field by field as the doc states them.
FrameMetadata DocExampleMetadata() {
  FrameMetadata m;
  m.sensor_id = "LK-P101-DE-H";
  m.sample_rate_hz = 25600.0;
  m.first_sample_utc_ns = 1773469800LL * 1000000000LL;  // 2026-03-14T06:30:00Z
  m.sequence = 41;
  m.scale = 10.0 / 32768.0;  // 16-bit ADC spanning +-10 V
  m.scale_unit = ScaleUnit::kVolts;
  return m;
}
const std::vector<std::int16_t> kDocExampleSamples = {0, 1000, -1000, 32767, -32768, 12, -12, 256};

TEST(FrameCodec, DecodesTheDocExampleFixture) {
  const Bytes bytes = ParseHex(ReadText(FramesDir() / "doc_example_int16.hex"));
  ASSERT_EQ(bytes.size(), 82u);  // docs/protocol.md: 50 + 12 + 8 * 2 + 4
  const FrameResult result = DecodeFrame(bytes);
  ASSERT_TRUE(result.ok()) << result.error().message;
  const Frame& f = result.value();
  EXPECT_EQ(f.metadata.sensor_id, "LK-P101-DE-H");
  EXPECT_EQ(f.metadata.sample_rate_hz, 25600.0);
  EXPECT_EQ(f.metadata.first_sample_utc_ns, 1773469800000000000LL);
  EXPECT_EQ(f.metadata.sequence, 41u);
  EXPECT_EQ(f.metadata.scale, 0.00030517578125);
  EXPECT_EQ(f.metadata.scale_unit, ScaleUnit::kVolts);
  EXPECT_EQ(f.format, SampleFormat::kInt16);
  // Volts as the doc's table lists them: count * 10 / 32768, exact in binary64.
  EXPECT_THAT(f.samples,
              ::testing::ElementsAre(0.0, 0.30517578125, -0.30517578125, 9.999694824218750, -10.0,
                                     0.003662109375, -0.003662109375, 0.078125));
}

TEST(FrameCodec, DecodesIntoTheCallersStorageReusingItsMemory) {
  // The doc example again, decoded into a recycled buffer that still holds another frame's
  // samples: the result is exactly the doc's table and lives in the buffer's memory.
  const Bytes bytes = ParseHex(ReadText(FramesDir() / "doc_example_int16.hex"));
  std::vector<double> storage(100, std::numeric_limits<double>::quiet_NaN());
  const double* memory = storage.data();
  const FrameResult result = DecodeFrame(bytes, DecodeLimits{}, std::move(storage));
  ASSERT_TRUE(result.ok()) << result.error().message;
  EXPECT_THAT(result.value().samples,
              ::testing::ElementsAre(0.0, 0.30517578125, -0.30517578125, 9.999694824218750, -10.0,
                                     0.003662109375, -0.003662109375, 0.078125));
  EXPECT_EQ(result.value().samples.data(), memory);
}

TEST(FrameCodec, DocHexMatchesFixture) {
  // The hex block in docs/protocol.md and the fixture the tests decode must be the same bytes.
  const std::string doc = ReadText(testing::SourceDir() / "docs" / "protocol.md");
  const std::string begin = "<!-- example-frame:begin -->";
  const std::string end = "<!-- example-frame:end -->";
  const auto b = doc.find(begin);
  const auto e = doc.find(end);
  ASSERT_NE(b, std::string::npos);
  ASSERT_NE(e, std::string::npos);
  std::string block = doc.substr(b + begin.size(), e - b - begin.size());
  std::string hex;
  for (std::istringstream lines(block); std::getline(lines, block);) {
    if (block.rfind("```", 0) == 0) continue;
    hex += block.substr(block.find(' ') + 1) + "\n";  // drop the offset column, "0000:"
  }
  EXPECT_EQ(ParseHex(hex), ParseHex(ReadText(FramesDir() / "doc_example_int16.hex")));
}

TEST(FrameCodec, EncoderWritesTheDocExampleBytes) {
  // The fixture was written by tests/reference/frame_reference.py (struct + zlib), so equal bytes
  // check our byte layout against an outside implementation of the doc.
  const auto encoded = EncodeFrame(DocExampleMetadata(), std::span(kDocExampleSamples));
  ASSERT_TRUE(encoded.ok()) << encoded.message();
  EXPECT_EQ(encoded.value(), ParseHex(ReadText(FramesDir() / "doc_example_int16.hex")));
  EXPECT_EQ(encoded.value(), ReadFile(FramesDir() / "doc_example_int16.bin"));
}

TEST(FrameCodec, FixturesAreWhatTheReferenceWrites) {
  const auto dir = testing::FreshTempDir("frame-fixtures");
  const auto run = testing::RunCommand(Reference() + " fixtures " + dir.string());
  ASSERT_EQ(run.exit_code, 0) << run.error_output;
  for (const auto& entry : std::filesystem::directory_iterator(dir)) {
    const auto committed = FramesDir() / entry.path().filename();
    EXPECT_EQ(ReadFile(entry.path()), ReadFile(committed))
        << committed << " is stale: rerun frame_reference.py fixtures tests/data/frames";
  }
}

TEST(FrameCodec, EveryFixtureGivesItsReason) {
  // The field each reason's message must name, so a log line says what was wrong.
  const std::map<std::string, std::string> kField = {{"truncated", "bytes"},
                                                     {"bad_magic", "magic"},
                                                     {"unsupported_version", "version"},
                                                     {"bad_length", "frame_length"},
                                                     {"oversized", "frame_length"},
                                                     {"bad_crc", "crc32"},
                                                     {"reserved_flags", "flags"},
                                                     {"unknown_sample_format", "sample_format"},
                                                     {"bad_sensor_id", "sensor_id"},
                                                     {"bad_sample_rate", "sample_rate_hz"},
                                                     {"bad_scale", "scale"},
                                                     {"bad_sample_count", "sample_count"},
                                                     {"bad_sample", "samples["}};
  std::istringstream manifest(ReadText(FramesDir() / "MANIFEST"));
  std::string line;
  std::set<std::string> reasons_seen;
  int checked = 0;
  while (std::getline(manifest, line)) {
    if (line.empty() || line[0] == '#') continue;
    std::istringstream fields(line);
    std::string name, expected;
    fields >> name >> expected;
    const FrameResult result = DecodeFrame(ReadFile(FramesDir() / name));
    ++checked;
    if (expected == "ok") {
      EXPECT_TRUE(result.ok()) << name << ": " << result.error().message;
      continue;
    }
    ASSERT_FALSE(result.ok()) << name << " decoded but should fail with " << expected;
    EXPECT_EQ(FrameErrorReasonName(result.error().reason), expected)
        << name << ": " << result.error().message;
    EXPECT_THAT(result.error().message, ::testing::HasSubstr(kField.at(expected))) << name;
    EXPECT_THAT(result.status().message(), ::testing::HasSubstr(expected)) << name;
    reasons_seen.insert(expected);
  }
  EXPECT_EQ(checked, 28);
  EXPECT_EQ(reasons_seen.size(), kFrameErrorReasonCount);  // every reason has a fixture
}

TEST(FrameCodec, RoundTripInt16IsExact) {
  std::mt19937 rng(101);
  std::uniform_int_distribution<int> dist(-32768, 32767);
  std::vector<std::int16_t> raw(4096);
  for (auto& v : raw) v = static_cast<std::int16_t>(dist(rng));
  raw[0] = -32768, raw[1] = 32767;
  FrameMetadata m = DocExampleMetadata();
  m.scale = 1.0 / 3.0;  // not a power of two: the product is still one correctly rounded multiply
  const auto encoded = EncodeFrame(m, std::span(raw));
  ASSERT_TRUE(encoded.ok()) << encoded.message();
  const FrameResult decoded = DecodeFrame(encoded.value());
  ASSERT_TRUE(decoded.ok()) << decoded.error().message;
  ASSERT_EQ(decoded.value().samples.size(), raw.size());
  for (std::size_t i = 0; i < raw.size(); ++i) {
    // IEEE 754: an int16 is exact in binary64, so the decoded value is exactly raw * scale.
    ASSERT_EQ(decoded.value().samples[i], static_cast<double>(raw[i]) * m.scale) << i;
  }
}

TEST(FrameCodec, RoundTripInt32IsExact) {
  std::mt19937 rng(202);
  std::uniform_int_distribution<std::int32_t> dist(std::numeric_limits<std::int32_t>::min(),
                                                   std::numeric_limits<std::int32_t>::max());
  std::vector<std::int32_t> raw(2048);
  for (auto& v : raw) v = dist(rng);
  raw[0] = std::numeric_limits<std::int32_t>::min();
  raw[1] = std::numeric_limits<std::int32_t>::max();
  FrameMetadata m = DocExampleMetadata();
  m.scale = std::ldexp(1.0, -31);  // 24-bit-style ADC scaled to +-1 engineering unit
  m.scale_unit = ScaleUnit::kEngineering;
  const auto encoded = EncodeFrame(m, std::span(raw));
  ASSERT_TRUE(encoded.ok()) << encoded.message();
  const FrameResult decoded = DecodeFrame(encoded.value());
  ASSERT_TRUE(decoded.ok()) << decoded.error().message;
  EXPECT_EQ(decoded.value().metadata.scale_unit, ScaleUnit::kEngineering);
  for (std::size_t i = 0; i < raw.size(); ++i) {
    // A power-of-two scale keeps every int32 exact (31 bits < 53-bit significand): undo it exactly.
    ASSERT_EQ(decoded.value().samples[i] / m.scale, static_cast<double>(raw[i])) << i;
  }
}

TEST(FrameCodec, RoundTripFloat32RoundsOnce) {
  std::mt19937 rng(303);
  std::normal_distribution<double> dist(0.0, 9.81);
  std::vector<double> truth(2048);
  std::vector<float> wire(truth.size());
  for (std::size_t i = 0; i < truth.size(); ++i) {
    truth[i] = dist(rng);
    wire[i] = static_cast<float>(truth[i]);
  }
  FrameMetadata m = DocExampleMetadata();
  m.scale = 1.0;
  m.scale_unit = ScaleUnit::kEngineering;
  const auto encoded = EncodeFrame(m, std::span<const float>(wire));
  ASSERT_TRUE(encoded.ok()) << encoded.message();
  const FrameResult decoded = DecodeFrame(encoded.value());
  ASSERT_TRUE(decoded.ok()) << decoded.error().message;
  for (std::size_t i = 0; i < truth.size(); ++i) {
    // The only loss is the one rounding to binary32: relative error <= 2^-24 (IEEE 754 unit
    // roundoff for round-to-nearest with a 24-bit significand).
    const double got = decoded.value().samples[i];
    ASSERT_EQ(got, static_cast<double>(wire[i])) << i;
    ASSERT_LE(std::abs(got - truth[i]), std::ldexp(std::abs(truth[i]), -24)) << i;
  }
}

TEST(FrameCodec, PythonReferenceDecodesOurFrames) {
  const auto dir = testing::FreshTempDir("frame-ours");
  struct Case {
    std::string name;
    Result<Bytes> bytes;
  };
  FrameMetadata m = DocExampleMetadata();
  m.sensor_id = "LK-F201-NDE-A";
  m.sequence = 0xFFFFFFFFFFFFFFFEull;
  m.first_sample_utc_ns = -5;  // before the epoch: carried as a signed int64
  const std::vector<std::int16_t> i16 = {1, -2, 3, -32768};
  const std::vector<std::int32_t> i32 = {70000, -2147483647 - 1, 5};
  const std::vector<float> f32 = {0.1f, -3.5e-7f, 1.0e30f};
  FrameMetadata eng = m;
  eng.scale = 0.0123;
  eng.scale_unit = ScaleUnit::kEngineering;
  std::vector<Case> cases;
  cases.push_back({"int16", EncodeFrame(m, std::span(i16))});
  cases.push_back({"int32", EncodeFrame(eng, std::span(i32))});
  cases.push_back({"float32", EncodeFrame(eng, std::span(f32))});
  for (const Case& c : cases) {
    ASSERT_TRUE(c.bytes.ok()) << c.bytes.message();
    const auto path = dir / (c.name + ".bin");
    WriteFile(path, c.bytes.value());
    const auto run = testing::RunCommand(Reference() + " decode " + path.string());
    ASSERT_EQ(run.exit_code, 0) << c.name << ": " << run.output << run.error_output;
    const auto kv = ParseKeyValues(run.output);
    const Frame ours = DecodeFrame(c.bytes.value()).value();
    EXPECT_EQ(kv.at("sensor_id"), ours.metadata.sensor_id) << c.name;
    EXPECT_EQ(std::strtod(kv.at("sample_rate_hz").c_str(), nullptr), ours.metadata.sample_rate_hz);
    EXPECT_EQ(std::stoll(kv.at("first_sample_utc_ns")), ours.metadata.first_sample_utc_ns);
    EXPECT_EQ(std::stoull(kv.at("sequence")), ours.metadata.sequence);
    EXPECT_EQ(kv.at("format"), c.name);
    EXPECT_EQ(std::strtod(kv.at("scale").c_str(), nullptr), ours.metadata.scale);
    EXPECT_EQ(kv.at("scale_unit"), ScaleUnitName(ours.metadata.scale_unit));
    // Python's float is binary64 and repr round-trips, so the samples must agree bit for bit.
    EXPECT_EQ(ParseDoubles(kv.at("samples")), ours.samples) << c.name;
  }
}

TEST(FrameCodec, DecodesAFrameThePythonReferenceWrote) {
  const auto dir = testing::FreshTempDir("frame-theirs");
  const auto path = dir / "ref.bin";
  const auto run = testing::RunCommand(
      Reference() + " encode " + path.string() +
      " sensor_id=LK-P102-NDE-V rate=51200.0 time_ns=1773469800123456789 sequence=7 fmt=int32"
      " scale=0.25 engineering=1 samples=4,-8,2147483647,0");
  ASSERT_EQ(run.exit_code, 0) << run.error_output;
  const FrameResult result = DecodeFrame(ReadFile(path));
  ASSERT_TRUE(result.ok()) << result.error().message;
  const Frame& f = result.value();
  EXPECT_EQ(f.metadata.sensor_id, "LK-P102-NDE-V");
  EXPECT_EQ(f.metadata.sample_rate_hz, 51200.0);
  EXPECT_EQ(f.metadata.first_sample_utc_ns, 1773469800123456789LL);
  EXPECT_EQ(f.metadata.sequence, 7u);
  EXPECT_EQ(f.format, SampleFormat::kInt32);
  EXPECT_EQ(f.metadata.scale_unit, ScaleUnit::kEngineering);
  EXPECT_THAT(f.samples, ::testing::ElementsAre(1.0, -2.0, 536870911.75, 0.0));
}

TEST(FrameCodec, EverySingleByteCorruptionIsCaught) {
  // CRC-32 detects every error burst of 32 bits or fewer (Peterson & Brown, "Cyclic Codes for
  // Error Detection", 1961), so any one damaged byte must be rejected; past the 12-byte prefix the
  // CRC is the first check that can see it.
  const Bytes good = ReadFile(FramesDir() / "doc_example_int16.bin");
  for (std::size_t i = 0; i < good.size(); ++i) {
    for (int mask : {0x01, 0x80, 0xFF}) {
      Bytes bad = good;
      bad[i] = static_cast<std::uint8_t>(bad[i] ^ mask);
      const FrameResult result = DecodeFrame(bad);
      ASSERT_FALSE(result.ok()) << "byte " << i << " mask " << mask;
      if (i >= kFramePrefixBytes) {
        EXPECT_EQ(result.error().reason, FrameErrorReason::kBadCrc) << "byte " << i;
      }
    }
  }
}

TEST(FrameCodec, CallerLimitBoundsTheFrameLength) {
  const Bytes good = ReadFile(FramesDir() / "doc_example_int16.bin");  // 82 bytes
  DecodeLimits limits;
  limits.max_frame_bytes = 82;
  EXPECT_TRUE(DecodeFrame(good, limits).ok());
  limits.max_frame_bytes = 81;
  const FrameResult result = DecodeFrame(good, limits);
  ASSERT_FALSE(result.ok());
  EXPECT_EQ(result.error().reason, FrameErrorReason::kOversized);
  EXPECT_THAT(result.error().message, ::testing::HasSubstr("82"));
  EXPECT_THAT(result.error().message, ::testing::HasSubstr("81"));
  limits.max_frame_bytes = kMinFrameBytes - 1;
  EXPECT_FALSE(limits.Validate().ok());
}

TEST(FrameCodec, EncoderRejectsWhatTheProtocolForbids) {
  const std::vector<std::int16_t> one = {1};
  auto fails_naming = [&](FrameMetadata m, const std::string& field) {
    const auto r = EncodeFrame(m, std::span(one));
    ASSERT_FALSE(r.ok()) << field;
    EXPECT_THAT(r.message(), ::testing::HasSubstr(field));
  };
  FrameMetadata m = DocExampleMetadata();
  m.sensor_id = "";
  fails_naming(m, "sensor_id");
  m.sensor_id = std::string(65, 'P');
  fails_naming(m, "sensor_id");
  m.sensor_id = "LK\nP101";
  fails_naming(m, "sensor_id");
  m = DocExampleMetadata();
  m.sample_rate_hz = std::nan("");
  fails_naming(m, "sample_rate_hz");
  m.sample_rate_hz = -1.0;
  fails_naming(m, "sample_rate_hz");
  m = DocExampleMetadata();
  m.scale = 0.0;
  fails_naming(m, "scale");
  m.scale = 1e305;  // finite, but 32767 * 1e305 overflows binary64 (max about 1.8e308)
  fails_naming(m, "scale");
  EXPECT_FALSE(EncodeFrame(DocExampleMetadata(), std::span<const std::int16_t>()).ok());
  const std::vector<float> nan_sample = {1.0f, std::numeric_limits<float>::infinity()};
  const auto r = EncodeFrame(DocExampleMetadata(), std::span<const float>(nan_sample));
  ASSERT_FALSE(r.ok());
  EXPECT_THAT(r.message(), ::testing::HasSubstr("samples[1]"));
  // 64 bytes is the largest id the protocol allows.
  m = DocExampleMetadata();
  m.sensor_id = std::string(64, 'P');
  EXPECT_TRUE(EncodeFrame(m, std::span(one)).ok());
}

TEST(SensorId, FollowsRfc3629) {
  // RFC 3629 section 3: UTF-8 excludes surrogates (U+D800..U+DFFF), code points above U+10FFFF and
  // overlong forms (section 10's example: C0 80 for U+0000).
  EXPECT_TRUE(IsValidSensorId("LK-P101-DE-H"));
  EXPECT_TRUE(
      IsValidSensorId("Pumpe-\xc3\xa4-\xe2\x82\xac-\xf0\x9f\x94\xa7"));  // U+00E4, U+20AC, U+1F527
  EXPECT_TRUE(IsValidSensorId(std::string(64, 'x')));
  std::string why;
  EXPECT_FALSE(IsValidSensorId("", &why));
  EXPECT_THAT(why, ::testing::HasSubstr("length 0"));
  EXPECT_FALSE(IsValidSensorId(std::string(65, 'x')));
  EXPECT_FALSE(IsValidSensorId("LK-\xc0\x80", &why));  // overlong U+0000
  EXPECT_THAT(why, ::testing::HasSubstr("bytes 3..4"));
  EXPECT_FALSE(IsValidSensorId("LK-\xe0\x80\xaf"));      // overlong '/'
  EXPECT_FALSE(IsValidSensorId("LK-\xed\xa0\x80"));      // surrogate U+D800
  EXPECT_FALSE(IsValidSensorId("LK-\xf4\x90\x80\x80"));  // U+110000
  EXPECT_FALSE(IsValidSensorId("LK-\xc3", &why));        // cut short at the end
  EXPECT_THAT(why, ::testing::HasSubstr("cut short"));
  EXPECT_FALSE(IsValidSensorId("LK-\x80"));        // stray continuation byte
  EXPECT_FALSE(IsValidSensorId("LK-\x7f", &why));  // DEL is a control character
  EXPECT_THAT(why, ::testing::HasSubstr("0x7F"));
  EXPECT_FALSE(IsValidSensorId(std::string("LK\0P101", 7)));
}

// A stream of frames of every format and several sizes, with each frame's own decoding.
struct Stream {
  Bytes bytes;
  std::vector<Frame> frames;
};

Stream MakeStream(int count) {
  Stream s;
  std::mt19937 rng(404);
  for (int i = 0; i < count; ++i) {
    FrameMetadata m = DocExampleMetadata();
    m.sequence = static_cast<std::uint64_t>(100 + i);
    m.first_sample_utc_ns += i * 10000000LL;
    const std::size_t n = 1 + rng() % 300;
    Result<Bytes> encoded = Error{"unset"};
    if (i % 3 == 0) {
      std::vector<std::int16_t> raw(n);
      for (auto& v : raw) v = static_cast<std::int16_t>(rng());
      encoded = EncodeFrame(m, std::span(raw));
    } else if (i % 3 == 1) {
      std::vector<std::int32_t> raw(n);
      for (auto& v : raw) v = static_cast<std::int32_t>(rng());
      encoded = EncodeFrame(m, std::span(raw));
    } else {
      std::vector<float> raw(n);
      for (auto& v : raw) v = static_cast<float>(rng() % 20001) / 1000.0f - 10.0f;
      encoded = EncodeFrame(m, std::span<const float>(raw));
    }
    EXPECT_TRUE(encoded.ok());
    s.frames.push_back(DecodeFrame(encoded.value()).value());
    s.bytes.insert(s.bytes.end(), encoded.value().begin(), encoded.value().end());
  }
  return s;
}

void ExpectSameFrames(const std::vector<Frame>& got, const std::vector<Frame>& want) {
  ASSERT_EQ(got.size(), want.size());
  for (std::size_t i = 0; i < got.size(); ++i) {
    EXPECT_EQ(got[i].metadata.sequence, want[i].metadata.sequence);
    EXPECT_EQ(got[i].metadata.first_sample_utc_ns, want[i].metadata.first_sample_utc_ns);
    EXPECT_EQ(got[i].format, want[i].format);
    EXPECT_EQ(got[i].samples, want[i].samples) << "frame " << i;
  }
}

TEST(FrameAssembler, AnyChunkingYieldsTheSameFrames) {
  const Stream s = MakeStream(24);
  std::mt19937 rng(505);
  // Max chunk sizes from 1 byte (one byte per read) up to the whole stream in one read.
  for (std::size_t max_chunk :
       {std::size_t{1}, std::size_t{2}, std::size_t{11}, std::size_t{13}, std::size_t{97},
        std::size_t{700}, std::size_t{5000}, s.bytes.size()}) {
    for (int trial = 0; trial < 3; ++trial) {
      FrameAssembler assembler;
      std::vector<Frame> got;
      std::size_t pos = 0;
      while (pos < s.bytes.size()) {
        const std::size_t n = std::min<std::size_t>(1 + rng() % max_chunk, s.bytes.size() - pos);
        const auto error = assembler.Feed(std::span(s.bytes).subspan(pos, n), &got);
        ASSERT_FALSE(error.has_value()) << error->message;
        pos += n;
      }
      ExpectSameFrames(got, s.frames);
      EXPECT_EQ(assembler.buffered_bytes(), 0u);
      EXPECT_EQ(assembler.bytes_consumed(), s.bytes.size());
    }
  }
}

TEST(FrameAssembler, DecodesEachFrameIntoTheSpareStorageItIsGiven) {
  const Stream s = MakeStream(12);
  FrameAssembler assembler;
  std::size_t asked = 0;
  assembler.UseSpareStorage([&asked] {
    ++asked;
    return std::vector<double>(4096, -1.0);  // a used buffer: its old contents must not show
  });
  std::vector<Frame> got;
  const auto error = assembler.Feed(s.bytes, &got);
  ASSERT_FALSE(error.has_value()) << error->message;
  ExpectSameFrames(got, s.frames);
  EXPECT_EQ(asked, s.frames.size());
  for (const auto& frame : got) EXPECT_GE(frame.samples.capacity(), 4096u);
}

TEST(FrameAssembler, HoldsAPartialFrameUntilItCompletes) {
  const Bytes good = ReadFile(FramesDir() / "doc_example_int16.bin");
  FrameAssembler assembler;
  std::vector<Frame> got;
  ASSERT_FALSE(assembler.Feed(std::span(good).first(good.size() - 5), &got).has_value());
  EXPECT_TRUE(got.empty());
  EXPECT_EQ(assembler.buffered_bytes(), good.size() - 5);
  ASSERT_FALSE(assembler.Feed(std::span(good).last(5), &got).has_value());
  ASSERT_EQ(got.size(), 1u);
  EXPECT_EQ(got[0].metadata.sensor_id, "LK-P101-DE-H");
}

TEST(FrameAssembler, RejectsAnOversizedLengthAfterOnlyThePrefix) {
  // Declares 0xFFFFFFF0 bytes; the assembler must refuse it once the 12-byte prefix is in, having
  // buffered no more than the prefix.
  const Bytes oversized = ReadFile(FramesDir() / "oversized_declared.bin");
  DecodeLimits limits;
  limits.max_frame_bytes = 4096;
  FrameAssembler assembler(limits);
  std::vector<Frame> got;
  for (std::size_t i = 0; i < kFramePrefixBytes; ++i) {
    const auto error = assembler.Feed(std::span(oversized).subspan(i, 1), &got);
    if (i + 1 < kFramePrefixBytes) {
      ASSERT_FALSE(error.has_value()) << "byte " << i << ": " << error->message;
      EXPECT_EQ(assembler.buffered_bytes(), i + 1);
    } else {
      ASSERT_TRUE(error.has_value());
      EXPECT_EQ(error->reason, FrameErrorReason::kOversized);
      EXPECT_THAT(error->message, ::testing::HasSubstr("4294967280"));
    }
  }
  EXPECT_TRUE(assembler.failed());
  EXPECT_EQ(assembler.buffered_bytes(), 0u);
  EXPECT_EQ(assembler.bytes_consumed(), kFramePrefixBytes);
  // Failed for good: the next bytes are not read, the same error comes back.
  const auto again = assembler.Feed(std::span(oversized).subspan(kFramePrefixBytes), &got);
  ASSERT_TRUE(again.has_value());
  EXPECT_EQ(again->reason, FrameErrorReason::kOversized);
  EXPECT_EQ(assembler.bytes_consumed(), kFramePrefixBytes);
  EXPECT_TRUE(got.empty());
}

TEST(FrameAssembler, DeliversFramesBeforeACorruptOneThenStops) {
  const Bytes good = ReadFile(FramesDir() / "doc_example_int16.bin");
  const Bytes bad = ReadFile(FramesDir() / "bad_crc.bin");
  Bytes stream = good;
  stream.insert(stream.end(), bad.begin(), bad.end());
  stream.insert(stream.end(), good.begin(), good.end());
  for (std::size_t chunk : {std::size_t{1}, std::size_t{30}, stream.size()}) {
    FrameAssembler assembler;
    std::vector<Frame> got;
    std::optional<FrameError> error;
    for (std::size_t pos = 0; pos < stream.size() && !error; pos += chunk) {
      error = assembler.Feed(std::span(stream).subspan(pos, std::min(chunk, stream.size() - pos)),
                             &got);
    }
    ASSERT_TRUE(error.has_value()) << "chunk " << chunk;
    EXPECT_EQ(error->reason, FrameErrorReason::kBadCrc);
    EXPECT_EQ(got.size(), 1u) << "chunk " << chunk;
  }
}

TEST(FrameAssembler, RejectsGarbageAtTheStart) {
  const Bytes junk = {'G', 'E', 'T', ' ', '/', ' ', 'H', 'T', 'T', 'P', '/', '1', '.', '1'};
  FrameAssembler assembler;
  std::vector<Frame> got;
  const auto error = assembler.Feed(junk, &got);
  ASSERT_TRUE(error.has_value());
  EXPECT_EQ(error->reason, FrameErrorReason::kBadMagic);
  EXPECT_THAT(error->message, ::testing::HasSubstr("47 45 54 20"));
}

}  // namespace
}  // namespace spinward::daemon
