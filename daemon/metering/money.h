// daemon/metering/money.h
// Money as whole micro-units (millionths of the currency unit) in an int64: prices carry at
// most 6 decimal places (config/tariff_config.h), so quantity x price and percentages are
// computed with one rounding to the micro-unit and then rounded to the cent as the tariff says
// (half-up, i.e. half away from zero so a credit rounds like the charge it mirrors, or half-even).
// Pure functions; any thread may call them.
#pragma once

#include <cstdint>
#include <string>

#include "config/tariff_config.h"

namespace ampledger {

using Micros = std::int64_t;
constexpr Micros kMicrosPerCent = 10'000;
constexpr Micros kMicrosPerUnit = 1'000'000;

// A price or amount written in a tariff file, e.g. 0.0475 -> 47500. Precondition: at most 6
// decimal places (Tariff::Create checks).
Micros ToMicros(double value);

// `quantity` x `unit_price`, to the nearest micro-unit (half away from zero).
Micros Times(double quantity, Micros unit_price);

// `base` x `percent` / 100, to the nearest micro-unit (half away from zero); percent has at
// most 4 decimal places (Tariff::Create checks).
Micros PercentOf(Micros base, double percent);

// `value` to a whole cent.
Micros RoundToCent(Micros value, RoundingMode mode);

// "12.34", "-0.50": to the cent (half away from zero when `value` is not whole cents).
std::string FormatCents(Micros value);

// "0.0475": the fewest decimals (at least 2) that show `value` exactly.
std::string FormatPrice(Micros value);

}  // namespace ampledger
