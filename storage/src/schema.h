// The schema's migrations, one SQL script per version step, applied inside one transaction.
// docs/storage.md describes every version; a step, once released, is never edited.
// Thread-safety: called by the store's opener only.
#pragma once

#include "spinward/estimators/result.h"
#include "sqlite_db.h"

namespace spinward::storage::internal {

// Brings the database from its user_version to `target` (<= kSchemaVersion) in one IMMEDIATE
// transaction; a no-op when already there. Fails on a version newer than kSchemaVersion.
Status Migrate(Db& db, const std::string& path, int target);

}  // namespace spinward::storage::internal
