// config/mqtt_reader.h
// Reads the [mqtt] table into an MqttConfig (config/mqtt_config.h): types, ranges, a topic
// prefix without wildcards, user name and password together, and the keys a broker needs
// when enabled = true. Internal to config/. Any thread; no shared state.
#pragma once

#include <string>
#include <string_view>

#include "config/config.h"
#include "config/table_reader.h"

namespace ampledger {

// Errors go to r's ReadContext; `mqtt` is then partly filled and must not be used.
// `base_dir`: the folder relative password_file paths are resolved against.
void ReadMqtt(TableReader& r, const std::string& base_dir, MqttConfig* mqtt);

// Sets topic_prefix and client_id from the site's name when the file gave none.
void FillMqttDefaults(const std::string& site_name, MqttConfig* mqtt);

// "" when `prefix` is a usable topic prefix, else what is wrong with it.
std::string CheckTopicPrefix(std::string_view prefix);

// "Tannery Street #2" -> "tannery-street-2": lowercase a-z 0-9, other runs one '-', none at
// either end; "site" when nothing is left.
std::string TopicSlug(std::string_view text);

}  // namespace ampledger
