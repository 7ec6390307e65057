// api/access.h
// What a scope may see of the configured site: a unit token sees its own circuits (those its
// [[unit]] lists) and itself, nothing shared or site-wide. Pure functions over the config; any
// thread.
#pragma once

#include <string>
#include <vector>

#include "api/token.h"
#include "config/config.h"

namespace ampledger {

// The index in config.circuits of circuit `id` if `scope` may see it, else -1 (unknown and
// hidden circuits look the same).
int VisibleCircuit(const Config& config, const Scope& scope, const std::string& id);

// The indexes of the circuits `scope` may see, in config order.
std::vector<int> VisibleCircuits(const Config& config, const Scope& scope);

// The index in config.units of unit `id` if `scope` may see it, else -1.
int VisibleUnit(const Config& config, const Scope& scope, const std::string& id);

// The index in config.units of the unit owning circuit `circuit_index`, or -1 (shared or
// unowned circuits).
int OwnerOfCircuit(const Config& config, int circuit_index);

}  // namespace ampledger
