// daemon/metering/shares.h
// How shared energy and money are divided among units: the fractions a ShareConfig gives each
// unit, and the largest-remainder apportionment that splits an amount into parts that add up
// to it exactly. Pure functions; any thread may call them.
#pragma once

#include <vector>

#include "config/config.h"
#include "daemon/metering/money.h"

namespace ampledger {

// The fraction of a shared quantity each of `units` (config order) takes under `share`;
// they sum to 1 over the units taking part, 0 for the others. kEqual: 1/n; kFixed: weights
// normalised; kProportional: each unit's `own_kwh` (same order as `units`) over their sum, or
// equal when that sum is 0. Units named in `share` are ids of `units` (LoadConfig checked).
std::vector<double> ShareFractions(const ShareConfig& share, const std::vector<UnitConfig>& units,
                                   const std::vector<double>& own_kwh);

// Splits `amount` (a whole number of `quantum`s) into parts proportional to `weights`
// (>= 0), by the largest-remainder method: each part gets the whole quanta of its exact
// share, and the quanta left over go one each to the largest fractional remainders, the
// earlier entry first on a tie. The parts add up to `amount` exactly. All weights 0: equal
// weights. Empty `weights`: an empty result.
std::vector<Micros> Apportion(Micros amount, Micros quantum, const std::vector<double>& weights);

}  // namespace ampledger
