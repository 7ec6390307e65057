// config/config_reader.h
// ReadConfigText turns the TOML text of a config file into a Config, checking each key's
// type, range and the rules local to one table (e.g. a cose node needs a key, a fixed split
// needs one weight per unit). References between sections are checked afterwards by
// ValidateConfigReferences (config/config_validate.h), using the key lines recorded here.
// Internal to config/. Any thread; no shared state.
#pragma once

#include <string>

#include "config/config.h"
#include "config/key_lines.h"
#include "config/status.h"

namespace ampledger {

// `lines->source()` is the name used in messages; `base_dir` is the absolute folder against
// which relative paths in the file are resolved. Stops at the first error.
Status ReadConfigText(const std::string& text, const std::string& base_dir, Config* config,
                      KeyLines* lines);

}  // namespace ampledger
