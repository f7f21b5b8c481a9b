// The spectrum blob: round trips, a byte-level reading by Python's struct module (an independent
// reader of the layout docs/storage.md documents), damaged blobs, and storage of snapshots.
#include "spinward/storage/spectrum_blob.h"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>

#include "spinward/storage/trend_store.h"
#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

SpectrumSnapshot Snapshot() {
  SpectrumSnapshot s;
  s.unit = "(m/s^2)^2/Hz";
  s.spectrum.sample_rate_hz = 25600.0;
  s.spectrum.fft_length = 16;
  s.spectrum.segment_length = 16;
  s.spectrum.segment_count = 31;
  s.spectrum.window.kind = estimators::WindowKind::kKaiser;
  s.spectrum.window.kaiser_beta = 8.6;
  s.spectrum.averaging = estimators::Averaging::kMedian;
  for (int i = 0; i < 9; ++i) s.spectrum.values.push_back(1e-6 * (1.0 + i) / 3.0);
  return s;
}

TEST(SpectrumBlob, Float64RoundTripIsExact) {
  auto blob = EncodeSpectrumBlob(Snapshot(), BlobPrecision::kFloat64);
  ASSERT_TRUE(blob.ok()) << blob.message();
  EXPECT_EQ(blob->size(), 45u + 12u + 9u * 8u);  // header + unit + values (docs/storage.md)
  auto back = DecodeSpectrumBlob(*blob);
  ASSERT_TRUE(back.ok()) << back.message();
  EXPECT_EQ(back->unit, "(m/s^2)^2/Hz");
  EXPECT_EQ(back->spectrum.values, Snapshot().spectrum.values);
  EXPECT_EQ(back->spectrum.sample_rate_hz, 25600.0);
  EXPECT_EQ(back->spectrum.segment_count, 31u);
  EXPECT_EQ(back->spectrum.window.kind, estimators::WindowKind::kKaiser);
  EXPECT_EQ(back->spectrum.window.kaiser_beta, 8.6);
  EXPECT_EQ(back->spectrum.averaging, estimators::Averaging::kMedian);
}

TEST(SpectrumBlob, Float32KeepsSinglePrecision) {
  auto blob = EncodeSpectrumBlob(Snapshot(), BlobPrecision::kFloat32);
  ASSERT_TRUE(blob.ok()) << blob.message();
  auto back = DecodeSpectrumBlob(*blob);
  ASSERT_TRUE(back.ok()) << back.message();
  const auto& original = Snapshot().spectrum.values;
  for (std::size_t i = 0; i < original.size(); ++i) {
    // Rounding to binary32 errs by at most 2^-24 relative (IEEE 754, unit roundoff of 24 bits).
    EXPECT_LE(std::abs(back->spectrum.values[i] - original[i]), std::ldexp(original[i], -24)) << i;
  }
}

TEST(SpectrumBlob, PythonStructReadsTheDocumentedLayout) {
  auto blob = EncodeSpectrumBlob(Snapshot(), BlobPrecision::kFloat32);
  ASSERT_TRUE(blob.ok());
  auto dir = spinward::testing::FreshTempDir("blob-python");
  {
    std::ofstream out(dir / "blob.bin", std::ios::binary);
    out.write(blob->data(), static_cast<std::streamsize>(blob->size()));
  }
  // The layout as docs/storage.md states it, read with little-endian struct codes.
  std::string script =
      "import struct,sys\n"
      "b=open(sys.argv[1],'rb').read()\n"
      "m,ver,w,win,sym,sc,sd,av,fs,beta,nfft,nseg,cnt,bins,ul=struct.unpack_from('<"
      "4sHBBBBBBddIIIIB',b,0)\n"
      "unit=b[45:45+ul].decode()\n"
      "vals=struct.unpack_from('<%df'%bins,b,45+ul)\n"
      "print(m.decode(),ver,w,win,sym,sc,sd,av,fs,beta,nfft,nseg,cnt,bins,unit,'%.9g'%vals[8],len("
      "b)==45+ul+w*bins)\n";
  {
    std::ofstream out(dir / "read_blob.py");
    out << script;
  }
  auto result = spinward::testing::RunCommand(spinward::testing::ReferencePython() + " " +
                                              (dir / "read_blob.py").string() + " " +
                                              (dir / "blob.bin").string());
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  // Kaiser is window code 6, median averaging code 1 (docs/storage.md); the last value,
  // 1e-6 * 9 / 3, rounded to float32 prints as 3.00000011e-06 with 9 significant digits
  // ('%.9g' % numpy.float32(1e-6 * 9.0 / 3.0) in Debian's Python).
  EXPECT_EQ(result.output,
            "SWSP 1 4 6 0 0 0 1 25600.0 8.6 16 16 31 9 (m/s^2)^2/Hz 3.00000011e-06 True\n");
}

TEST(SpectrumBlob, DamagedBlobsAreRefusedWithTheReason) {
  auto blob = EncodeSpectrumBlob(Snapshot());
  ASSERT_TRUE(blob.ok());
  auto truncated = DecodeSpectrumBlob(std::string_view(*blob).substr(0, blob->size() - 1));
  ASSERT_FALSE(truncated.ok());
  EXPECT_NE(truncated.message().find("calls for"), std::string::npos) << truncated.message();
  std::string bad_magic = *blob;
  bad_magic[0] = 'X';
  EXPECT_NE(DecodeSpectrumBlob(bad_magic).message().find("magic"), std::string::npos);
  std::string bad_window = *blob;
  bad_window[7] = 42;
  EXPECT_NE(DecodeSpectrumBlob(bad_window).message().find("window code 42"), std::string::npos);
  EXPECT_FALSE(DecodeSpectrumBlob("SWSP").ok());
}

TEST(SpectrumBlob, EmptyOrRatelessSpectrumIsRefused) {
  SpectrumSnapshot empty = Snapshot();
  empty.spectrum.values.clear();
  EXPECT_NE(EncodeSpectrumBlob(empty).message().find("no values"), std::string::npos);
  SpectrumSnapshot no_rate = Snapshot();
  no_rate.spectrum.sample_rate_hz = 0.0;
  EXPECT_NE(EncodeSpectrumBlob(no_rate).message().find("sample_rate_hz 0"), std::string::npos);
}

TEST(SpectrumStore, AlarmTransitionKeepsTheSpectrumWhateverTheSpacing) {
  // The evidence of a change is kept: a record that comes with an alarm event of its point is
  // stored with its spectrum even ten minutes after the last hourly snapshot.
  auto path = spinward::testing::FreshTempDir("spectra-alarm") / "larkfield.db";
  StoreOptions options;
  options.spectrum_spacing_ns = 3600LL * 1000000000LL;
  auto store = TrendStore::Open(path.string(), options);
  ASSERT_TRUE(store.ok()) << store.message();
  for (int i = 0; i < 2; ++i) {
    WriteBatch batch;
    auto r = testing::VelocityRecord(testing::kBaseNs + i * testing::kTenMinNs, 2.0 + i);
    r.spectrum = Snapshot().spectrum;
    batch.records.push_back(r);
    if (i == 1) {
      AlarmEventRecord event;
      event.event_id = "lf-transition";
      event.time_ns = r.interval_end_ns;
      event.point_id = r.point_id;
      event.measure = "velocity_rms_10_1000";
      event.from_state = "normal";
      event.to_state = "alert";
      event.value = 3.0;
      event.message = "test";
      batch.events.push_back(event);
    }
    ASSERT_TRUE(store->Write(batch).status.ok());
  }
  testing::RawConnection raw(path);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM spectra"), 2);
}

TEST(SpectrumStore, LatestSnapshotRespectsSpacing) {
  auto path = spinward::testing::FreshTempDir("spectra") / "larkfield.db";
  StoreOptions options;
  options.spectrum_spacing_ns = 3600LL * 1000000000LL;
  auto store = TrendStore::Open(path.string(), options);
  ASSERT_TRUE(store.ok()) << store.message();
  WriteBatch batch;
  // Seven 10-minute records: snapshots are kept at 10:00 and 11:00 only (one per hour).
  for (int i = 0; i < 7; ++i) {
    auto r = testing::VelocityRecord(testing::kBaseNs + i * testing::kTenMinNs, 2.0);
    r.spectrum = Snapshot().spectrum;
    r.spectrum.values[0] = i;
    batch.records.push_back(r);
  }
  ASSERT_TRUE(store->Write(batch).status.ok());
  auto latest = store->LatestSpectrum("P-101");
  ASSERT_TRUE(latest.ok()) << latest.message();
  ASSERT_TRUE(latest->has_value());
  EXPECT_EQ((*latest)->start_ns, testing::kBaseNs + 6 * testing::kTenMinNs);
  EXPECT_EQ((*latest)->snapshot.spectrum.values[0], 6.0);
  EXPECT_EQ((*latest)->snapshot.unit, "(m/s^2)^2/Hz");
  testing::RawConnection raw(path);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM spectra"), 2);
  EXPECT_EQ(raw.Text("SELECT window FROM spectra LIMIT 1"), "kaiser");
}

}  // namespace
}  // namespace spinward::storage
