// api/access.cpp
#include "api/access.h"

#include <algorithm>

namespace ampledger {

int OwnerOfCircuit(const Config& config, int circuit_index) {
  const std::string& id = config.circuits[circuit_index].id;
  for (size_t unit = 0; unit < config.units.size(); ++unit) {
    const std::vector<std::string>& owned = config.units[unit].circuits;
    if (std::find(owned.begin(), owned.end(), id) != owned.end()) return static_cast<int>(unit);
  }
  return -1;
}

int VisibleUnit(const Config& config, const Scope& scope, const std::string& id) {
  if (!scope.SeesWholeSite() && scope.unit != id) return -1;
  for (size_t unit = 0; unit < config.units.size(); ++unit) {
    if (config.units[unit].id == id) return static_cast<int>(unit);
  }
  return -1;
}

int VisibleCircuit(const Config& config, const Scope& scope, const std::string& id) {
  for (size_t circuit = 0; circuit < config.circuits.size(); ++circuit) {
    if (config.circuits[circuit].id != id) continue;
    const int index = static_cast<int>(circuit);
    if (scope.SeesWholeSite()) return index;
    const int owner = OwnerOfCircuit(config, index);
    return owner >= 0 && config.units[owner].id == scope.unit ? index : -1;
  }
  return -1;
}

std::vector<int> VisibleCircuits(const Config& config, const Scope& scope) {
  std::vector<int> visible;
  for (size_t circuit = 0; circuit < config.circuits.size(); ++circuit) {
    if (VisibleCircuit(config, scope, config.circuits[circuit].id) >= 0) {
      visible.push_back(static_cast<int>(circuit));
    }
  }
  return visible;
}

}  // namespace ampledger
