// tests/api/openapi_routes.h
// "METHOD /path/{}/..." for every route a server registers and every operation the OpenAPI
// document (api/openapi.json) lists, so tests can compare the two: a regex group in a route
// pattern and a {name} in a documented path both become "{}".
#pragma once

#include <cctype>
#include <nlohmann/json.hpp>
#include <regex>
#include <set>
#include <string>

#include "api/http_server.h"

namespace ampledger::testing {

inline std::set<std::string> ServedRoutes(const HttpServer& server) {
  std::set<std::string> served;
  for (const auto& [method, pattern] : server.Routes()) {
    served.insert(method + " " + std::regex_replace(pattern, std::regex(R"(\([^)]*\))"), "{}"));
  }
  return served;
}

inline std::set<std::string> DocumentedRoutes(const nlohmann::json& document) {
  std::set<std::string> documented;
  for (const auto& [path, item] : document["paths"].items()) {
    for (const auto& [method, operation] : item.items()) {
      std::string upper = method;
      for (char& c : upper) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
      documented.insert(upper + " " + std::regex_replace(path, std::regex(R"(\{[^}]+\})"), "{}"));
    }
  }
  return documented;
}

}  // namespace ampledger::testing
