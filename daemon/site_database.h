// daemon/site_database.h
// What the CLI commands that write to a site's database start with: load the config and open
// its database for writing (creating and migrating it if needed), saying what failed on `err`.
#pragma once

#include <memory>
#include <ostream>
#include <string>

#include "config/config.h"
#include "storage/database.h"

namespace ampledger {

// 0 on success; 2 if the config is wrong, 1 if the database cannot be opened (the commands'
// exit codes).
int OpenSiteDatabase(const std::string& config_path, Config* config,
                     std::unique_ptr<Database>* db, std::ostream& err);

}  // namespace ampledger
