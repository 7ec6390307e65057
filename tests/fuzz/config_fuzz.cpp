// tests/fuzz/config_fuzz.cpp
// libFuzzer target for the configuration and tariff loaders: the input is read as a tariff
// file (ParseTariff, then Tariff::Create and pricing a few days with it) and as a site config
// (ParseConfig, which also reads the tariff files and key files it names from a small library
// made for the run, then what the daemon builds from a loaded config: the tariff schedule,
// the alert evaluator and `ampledger check`'s summary). Besides crashes, hangs and sanitizer
// reports, it stops (__builtin_trap) when a loaded result breaks a promise of the code:
// pricing that loses energy, an out-of-range rate period, a loaded config whose alert rules
// cannot be built, a summary that shows a node key. Built by tests/fuzz/config_run.sh only.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "config/config.h"
#include "config/tariff_reader.h"
#include "daemon/metering/alert_evaluator.h"
#include "daemon/metering/tariff.h"
#include "daemon/metering/tariff_schedule.h"

namespace {

using namespace ampledger;

void Check(bool promise) {
  if (!promise) __builtin_trap();
}

void Write(const std::filesystem::path& path, const std::string& text) {
  std::ofstream(path, std::ios::binary) << text;
}

// A folder for the fuzzed config to live in: a tariff library with one valid tariff
// ("flat", so site.tariff = "flat" loads) and a key file, removed at exit.
const std::filesystem::path& Folder() {
  static const std::filesystem::path folder = [] {
    std::string pattern = (std::filesystem::temp_directory_path() / "config-fuzz-XXXXXX").string();
    const std::filesystem::path made = mkdtemp(pattern.data());
    std::filesystem::create_directories(made / "tariffs");
    std::filesystem::create_directories(made / "keys");
    Write(made / "tariffs" / "flat.toml",
          "name = \"Flat\"\n[[season]]\nname = \"all year\"\nfrom = \"01-01\"\nto = \"12-31\"\n"
          "default_period = \"any\"\n[[season.period]]\nname = \"any\"\nprice = 0.125\n");
    Write(made / "keys" / "n.key",
          "000102030405060708090a0b0c0d0e0f101112131415161718191a1b1c1d1e1f\n");
    std::atexit([] { std::filesystem::remove_all(Folder()); });
    return made;
  }();
  return folder;
}

// Prices two days of 15-minute buckets (a DST change in each zone's year) and checks that every
// bucket lands in a priced period and no energy is lost or made.
void PriceDays(const Tariff& tariff) {
  static const LocalTime zones[] = {LocalTime::ForZone("America/Chicago").value(),
                                    LocalTime::ForZone("Australia/Lord_Howe").value()};
  for (const LocalTime& zone : zones) {
    for (date::year_month_day day : {date::year{2026} / 3 / 8, date::year{2028} / 2 / 29}) {
      Result<std::vector<UnixMs>> starts = zone.DayBuckets(day);
      if (!starts.ok()) continue;
      std::vector<BucketEnergy> buckets;
      for (UnixMs start : *starts) {
        const RateSlot slot = tariff.AtInstant(zone, start);
        Check(slot.season >= 0 &&
              slot.season < static_cast<int>(tariff.rates().seasons.size()));
        Check(slot.period >= 0 &&
              slot.period < static_cast<int>(tariff.rates().seasons[slot.season].prices.size()));
        buckets.push_back({start, 0.25});
      }
      Result<std::vector<EnergyCharge>> lines = tariff.PriceEnergy(zone, buckets);
      Check(lines.ok());
      double kwh = 0;
      for (const EnergyCharge& line : *lines) kwh += line.kwh;
      Check(std::fabs(kwh - 0.25 * static_cast<double>(buckets.size())) < 1e-9);
    }
  }
}

void FuzzTariff(const std::string& text) {
  Result<TariffConfig> config = ParseTariff(text, "fuzz-tariff.toml");
  if (!config.ok()) return;
  Result<Tariff> tariff = Tariff::Create(*config);
  if (tariff.ok()) PriceDays(*tariff);
}

std::string Hex(const std::vector<std::uint8_t>& bytes) {
  static const char kDigits[] = "0123456789abcdef";
  std::string hex;
  for (std::uint8_t byte : bytes) {
    hex.push_back(kDigits[byte >> 4]);
    hex.push_back(kDigits[byte & 15]);
  }
  return hex;
}

void FuzzConfig(const std::string& text) {
  Result<Config> config = ParseConfig(text, (Folder() / "site.toml").string());
  if (!config.ok()) return;
  const std::string summary = DescribeConfig(*config);
  for (const NodeConfig& node : config->nodes) {
    if (!node.key.empty()) Check(summary.find(Hex(node.key).substr(0, 16)) == std::string::npos);
  }
  Result<TariffSchedule> tariffs = TariffSchedule::Create(*config);
  // A loaded config's alert rules always build when its tariffs do (the daemon's start-up).
  if (tariffs.ok()) Check(AlertEvaluator::Create(*config, &*tariffs).ok());
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  FuzzTariff(text);
  FuzzConfig(text);
  return 0;
}
