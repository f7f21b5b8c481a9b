// Recording readers against files written by outside tools: Python's `wave` module,
// scipy.io.wavfile and numpy (tests/reference/recording_reference.py, run by Debian's
// /usr/bin/python3), whose samples SciPy reads back for comparison; and against the damaged
// fixtures in tests/data/recordings (made by make_fixtures.py there), each broken in one named way.
#include "spinward/daemon/recording_reader.h"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "spinward/daemon/csv_reader.h"
#include "spinward/daemon/raw_reader.h"
#include "spinward/daemon/wav_reader.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::ReferencePython;
using spinward::testing::RunCommand;
using spinward::testing::SourceDir;
using spinward::testing::TestDataDir;

struct Reference {
  double rate = 0.0;
  std::size_t channels = 0;
  std::vector<std::vector<double>> frames;  // [frame][channel]
};

// Runs the reference script and parses what it prints: an optional rate, channels, frames, then
// one line of samples per frame.
Reference RunReference(const std::string& arguments, bool has_rate) {
  const std::string script = (SourceDir() / "tests/reference/recording_reference.py").string();
  const auto result = RunCommand(ReferencePython() + " " + script + " " + arguments);
  EXPECT_EQ(result.exit_code, 0) << result.error_output;
  std::istringstream in(result.output);
  Reference ref;
  std::size_t frames = 0;
  if (has_rate) in >> ref.rate;
  in >> ref.channels >> frames;
  ref.frames.assign(frames, std::vector<double>(ref.channels));
  for (auto& frame : ref.frames) {
    for (auto& value : frame) in >> value;
  }
  EXPECT_FALSE(in.fail()) << "could not parse the reference output for: " << arguments;
  return ref;
}

class WavEncodings : public ::testing::TestWithParam<const char*> {};

// Every encoding, both channels of a stereo file: the samples SciPy reads, scaled by full scale
// (integers / 2^(bits-1), 8-bit (x - 128) / 128: common practice, as SciPy's docs tabulate the
// ranges), must come out bit for bit; the rate is the header's.
TEST_P(WavEncodings, SamplesMatchScipy) {
  const fs::path dir = spinward::testing::FreshTempDir(std::string("wav-") + GetParam());
  const fs::path path = dir / "p101.wav";
  const Reference ref =
      RunReference("write-wav " + path.string() + " " + GetParam() + " 2 25600 301 7", true);
  ASSERT_EQ(ref.frames.size(), 301u);
  for (std::size_t channel = 0; channel < 2; ++channel) {
    ReadOptions options;
    options.channel = channel;
    auto recording = ReadRecording(path, options);
    ASSERT_TRUE(recording.ok()) << recording.message();
    EXPECT_EQ(recording->sample_rate_hz, 25600.0);
    EXPECT_EQ(recording->channel_count, 2u);
    EXPECT_EQ(recording->channel, channel);
    EXPECT_EQ(recording->name, path.string());
    ASSERT_EQ(recording->samples.size(), ref.frames.size());
    for (std::size_t i = 0; i < ref.frames.size(); ++i) {
      ASSERT_EQ(recording->samples[i], ref.frames[i][channel]) << "frame " << i;
    }
  }
}

INSTANTIATE_TEST_SUITE_P(RecordingReader, WavEncodings,
                         ::testing::Values("pcm8", "pcm16", "pcm24", "pcm32", "float32", "float64",
                                           "ext16", "ext24in32", "extfloat32"));

TEST(RecordingReader, IntegerFullScaleMapsToMinusOne) {
  // The writer puts the most negative code first: full scale is exactly -1 (common practice).
  const fs::path path = spinward::testing::FreshTempDir("wav-fullscale") / "fs.wav";
  const Reference ref = RunReference("write-wav " + path.string() + " pcm24 1 8000 4 3", true);
  auto recording = ReadRecording(path, {});
  ASSERT_TRUE(recording.ok()) << recording.message();
  EXPECT_EQ(recording->samples.front(), -1.0);
  EXPECT_EQ(recording->samples.back(), ref.frames.back()[0]);
  EXPECT_LT(recording->samples.back(), 1.0);  // 2^23 - 1 codes above zero: [-1, 1)
}

TEST(RecordingReader, WavChannelOutOfRangeIsNamed) {
  const fs::path path = spinward::testing::FreshTempDir("wav-channel") / "two.wav";
  RunReference("write-wav " + path.string() + " pcm16 2 8000 10 1", true);
  ReadOptions options;
  options.channel = 2;
  auto recording = ReadRecording(path, options);
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(),
            path.string() + ": channel 2 requested but the file has 2 channels (0-1)");
}

TEST(RecordingReader, GivenRateOverridesHeaderAndSaysSo) {
  const fs::path path = spinward::testing::FreshTempDir("wav-rate") / "rate.wav";
  RunReference("write-wav " + path.string() + " pcm16 1 48000 10 1", true);
  ReadOptions options;
  options.sample_rate_hz = 51200.0;
  auto recording = ReadRecording(path, options);
  ASSERT_TRUE(recording.ok()) << recording.message();
  EXPECT_EQ(recording->sample_rate_hz, 51200.0);
  EXPECT_NE(recording->source.find("header says 48000 Hz"), std::string::npos) << recording->source;
}

struct BadFile {
  const char* name;
  const char* problem;  // the part of the message after "PATH: "
};

class DamagedFixtures : public ::testing::TestWithParam<BadFile> {};

// Each fixture is broken in one way (see make_fixtures.py); the one-line error names the file and
// that problem.
TEST_P(DamagedFixtures, ErrorNamesFileAndProblem) {
  const fs::path path = TestDataDir() / "recordings" / GetParam().name;
  auto recording = ReadRecording(path, {});
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(), path.string() + ": " + GetParam().problem);
  EXPECT_EQ(recording.message().find('\n'), std::string::npos);
}

INSTANTIATE_TEST_SUITE_P(
    RecordingReader, DamagedFixtures,
    ::testing::Values(
        BadFile{"truncated_data.wav",
                "data chunk declares 1000 bytes but only 20 follow (truncated)"},
        BadFile{"bad_header.wav", "not a WAV file (no RIFF/WAVE header)"},
        BadFile{"adpcm.wav",
                "unsupported WAV encoding: format tag 2 (Microsoft ADPCM); only integer PCM and "
                "IEEE float are read"},
        BadFile{"pcm12.wav",
                "unsupported bit depth: 12-bit integer PCM (8, 16, 24 or 32 are read)"},
        BadFile{"huge_chunk.wav",
                "chunk 'LIST' at byte 36 declares 4294967280 bytes but only 32 follow (truncated "
                "or damaged)"},
        BadFile{"no_data.wav", "no data chunk"}, BadFile{"does_not_exist.wav", "no such file"}),
    [](const auto& param_info) {
      std::string name = param_info.param.name;
      for (char& c : name) {
        if (c == '.') c = '_';
      }
      return name;
    });

TEST(RecordingReader, CsvNamedColumnAndRateFromTimeColumn) {
  const fs::path path = TestDataDir() / "recordings" / "named_column.csv";
  ReadOptions options;
  options.column = "accel_y";
  auto recording = ReadRecording(path, options);
  ASSERT_TRUE(recording.ok()) << recording.message();
  // The fixture's time column steps by 1 ms: 1000 Hz, to rounding of the printed times.
  EXPECT_NEAR(recording->sample_rate_hz, 1000.0, 1e-9);
  EXPECT_EQ(recording->channel_count, 2u);  // the time column is not data
  EXPECT_EQ(recording->channel, 1u);
  const std::vector<double> expected = {0, -0.25, -0.5, -0.75, -1, -1.25, -1.5, -1.75};
  EXPECT_EQ(recording->samples, expected);

  ReadOptions by_channel;  // the first data column, after the time column
  by_channel.channel = 0;
  auto first = ReadRecording(path, by_channel);
  ASSERT_TRUE(first.ok()) << first.message();
  EXPECT_EQ(first->samples[3], 1.5);
}

TEST(RecordingReader, CsvUnknownColumnListsTheColumns) {
  const fs::path path = TestDataDir() / "recordings" / "named_column.csv";
  ReadOptions options;
  options.column = "accel_z";
  auto recording = ReadRecording(path, options);
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(),
            path.string() + ": no data column 'accel_z' (data columns: 'accel_x', 'accel_y')");
}

TEST(RecordingReader, CsvNonNumericCellNamesLine) {
  const fs::path path = TestDataDir() / "recordings" / "non_numeric.csv";
  ReadOptions options;
  options.sample_rate_hz = 100.0;
  auto recording = ReadRecording(path, options);
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(), path.string() + ":5: column 'accel': 'n/a' is not a number");
}

TEST(RecordingReader, CsvGapInTimeColumnIsReported) {
  const fs::path path = TestDataDir() / "recordings" / "uneven_time.csv";
  auto recording = ReadRecording(path, {});
  ASSERT_FALSE(recording.ok());
  // Line 5 holds t = 0.004 s, one sample after the gap.
  EXPECT_NE(recording.message().find(path.string() +
                                     ":5: time 0.004 s comes 0.002 s after the one before; the "
                                     "mean period is 0.0012 s"),
            std::string::npos)
      << recording.message();
}

TEST(RecordingReader, CsvWithoutRateOrTimeAsksForRate) {
  auto recording = ParseCsv("0.1\n0.2\n0.3\n", "memory.csv", {});
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(),
            "memory.csv: no time column and no sample rate; give the rate (--rate HZ) or a "
            "'time_s' column");
}

TEST(RecordingReader, CsvHeaderlessSemicolonColumns) {
  ReadOptions options;
  options.sample_rate_hz = 10.0;
  options.channel = 1;
  auto recording = ParseCsv("1;2\r\n3;4\r\n\r\n5;+6e-1\r\n", "memory.csv", options);
  ASSERT_TRUE(recording.ok()) << recording.message();
  EXPECT_EQ(recording->samples, (std::vector<double>{2, 4, 0.6}));
  EXPECT_EQ(recording->channel_count, 2u);
}

TEST(RecordingReader, CsvRaggedLineIsReported) {
  ReadOptions options;
  options.sample_rate_hz = 10.0;
  auto recording = ParseCsv("a,b\n1,2\n3\n", "memory.csv", options);
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(), "memory.csv:3: 1 cells where the header has 2");
}

class RawEncodings : public ::testing::TestWithParam<const char*> {};

// numpy's tofile of '<f4' / '<i2' arrays, two channels interleaved; int16 / 32768 (common
// practice).
TEST_P(RawEncodings, SamplesMatchNumpy) {
  const std::string encoding = GetParam();
  const fs::path path = spinward::testing::FreshTempDir("raw-" + encoding) / ("p102." + encoding);
  const Reference ref =
      RunReference("write-raw " + path.string() + " " + encoding + " 2 257 11", false);
  ReadOptions options;
  options.sample_rate_hz = 12800.0;
  options.raw_channel_count = 2;
  options.channel = 1;
  auto recording = ReadRecording(path, options);
  ASSERT_TRUE(recording.ok()) << recording.message();
  ASSERT_EQ(recording->samples.size(), 257u);
  EXPECT_EQ(recording->sample_rate_hz, 12800.0);
  for (std::size_t i = 0; i < ref.frames.size(); ++i) {
    ASSERT_EQ(recording->samples[i], ref.frames[i][1]) << "frame " << i;
  }
}

INSTANTIATE_TEST_SUITE_P(RecordingReader, RawEncodings, ::testing::Values("f32", "s16"));

TEST(RecordingReader, RawNeedsRate) {
  const fs::path path = TestDataDir() / "recordings" / "odd_length.s16";
  auto recording = ReadRecording(path, {});
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(),
            path.string() + ": raw int16 samples carry no sample rate; give it (--rate HZ)");
}

TEST(RecordingReader, RawPartialFrameIsReported) {
  const fs::path path = TestDataDir() / "recordings" / "odd_length.s16";
  ReadOptions options;
  options.sample_rate_hz = 1000.0;
  auto recording = ReadRecording(path, options);
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(), path.string() +
                                     ": 7 bytes is not a whole number of 1-channel int16 frames "
                                     "(2 bytes each): truncated?");
}

TEST(RecordingReader, FormatFromExtension) {
  EXPECT_EQ(*FormatFromExtension("a/b.WAV"), RecordingFormat::kWav);
  EXPECT_EQ(*FormatFromExtension("b.csv"), RecordingFormat::kCsv);
  EXPECT_EQ(*FormatFromExtension("b.f32"), RecordingFormat::kRawFloat32);
  EXPECT_EQ(*FormatFromExtension("b.s16"), RecordingFormat::kRawInt16);
  auto raw = FormatFromExtension("b.raw");
  ASSERT_FALSE(raw.ok());
  EXPECT_EQ(raw.message(),
            "b.raw: '.raw' does not say float32 or int16; name the format (f32 or s16)");
  EXPECT_FALSE(FormatFromExtension("b.mp3").ok());
}

TEST(RecordingReader, DirectoryIsNotAFile) {
  auto recording = ReadRecording(TestDataDir() / "recordings", {});
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(), (TestDataDir() / "recordings").string() + ": is a directory");
}

TEST(RecordingReader, ShortBufferIsNotAWav) {
  auto recording = ParseWav(std::string_view("RIFF", 4), "memory.wav", {});
  ASSERT_FALSE(recording.ok());
  EXPECT_EQ(recording.message(), "memory.wav: only 4 bytes, too short for a WAV header (12 bytes)");
}

}  // namespace
}  // namespace spinward::daemon
