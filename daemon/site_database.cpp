// daemon/site_database.cpp
#include "daemon/site_database.h"

namespace ampledger {

int OpenSiteDatabase(const std::string& config_path, Config* config,
                     std::unique_ptr<Database>* db, std::ostream& err) {
  Result<Config> loaded = LoadConfig(config_path);
  if (!loaded.ok()) {
    err << "ampledger: " << loaded.status().message() << "\n";
    return 2;
  }
  *config = std::move(loaded).value();
  Result<std::unique_ptr<Database>> opened = Database::Open(config->storage);
  if (!opened.ok()) {
    err << "ampledger: " << opened.status().ToString() << "\n";
    return 1;
  }
  *db = std::move(opened).value();
  return 0;
}

}  // namespace ampledger
