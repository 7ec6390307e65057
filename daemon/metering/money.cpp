// daemon/metering/money.cpp
#include "daemon/metering/money.h"

#include <cmath>
#include <cstdlib>

namespace ampledger {
namespace {

// `numerator` / `denominator` to the nearest integer, half away from zero; denominator > 0.
std::int64_t DivideRounded(__int128 numerator, __int128 denominator) {
  __int128 magnitude = numerator < 0 ? -numerator : numerator;
  __int128 quotient = (magnitude + denominator / 2) / denominator;
  return static_cast<std::int64_t>(numerator < 0 ? -quotient : quotient);
}

}  // namespace

Micros ToMicros(double value) { return std::llround(value * 1e6); }

Micros Times(double quantity, Micros unit_price) {
  return std::llround(quantity * static_cast<double>(unit_price));
}

Micros PercentOf(Micros base, double percent) {
  // percent x 10^4 is a whole number: the product is exact in 128 bits.
  __int128 ten_thousandths = std::llround(percent * 1e4);
  return DivideRounded(static_cast<__int128>(base) * ten_thousandths, 100 * 10'000);
}

Micros RoundToCent(Micros value, RoundingMode mode) {
  Micros cents = value / kMicrosPerCent;  // toward zero
  Micros rest = value % kMicrosPerCent;    // same sign as value
  Micros half = kMicrosPerCent / 2;
  Micros away = value < 0 ? -1 : 1;
  if (std::llabs(rest) > half) {
    cents += away;
  } else if (std::llabs(rest) == half) {
    if (mode == RoundingMode::kHalfUp || cents % 2 != 0) cents += away;
  }
  return cents * kMicrosPerCent;
}

std::string FormatCents(Micros value) {
  Micros cents = RoundToCent(value, RoundingMode::kHalfUp) / kMicrosPerCent;
  std::string sign = cents < 0 ? "-" : "";
  Micros magnitude = std::llabs(cents);
  std::string fraction = std::to_string(magnitude % 100);
  if (fraction.size() < 2) fraction = "0" + fraction;
  return sign + std::to_string(magnitude / 100) + "." + fraction;
}

std::string FormatPrice(Micros value) {
  std::string sign = value < 0 ? "-" : "";
  Micros magnitude = std::llabs(value);
  std::string fraction = std::to_string(magnitude % kMicrosPerUnit);
  fraction.insert(0, 6 - fraction.size(), '0');
  while (fraction.size() > 2 && fraction.back() == '0') fraction.pop_back();
  return sign + std::to_string(magnitude / kMicrosPerUnit) + "." + fraction;
}

}  // namespace ampledger
