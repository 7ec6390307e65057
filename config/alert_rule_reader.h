// config/alert_rule_reader.h
// Reads one [[alert]] table into an AlertRuleConfig: the kind, the keys that kind takes (any
// other key is an error), their ranges and defaults (clear_watts defaults to level_watts).
// Whether the subjects exist is checked later by ValidateConfigReferences. Internal to config/.
#pragma once

#include "config/config.h"
#include "config/table_reader.h"

namespace ampledger {

// Errors go to r's ReadContext; `alert` is then partly filled and must not be used.
void ReadAlertRule(TableReader& r, AlertRuleConfig* alert);

}  // namespace ampledger
