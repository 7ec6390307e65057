// tests/metering/shares_test.cpp
#include "daemon/metering/shares.h"

#include <doctest/doctest.h>

#include <numeric>

namespace ampledger {
namespace {

std::vector<UnitConfig> Units() { return {{"a", "", {}}, {"b", "", {}}, {"c", "", {}}}; }

TEST_SUITE("metering") {
  TEST_CASE("equal, fixed and proportional fractions") {
    std::vector<double> equal = ShareFractions({ShareRule::kEqual, {}, {}}, Units(), {});
    CHECK(equal == std::vector<double>{1.0 / 3, 1.0 / 3, 1.0 / 3});
    std::vector<double> fixed =
        ShareFractions({ShareRule::kFixed, {"a", "c"}, {60, 40}}, Units(), {});
    CHECK(fixed == std::vector<double>{0.6, 0, 0.4});
    std::vector<double> used =
        ShareFractions({ShareRule::kProportional, {}, {}}, Units(), {100, 300, 0});
    CHECK(used == std::vector<double>{0.25, 0.75, 0});
  }

  TEST_CASE("proportional with no use at all falls back to equal shares") {
    std::vector<double> used =
        ShareFractions({ShareRule::kProportional, {"a", "b"}, {}}, Units(), {0, 0, 5});
    CHECK(used == std::vector<double>{0.5, 0.5, 0});
  }

  // Largest-remainder (Hamilton) method: common practice for apportioning whole units.
  TEST_CASE("largest remainder: 10.00 in three equal parts -> 3.34, 3.33, 3.33") {
    std::vector<Micros> parts = Apportion(10'000'000, kMicrosPerCent, {1, 1, 1});
    CHECK(parts == std::vector<Micros>{3'340'000, 3'330'000, 3'330'000});
  }

  TEST_CASE("largest remainder gives the cent to the largest fraction; credits too") {
    std::vector<Micros> parts = Apportion(1'000'000, kMicrosPerCent, {0.333, 0.667});
    CHECK(parts == std::vector<Micros>{330'000, 670'000});
    std::vector<Micros> credit = Apportion(-100'000, kMicrosPerCent, {1, 2});
    CHECK(credit == std::vector<Micros>{-30'000, -70'000});
  }

  TEST_CASE("parts always add up to the amount (seeded random weights)") {
    std::uint64_t state = 12345;
    auto next = [&] {
      state = state * 6364136223846793005ULL + 1442695040888963407ULL;
      return static_cast<double>(state >> 40) / static_cast<double>(1ULL << 24);
    };
    for (int round = 0; round < 200; ++round) {
      std::vector<double> weights(1 + round % 7);
      for (double& weight : weights) weight = next() < 0.2 ? 0 : next();
      Micros amount = static_cast<Micros>((next() - 0.3) * 1e6) * kMicrosPerCent;
      std::vector<Micros> parts = Apportion(amount, kMicrosPerCent, weights);
      CHECK(std::accumulate(parts.begin(), parts.end(), Micros{0}) == amount);
      for (Micros part : parts) CHECK(part % kMicrosPerCent == 0);
    }
  }
}

}  // namespace
}  // namespace ampledger
