#include "config/config.h"

namespace ampledger {

namespace {
template <typename T>
const T* FindById(const std::vector<T>& items, const std::string& id) {
  for (const T& item : items) {
    if (item.id == id) return &item;
  }
  return nullptr;
}
}  // namespace

const NodeConfig* Config::FindNode(const std::string& id) const { return FindById(nodes, id); }
const CircuitConfig* Config::FindCircuit(const std::string& id) const {
  return FindById(circuits, id);
}
const UnitConfig* Config::FindUnit(const std::string& id) const { return FindById(units, id); }

}  // namespace ampledger
