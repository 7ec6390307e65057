// daemon/metering/shares.cpp
#include "daemon/metering/shares.h"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <numeric>

namespace ampledger {

std::vector<double> ShareFractions(const ShareConfig& share, const std::vector<UnitConfig>& units,
                                   const std::vector<double>& own_kwh) {
  std::vector<double> weights(units.size(), 0);
  for (std::size_t u = 0; u < units.size(); ++u) {
    int entry = -1;
    for (std::size_t k = 0; k < share.units.size(); ++k) {
      if (share.units[k] == units[u].id) entry = static_cast<int>(k);
    }
    if (!share.units.empty() && entry < 0) continue;  // not taking part
    switch (share.rule) {
      case ShareRule::kEqual: weights[u] = 1; break;
      case ShareRule::kFixed:
        weights[u] = entry >= 0 && entry < static_cast<int>(share.weights.size())
                         ? share.weights[entry] : 0;
        break;
      case ShareRule::kProportional: weights[u] = u < own_kwh.size() ? own_kwh[u] : 0; break;
    }
  }
  double sum = std::accumulate(weights.begin(), weights.end(), 0.0);
  if (sum <= 0 && share.rule == ShareRule::kProportional) {
    ShareConfig equal = share;
    equal.rule = ShareRule::kEqual;
    return ShareFractions(equal, units, own_kwh);
  }
  for (double& weight : weights) weight = sum > 0 ? weight / sum : 0;
  return weights;
}

std::vector<Micros> Apportion(Micros amount, Micros quantum, const std::vector<double>& weights) {
  std::vector<Micros> parts(weights.size(), 0);
  if (weights.empty()) return parts;
  double sum = 0;
  for (double weight : weights) sum += std::max(0.0, weight);
  Micros sign = amount < 0 ? -1 : 1;
  Micros quanta = std::llabs(amount) / quantum;
  Micros loose = std::llabs(amount) % quantum;  // only when amount is not whole quanta
  std::vector<double> fraction(weights.size(), 0);
  Micros given = 0;
  for (std::size_t k = 0; k < weights.size(); ++k) {
    double share = sum > 0 ? std::max(0.0, weights[k]) / sum : 1.0 / weights.size();
    double exact = static_cast<double>(quanta) * share;
    Micros whole = static_cast<Micros>(std::floor(exact + 1e-9));
    parts[k] = whole;
    fraction[k] = exact - static_cast<double>(whole);
    given += whole;
  }
  std::vector<std::size_t> order(weights.size());
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return fraction[a] > fraction[b]; });
  for (std::size_t k = 0; given < quanta; k = (k + 1) % order.size(), ++given) {
    parts[order[k]] += 1;
  }
  for (std::size_t k = 0; k < parts.size() && given > quanta; ++k) {  // float slack: take back
    Micros back = std::min(parts[order[order.size() - 1 - k]], given - quanta);
    parts[order[order.size() - 1 - k]] -= back;
    given -= back;
  }
  for (Micros& part : parts) part = sign * part * quantum;
  parts[order[0]] += sign * loose;
  return parts;
}

}  // namespace ampledger
