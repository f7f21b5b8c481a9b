#include "spinward/estimators/units.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <string>
#include <vector>

namespace spinward::estimators {
namespace {

using ::testing::HasSubstr;

TEST(Units, ParsesAndPrintsEveryUnit) {
  // The spellings of the trade (SI symbols, ISO 80000; 'in/s' and 'mil' as US datasheets write
  // them).
  const std::vector<std::pair<std::string, Unit>> cases = {
      {"g", Unit::kG},
      {"m/s^2", Unit::kMetresPerSecondSquared},
      {"mm/s", Unit::kMillimetresPerSecond},
      {"m/s", Unit::kMetresPerSecond},
      {"in/s", Unit::kInchesPerSecond},
      {"um", Unit::kMicrometres},
      {"mm", Unit::kMillimetres},
      {"mil", Unit::kMils},
  };
  for (const auto& [text, unit] : cases) {
    auto parsed = ParseUnit(text);
    ASSERT_TRUE(parsed.ok()) << text << ": " << parsed.message();
    EXPECT_EQ(*parsed, unit) << text;
    EXPECT_EQ(ToString(unit), text);
  }
}

TEST(Units, AcceptsCommonAlternativeSpellings) {
  // "m/s2" is how plain-text datasheets write m/s^2 (common practice, no source).
  EXPECT_EQ(*ParseUnit("m/s2"), Unit::kMetresPerSecondSquared);
  EXPECT_EQ(*ParseUnit("  mm/s "), Unit::kMillimetresPerSecond);
  EXPECT_EQ(*ParseUnit("\xC2\xB5m"), Unit::kMicrometres);  // the micro sign, SI brochure
}

TEST(Units, RejectsUnknownUnitNamingIt) {
  for (const std::string text : {"furlong/fortnight", "G", "", "mm/s/s", "m s^-2"}) {
    auto parsed = ParseUnit(text);
    ASSERT_FALSE(parsed.ok()) << text;
    EXPECT_THAT(parsed.message(), HasSubstr("'" + text + "'"));
  }
}

TEST(Units, QuantityOfEachUnit) {
  // Which physical quantity each unit measures (SI, ISO 80000-3).
  EXPECT_EQ(QuantityOf(Unit::kG), Quantity::kAcceleration);
  EXPECT_EQ(QuantityOf(Unit::kMetresPerSecondSquared), Quantity::kAcceleration);
  EXPECT_EQ(QuantityOf(Unit::kMillimetresPerSecond), Quantity::kVelocity);
  EXPECT_EQ(QuantityOf(Unit::kMetresPerSecond), Quantity::kVelocity);
  EXPECT_EQ(QuantityOf(Unit::kInchesPerSecond), Quantity::kVelocity);
  EXPECT_EQ(QuantityOf(Unit::kMicrometres), Quantity::kDisplacement);
  EXPECT_EQ(QuantityOf(Unit::kMillimetres), Quantity::kDisplacement);
  EXPECT_EQ(QuantityOf(Unit::kMils), Quantity::kDisplacement);
  // The defaults ISO 20816 reports in: velocity mm/s; displacement um; acceleration m/s^2.
  EXPECT_EQ(DefaultUnit(Quantity::kVelocity), Unit::kMillimetresPerSecond);
  EXPECT_EQ(DefaultUnit(Quantity::kDisplacement), Unit::kMicrometres);
  EXPECT_EQ(DefaultUnit(Quantity::kAcceleration), Unit::kMetresPerSecondSquared);
}

TEST(Units, QuantityNamesRoundTrip) {
  for (const std::string text : {"acceleration", "velocity", "displacement"}) {
    auto parsed = ParseQuantity(text);
    ASSERT_TRUE(parsed.ok()) << parsed.message();
    EXPECT_EQ(ToString(*parsed), text);
  }
  auto bad = ParseQuantity("jerk");
  ASSERT_FALSE(bad.ok());
  EXPECT_THAT(bad.message(), HasSubstr("'jerk'"));
}

TEST(Units, SiFactorsAreTheDefinedValues) {
  // Standard gravity 9.80665 m/s^2 exactly (3rd CGPM, 1901).
  EXPECT_EQ(ToSiFactor(Unit::kG), 9.80665);
  EXPECT_EQ(ToSiFactor(Unit::kMetresPerSecondSquared), 1.0);
  // SI prefixes milli 1e-3, micro 1e-6 (SI brochure).
  EXPECT_DOUBLE_EQ(ToSiFactor(Unit::kMillimetresPerSecond), 1e-3);
  EXPECT_EQ(ToSiFactor(Unit::kMetresPerSecond), 1.0);
  EXPECT_DOUBLE_EQ(ToSiFactor(Unit::kMicrometres), 1e-6);
  EXPECT_DOUBLE_EQ(ToSiFactor(Unit::kMillimetres), 1e-3);
  // The international inch is 0.0254 m exactly (1959 agreement); a mil is 1/1000 in = 25.4 um.
  EXPECT_DOUBLE_EQ(ToSiFactor(Unit::kInchesPerSecond), 0.0254);
  EXPECT_DOUBLE_EQ(ToSiFactor(Unit::kMils), 25.4e-6);
}

TEST(Units, ConvertsWithinAQuantityOnly) {
  // 1 g = 9.80665 m/s^2 (CGPM 1901); 1 in/s = 25.4 mm/s and 1 mil = 25.4 um (1959 inch).
  EXPECT_DOUBLE_EQ(*ConversionFactor(Unit::kG, Unit::kMetresPerSecondSquared), 9.80665);
  EXPECT_DOUBLE_EQ(*ConversionFactor(Unit::kMetresPerSecondSquared, Unit::kG), 1.0 / 9.80665);
  EXPECT_DOUBLE_EQ(*ConversionFactor(Unit::kInchesPerSecond, Unit::kMillimetresPerSecond), 25.4);
  EXPECT_DOUBLE_EQ(*ConversionFactor(Unit::kMils, Unit::kMicrometres), 25.4);
  EXPECT_DOUBLE_EQ(*ConversionFactor(Unit::kMillimetres, Unit::kMils), 1.0 / 0.0254);
  auto cross = ConversionFactor(Unit::kG, Unit::kMillimetresPerSecond);
  ASSERT_FALSE(cross.ok());
  EXPECT_THAT(cross.message(), HasSubstr("acceleration"));
  EXPECT_THAT(cross.message(), HasSubstr("velocity"));
}

TEST(Sensitivity, ParsesDatasheetForms) {
  // A general-purpose ICP accelerometer is specified as 100 mV/g, i.e. 100 / 9.80665 =
  // 10.197 mV/(m/s^2), which datasheets round to 10.2 (common practice, no source).
  auto per_g = Sensitivity::Parse("100 mV/g");
  ASSERT_TRUE(per_g.ok()) << per_g.message();
  EXPECT_EQ(per_g->unit, Unit::kG);
  EXPECT_DOUBLE_EQ(per_g->volts_per_unit, 0.1);
  EXPECT_DOUBLE_EQ(per_g->VoltsToUnits(0.25), 2.5);  // 250 mV at 100 mV/g is 2.5 g

  auto per_si = Sensitivity::Parse("10.2 mV/(m/s^2)");
  ASSERT_TRUE(per_si.ok()) << per_si.message();
  EXPECT_EQ(per_si->unit, Unit::kMetresPerSecondSquared);
  EXPECT_DOUBLE_EQ(per_si->volts_per_unit, 0.0102);
  // Same sensor, two spellings: volts per g over volts per m/s^2 is g in m/s^2, to datasheet
  // rounding.
  EXPECT_NEAR(per_g->volts_per_unit / per_si->volts_per_unit, 9.80665, 0.01);

  auto one_volt = Sensitivity::Parse("1 V/g");
  ASSERT_TRUE(one_volt.ok()) << one_volt.message();
  EXPECT_DOUBLE_EQ(one_volt->volts_per_unit, 1.0);
  EXPECT_EQ(one_volt->unit, Unit::kG);

  auto velocity = Sensitivity::Parse("50 mV/(mm/s)");
  ASSERT_TRUE(velocity.ok()) << velocity.message();
  EXPECT_EQ(velocity->unit, Unit::kMillimetresPerSecond);
  EXPECT_DOUBLE_EQ(velocity->volts_per_unit, 0.05);

  auto compact = Sensitivity::Parse("500mV/m/s2");
  ASSERT_TRUE(compact.ok()) << compact.message();
  EXPECT_EQ(compact->unit, Unit::kMetresPerSecondSquared);
  EXPECT_DOUBLE_EQ(compact->volts_per_unit, 0.5);
}

TEST(Sensitivity, RejectsBadTextNamingIt) {
  for (const std::string text :
       {"0 mV/g", "-100 mV/g", "nan mV/g", "inf V/g", "1e400 V/g", "100 mV", "100 kV/g",
        "100 mV/furlong", "mV/g", "", "100 mV/(g", "+100 mV/g"}) {
    auto parsed = Sensitivity::Parse(text);
    ASSERT_FALSE(parsed.ok()) << "accepted '" << text << "'";
    EXPECT_THAT(parsed.message(), HasSubstr("'" + text + "'"));
  }
  EXPECT_THAT(Sensitivity::Parse("0 mV/g").message(), HasSubstr("positive"));
  EXPECT_THAT(Sensitivity::Parse("nan mV/g").message(), HasSubstr("finite"));
}

}  // namespace
}  // namespace spinward::estimators
