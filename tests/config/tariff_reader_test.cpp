// tests/config/tariff_reader_test.cpp
#include "config/tariff_reader.h"

#include <doctest/doctest.h>

#include <filesystem>

#include "daemon/metering/tariff.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::SourceDir;

std::string Error(const std::string& text) {
  Result<TariffConfig> config = ParseTariff(text, "bad.toml");
  REQUIRE_FALSE(config.ok());
  return config.status().message();
}

const char* kSeason = R"(
[[season]]
name = "all year"
from = "01-01"
to = "12-31"
default_period = "base"
[[season.period]]
name = "base"
price = 0.10
)";

TEST_SUITE("config") {
  TEST_CASE("every tariff in config/tariffs loads and passes Tariff::Create") {
    int count = 0;
    for (const auto& entry : std::filesystem::directory_iterator(SourceDir() / "config" / "tariffs")) {
      if (entry.path().extension() != ".toml") continue;
      ++count;
      Result<TariffConfig> config = ReadTariffFile(entry.path().string());
      REQUIRE_MESSAGE(config.ok(), config.status().ToString());
      Result<Tariff> tariff = Tariff::Create(*config);
      CHECK_MESSAGE(tariff.ok(), entry.path().string() << ": " << tariff.status().ToString());
    }
    CHECK(count >= 5);
  }

  TEST_CASE("the demo tariff reads as written") {
    Result<TariffConfig> config =
        ReadTariffFile((SourceDir() / "config" / "tariffs" / "tannery-street-time-of-use.toml").string());
    REQUIRE(config.ok());
    const TariffRates& rates = config->rates;
    REQUIRE(rates.seasons.size() == 2);
    CHECK(rates.seasons[1].first_day == date::October / 1);
    CHECK(rates.seasons[1].last_day == date::May / 31);
    const RateWindow& spring = rates.seasons[1].windows[0];
    CHECK(spring.months == (MonthBit(date::March) | MonthBit(date::April)));
    CHECK(rates.seasons[1].windows[2].end_minute == 20 * 60 + 30);
    CHECK(rates.seasons[1].windows[3].start_minute == 23 * 60);
    CHECK(rates.holidays.size() == 6);
    CHECK(std::holds_alternative<LastWeekday>(rates.holidays[1].date));
    CHECK(config->export_rule.method == ExportMethod::kNetBilling);
    CHECK(config->fixed[0].per == FixedPer::kDay);
  }

  TEST_CASE("a season's own holidays, explicit dates and Easter offsets") {
    Result<TariffConfig> config = ParseTariff(std::string(R"(
name = "t"
[[holiday]]
name = "Easter Monday"
easter_offset_days = 1
[[holiday]]
name = "Closures"
dates = ["2026-12-24", "2027-12-24"]
)") + kSeason + R"(
[[season.holiday]]
name = "Harvest"
date = "10-02"
)", "ok.toml");
    REQUIRE_MESSAGE(config.ok(), config.status().ToString());
    CHECK(std::get<EasterRelative>(config->rates.holidays[0].date).offset_days == 1);
    CHECK(std::get<ExplicitDates>(config->rates.holidays[1].date).dates.size() == 2);
    REQUIRE(config->rates.seasons[0].holidays.has_value());
    CHECK(config->rates.seasons[0].holidays->size() == 1);
  }

  TEST_CASE("whole-message errors name file, line and key") {
    CHECK(Error("name = \"t\"\n") == "bad.toml: season: missing; expected an array of tables ([[season]])");
    // Found by tests/fuzz/config_run.sh: a control character where a table header's key
    // begins. toml++ asserts on it in a debug build; the library the daemon links reports it.
    CHECK(Error("name = \"t\"\n[\x01season]\n") ==
          "bad.toml:2: TOML syntax: Error while parsing key: expected bare key starting "
          "character or string delimiter, saw '\\u0001' (column 2)");
    CHECK(Error(std::string("name = \"t\"") + kSeason + "[[season.window]]\nperiod = \"base\"\n"
                "from = \"07:10\"\nto = \"09:00\"\n") ==
          "bad.toml:12: season[0].window[0].from: expected a time \"HH:MM\" from 00:00 to 24:00 "
          "on a quarter hour, got \"07:10\"");
    CHECK(Error(std::string("name = \"t\"") + kSeason + "[[adder]]\nname = \"x\"\nprice = 0.1234567\n") ==
          "bad.toml:12: adder[0].price: expected at most 6 decimal places, got 0.1234567");
    CHECK(Error(std::string("name = \"t\"") + kSeason + "[export]\nmethod = \"net-billing\"\n"
                "netting = \"cycle\"\n") ==
          "bad.toml:12: export.netting: only with method = \"net-metering\"");
    CHECK(Error(std::string("name = \"t\"") + kSeason + "[[season.tier]]\nsize_kwh = 100\nprice = 0.1\n") ==
          "bad.toml:11: season[0].tier[0].size_kwh: the last tier takes everything above the "
          "others; leave size_kwh out");
    CHECK(Error("name = \"t\"\n[[holiday]]\nname = \"h\"\ndate = \"13-01\"\n") ==
          "bad.toml:4: holiday[0].date: expected a month and day \"MM-DD\", got \"13-01\"");
  }
}

}  // namespace
}  // namespace ampledger
