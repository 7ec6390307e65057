#include "config/mqtt_reader.h"

#include <cctype>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>

namespace ampledger {

namespace {

std::string Quote(std::string_view text) { return "\"" + std::string(text) + "\""; }

// A DNS name, an IPv4 address or an IPv6 address without brackets: what getaddrinfo takes.
bool IsHostText(std::string_view host) {
  if (host.empty() || host.size() > 253) return false;
  for (char c : host) {
    if (!std::isalnum(static_cast<unsigned char>(c)) && c != '.' && c != '-' && c != ':') {
      return false;
    }
  }
  return true;
}

// The password never reaches a message: errors describe only its length.
void ReadPassword(TableReader& r, const std::string& base_dir, std::string* password) {
  if (r.Has("password") && r.Has("password_file")) {
    r.Fail("password_file", "give password or password_file, not both");
    return;
  }
  std::string key = "password";
  if (r.Has("password")) {
    r.String("password", password);
  } else if (std::string file; r.String("password_file", &file)) {
    key = "password_file";
    std::filesystem::path path(file);
    if (path.is_relative()) path = std::filesystem::path(base_dir) / path;
    std::ifstream in(path, std::ios::binary);
    if (!in) {
      r.Fail("password_file", "cannot read " + Quote(path.lexically_normal().string()) + ": " +
                                  std::strerror(errno));
      return;
    }
    std::getline(in, *password);
    while (!password->empty() && std::isspace(static_cast<unsigned char>(password->back()))) {
      password->pop_back();
    }
  }
  // MQTT 3.1.1 section 3.1.3.5: the password is at most 65535 bytes.
  if (!r.failed() && password->size() > 65535) {
    r.Fail(key, "expected a password of at most 65535 bytes, got " +
                    std::to_string(password->size()));
  }
}

}  // namespace

std::string TopicSlug(std::string_view text) {
  std::string slug;
  bool gap = false;
  for (char c : text) {
    const unsigned char u = static_cast<unsigned char>(c);
    if (std::isalnum(u) && u < 0x80) {
      if (gap && !slug.empty()) slug += '-';
      slug += static_cast<char>(std::tolower(u));
      gap = false;
    } else {
      gap = true;
    }
  }
  return slug.empty() ? "site" : slug;
}

std::string CheckTopicPrefix(std::string_view prefix) {
  if (prefix.empty()) return "expected a topic prefix such as \"ampledger/home\", got \"\"";
  if (prefix.size() > 200) {
    return "expected at most 200 characters, got " + std::to_string(prefix.size());
  }
  if (prefix.front() == '$') {
    return "must not start with '$' (MQTT keeps such topics for the broker), got " +
           Quote(prefix);
  }
  if (prefix.front() == '/' || prefix.back() == '/' ||
      prefix.find("//") != std::string_view::npos) {
    return "expected topic levels joined by '/', none empty, got " + Quote(prefix);
  }
  for (char c : prefix) {
    if (c == '+' || c == '#') {
      return std::string("must not contain the wildcard '") + c + "', got " + Quote(prefix);
    }
    if (static_cast<unsigned char>(c) < 0x20 || c == 0x7f) {
      return "must not contain control characters";
    }
  }
  return "";
}

void ReadMqtt(TableReader& r, const std::string& base_dir, MqttConfig* mqtt) {
  r.AllowOnly({"enabled", "host", "port", "client_id", "topic_prefix", "username", "password",
               "password_file", "keepalive_seconds", "event_qos", "queue_events",
               "live_interval_seconds", "live_change_watts", "live_refresh_seconds",
               "reconnect_first_seconds", "reconnect_max_seconds"});
  r.Bool("enabled", &mqtt->enabled);
  if (r.String("host", &mqtt->host, mqtt->enabled ? Need::kRequired : Need::kOptional) &&
      !IsHostText(mqtt->host)) {
    r.Fail("host", "expected a host name or an IP address (no brackets, no port), got " +
                       Quote(mqtt->host));
  }
  r.Integer("port", &mqtt->port, 1, 65535);
  if (r.String("client_id", &mqtt->client_id) && !IsValidId(mqtt->client_id)) {
    r.Fail("client_id", "expected 1 to 64 letters, digits, '.', '_' or '-', got " +
                            Quote(mqtt->client_id));
  }
  if (r.String("topic_prefix", &mqtt->topic_prefix)) {
    if (std::string why = CheckTopicPrefix(mqtt->topic_prefix); !why.empty()) {
      r.Fail("topic_prefix", why);
    }
  }
  r.String("username", &mqtt->username);
  ReadPassword(r, base_dir, &mqtt->password);
  if (!r.failed() && !mqtt->password.empty() && mqtt->username.empty()) {
    r.Fail(r.Has("password") ? "password" : "password_file",
           "a password needs a username (MQTT 3.1.1 section 3.1.2.9)");
  }
  r.Integer("keepalive_seconds", &mqtt->keepalive_seconds, 5, 3600);
  r.Integer("event_qos", &mqtt->event_qos, 0, 2);
  r.Integer("queue_events", &mqtt->queue_events, 1, 100000);
  // `key` (read as `value`) may not be below `floor_key` (read as `floor`).
  auto at_least = [&r](const char* key, double value, const char* floor_key, double floor) {
    if (r.failed() || value >= floor) return;
    r.Fail(key, std::string("expected at least ") + floor_key + " (" + FormatNumber(floor) +
                    "), got " + FormatNumber(value));
  };
  r.Number("live_interval_seconds", &mqtt->live_interval_seconds, {1, 3600});
  r.Number("live_change_watts", &mqtt->live_change_watts, {0, 1e6});
  r.Number("live_refresh_seconds", &mqtt->live_refresh_seconds, {1, 86400});
  at_least("live_refresh_seconds", mqtt->live_refresh_seconds, "live_interval_seconds",
           mqtt->live_interval_seconds);
  r.Number("reconnect_first_seconds", &mqtt->reconnect_first_seconds, {1, 3600});
  r.Number("reconnect_max_seconds", &mqtt->reconnect_max_seconds, {1, 3600});
  at_least("reconnect_max_seconds", mqtt->reconnect_max_seconds, "reconnect_first_seconds",
           mqtt->reconnect_first_seconds);
}

void FillMqttDefaults(const std::string& site_name, MqttConfig* mqtt) {
  if (mqtt->topic_prefix.empty()) mqtt->topic_prefix = "ampledger/" + TopicSlug(site_name);
  if (mqtt->client_id.empty()) {
    std::string_view prefix = mqtt->topic_prefix;
    std::string id = "ampledger-" + TopicSlug(prefix.substr(prefix.rfind('/') + 1));
    mqtt->client_id = id.substr(0, 64);
  }
}

}  // namespace ampledger
