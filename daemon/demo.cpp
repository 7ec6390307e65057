#include "daemon/demo.h"

#include <spdlog/spdlog.h>
#include <stdlib.h>

#include <filesystem>
#include <fstream>

#include "api/token.h"
#include "config/wall_clock.h"
#include "daemon/demo_config.h"
#include "storage/database.h"

namespace ampledger {

namespace {

Result<std::string> MakeDemoDir(const std::string& keep_dir) {
  std::error_code error;
  if (!keep_dir.empty()) {
    std::filesystem::create_directories(keep_dir, error);
    if (error) return Status::IOError("cannot create " + keep_dir + ": " + error.message());
    return std::filesystem::absolute(keep_dir).string();
  }
  std::string pattern = (std::filesystem::temp_directory_path() / "ampledger-demo-XXXXXX").string();
  if (::mkdtemp(pattern.data()) == nullptr) {
    return Status::IOError("cannot create a temporary folder for the demo");
  }
  return pattern;
}

Status WriteText(const std::string& path, const char* text) {
  std::ofstream out(path);
  out << text;
  return out ? Status::Ok() : Status::IOError("cannot write " + path);
}

}  // namespace

Result<Config> PrepareDemo(const DemoOptions& options) {
  Result<std::string> dir = MakeDemoDir(options.keep_dir);
  if (!dir.ok()) return dir.status();
  const std::string config_path = *dir + "/" + kDemoConfigPath;
  for (auto [path, text] : {std::pair{kDemoConfigPath, kDemoConfigToml},
                            std::pair{kDemoKeyPath, kDemoKey},
                            std::pair{kDemoTariffPath, kDemoTariff}}) {
    std::filesystem::path file = std::filesystem::path(*dir) / path;
    std::error_code error;
    std::filesystem::create_directories(file.parent_path(), error);
    if (Status written = WriteText(file.string(), text); !written.ok()) return written;
  }
  Result<Config> config = LoadConfig(config_path);
  if (!config.ok()) return config.status();
  config->ingest.listen = options.udp_listen;
  // The simulated nodes backfill two weeks of history, older than the usual resend horizon.
  config->ingest.resend_horizon_seconds = 30 * 86400;
  config->http.listen = options.http_listen;
  spdlog::info("demo site \"{}\": config and database in {}/examples, tariff in {}/tariffs",
               config->site.name, *dir, *dir);
  return config;
}

}  // namespace ampledger

namespace ampledger {

Status AnnounceDemoToken(const Config& config, const std::string& http_listen) {
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  if (!db.ok()) return db.status();
  Result<IssuedToken> token =
      IssueToken(**db, Scope{Scope::Kind::kViewer, ""}, "demo", WallClockMs());
  if (!token.ok()) return token.status();
  spdlog::info("try: curl -H 'Authorization: Bearer {}' http://{}/v1/live (also /v1/site, "
               "/v1/nodes, /v1/circuits); Ctrl-C stops the demo",
               token->token, http_listen);
  // The token rides in the fragment, which the browser never sends: the page keeps it for the
  // tab (sessionStorage) and clears it from the address bar.
  spdlog::info("dashboard: open http://{}/#token={} in a browser", http_listen, token->token);
  return Status::Ok();
}

}  // namespace ampledger
