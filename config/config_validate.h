// config/config_validate.h
// ValidateConfigReferences checks what spans sections of a config file once every section has
// been read: ids are unique, every "node/channel", circuit, unit and node named anywhere
// exists, a channel feeds one circuit, a circuit belongs to at most one unit or is shared
// once, a cost budget has a site tariff. Internal to config/; called by LoadConfig/ParseConfig.
// Any thread.
#pragma once

#include "config/config.h"
#include "config/key_lines.h"
#include "config/status.h"

namespace ampledger {

// Returns the first problem, at the line recorded in `lines` for the key path concerned.
Status ValidateConfigReferences(const Config& config, const KeyLines& lines);

}  // namespace ampledger
