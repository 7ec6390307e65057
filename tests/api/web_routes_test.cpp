// The dashboard's files as the daemon serves them: through a real HttpServer on 127.0.0.1,
// byte for byte what api/web/ holds, with the right Content-Type and the security headers; and
// every file the page refers to is embedded.
#include "api/web_routes.h"

#include <doctest/doctest.h>
#include <httplib.h>

#include <filesystem>
#include <nlohmann/json.hpp>
#include <regex>
#include <set>
#include <string>

#include "api/web_assets.h"
#include "test_util.h"

namespace ampledger {
namespace {

struct WebFixture {
  WebFixture() : server(Config()) {
    AddWebRoutes(server);
    REQUIRE(server.Start().ok());
    client = std::make_unique<httplib::Client>("127.0.0.1", server.port());
  }
  static HttpConfig Config() {
    HttpConfig config;
    config.listen = "127.0.0.1:0";
    config.threads = 2;
    return config;
  }
  HttpServer server;
  std::unique_ptr<httplib::Client> client;
};

std::filesystem::path WebDir() { return testing::SourceDir() / "api" / "web"; }

std::set<std::string> EmbeddedNames() {
  std::set<std::string> names;
  for (const WebAsset& asset : WebAssets()) names.insert(asset.name);
  return names;
}

TEST_SUITE("api") {
  TEST_CASE("every file in api/web is embedded and served byte for byte with its type") {
    WebFixture web;
    std::set<std::string> on_disk;
    for (const auto& entry : std::filesystem::directory_iterator(WebDir())) {
      on_disk.insert(entry.path().filename().string());
    }
    CHECK(EmbeddedNames() == on_disk);
    // Content types: RFC 9110 section 8.3 and the IANA media types registry (text/html,
    // text/css, text/javascript per RFC 9239, image/svg+xml).
    const std::map<std::string, std::string> types = {{".html", "text/html; charset=utf-8"},
                                                      {".css", "text/css; charset=utf-8"},
                                                      {".js", "text/javascript; charset=utf-8"},
                                                      {".svg", "image/svg+xml"}};
    for (const std::string& name : on_disk) {
      CAPTURE(name);
      auto answer = web.client->Get(("/static/" + name).c_str());
      REQUIRE(answer);
      CHECK(answer->status == 200);
      CHECK(answer->body == testing::ReadFile(WebDir() / name));
      CHECK(answer->get_header_value("Content-Type") ==
            types.at(std::filesystem::path(name).extension().string()));
      CHECK(answer->get_header_value("Content-Security-Policy") ==
            kDashboardContentSecurityPolicy);
      CHECK(answer->get_header_value("Cache-Control") == "no-cache");
      CHECK(answer->get_header_value("X-Content-Type-Options") == "nosniff");
    }
  }

  TEST_CASE("GET / is the page, needs no token, and its policy allows no inline script") {
    WebFixture web;
    auto answer = web.client->Get("/");
    REQUIRE(answer);
    CHECK(answer->status == 200);
    CHECK(answer->get_header_value("Content-Type") == "text/html; charset=utf-8");
    CHECK(answer->body == testing::ReadFile(WebDir() / "index.html"));
    const std::string policy = answer->get_header_value("Content-Security-Policy");
    CHECK(policy.find("script-src 'self'") != std::string::npos);
    CHECK(policy.find("default-src 'none'") != std::string::npos);
    CHECK(policy.find("unsafe") == std::string::npos);
    // Every <script> has a src: CSP without 'unsafe-inline' would block an inline one.
    const std::regex inline_script("<script(?![^>]*\\bsrc=)[^>]*>");
    CHECK_FALSE(std::regex_search(answer->body, inline_script));
  }

  TEST_CASE("the page and its modules refer only to embedded files") {
    const std::set<std::string> embedded = EmbeddedNames();
    const std::regex static_ref("/static/([A-Za-z0-9_.-]+)");
    const std::string index = testing::ReadFile(WebDir() / "index.html");
    int references = 0;
    for (std::sregex_iterator it(index.begin(), index.end(), static_ref), end; it != end; ++it) {
      CAPTURE((*it)[1].str());
      CHECK(embedded.count((*it)[1].str()) == 1);
      ++references;
    }
    CHECK(references >= 3);  // icon, stylesheet, entry module
    const std::regex import_ref("from '\\./([A-Za-z0-9_.-]+)'");
    for (const std::string& name : embedded) {
      if (std::filesystem::path(name).extension() != ".js") continue;
      const std::string module = testing::ReadFile(WebDir() / name);
      for (std::sregex_iterator it(module.begin(), module.end(), import_ref), end; it != end;
           ++it) {
        CAPTURE(name);
        CAPTURE((*it)[1].str());
        CHECK(embedded.count((*it)[1].str()) == 1);
      }
    }
  }

  TEST_CASE("unknown and malformed static paths are 404 problems, never file reads") {
    WebFixture web;
    for (const char* path : {"/static/nothing.js", "/static/../CMakeLists.txt",
                             "/static/%2e%2e/api/web_routes.cpp", "/static/", "/static/a/b.js"}) {
      CAPTURE(path);
      auto answer = web.client->Get(path);
      REQUIRE(answer);
      CHECK(answer->status == 404);
      CHECK(answer->get_header_value("Content-Type") == "application/problem+json");
      auto problem = nlohmann::json::parse(answer->body);
      CHECK(problem["status"] == 404);
    }
    auto posted = web.client->Post("/", "", "text/plain");
    REQUIRE(posted);
    CHECK(posted->status == 405);
  }
}

}  // namespace
}  // namespace ampledger
