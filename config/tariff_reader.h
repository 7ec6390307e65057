// config/tariff_reader.h
// Reads a tariff file (format and every key: config/tariffs/README.md) into a TariffConfig.
// Errors use the config error format, "<file>:<line>: <key path>: <what>", for everything
// the file's shape decides (types, ranges, names, times on quarter hours, unknown keys).
// Whole-tariff checks (seasons covering the year, periods with a price, tier tables naming a
// season) are Tariff::Create's, in daemon/metering; LoadTariff callers prefix its message with
// the file name. Stateless; any thread may call these.
#pragma once

#include <string>

#include "config/status.h"
#include "config/tariff_config.h"

namespace ampledger {

// Reads and checks the TOML file at `path`. IOError when it cannot be read.
Result<TariffConfig> ReadTariffFile(const std::string& path);

// Same, from text; `source_name` is <file> in messages.
Result<TariffConfig> ParseTariff(const std::string& text, const std::string& source_name);

}  // namespace ampledger
