#include "sqlite_db.h"

#include <utility>

namespace spinward::storage::internal {

Statement& Statement::operator=(Statement&& other) noexcept {
  if (this != &other) {
    sqlite3_finalize(stmt_);
    stmt_ = std::exchange(other.stmt_, nullptr);
  }
  return *this;
}

Statement::~Statement() { sqlite3_finalize(stmt_); }

Statement& Statement::Bind(int index, std::int64_t value) {
  sqlite3_bind_int64(stmt_, index, value);
  return *this;
}
Statement& Statement::Bind(int index, double value) {
  sqlite3_bind_double(stmt_, index, value);
  return *this;
}
Statement& Statement::Bind(int index, std::string_view text) {
  sqlite3_bind_text(stmt_, index, text.data(), static_cast<int>(text.size()), SQLITE_TRANSIENT);
  return *this;
}
Statement& Statement::BindBlob(int index, const void* data, std::size_t size) {
  sqlite3_bind_blob(stmt_, index, data, static_cast<int>(size), SQLITE_TRANSIENT);
  return *this;
}
Statement& Statement::BindNull(int index) {
  sqlite3_bind_null(stmt_, index);
  return *this;
}
Statement& Statement::BindOptional(int index, const std::optional<double>& value) {
  return value ? Bind(index, *value) : BindNull(index);
}

int Statement::Step() { return sqlite3_step(stmt_); }

void Statement::Reset() {
  sqlite3_reset(stmt_);
  sqlite3_clear_bindings(stmt_);
}

std::int64_t Statement::Int(int column) const { return sqlite3_column_int64(stmt_, column); }
double Statement::Real(int column) const { return sqlite3_column_double(stmt_, column); }
std::string Statement::Text(int column) const {
  const unsigned char* text = sqlite3_column_text(stmt_, column);
  if (text == nullptr) return {};
  return std::string(reinterpret_cast<const char*>(text),
                     static_cast<std::size_t>(sqlite3_column_bytes(stmt_, column)));
}
bool Statement::IsNull(int column) const {
  return sqlite3_column_type(stmt_, column) == SQLITE_NULL;
}
std::string Statement::Blob(int column) const {
  const void* data = sqlite3_column_blob(stmt_, column);
  if (data == nullptr) return {};
  return std::string(static_cast<const char*>(data),
                     static_cast<std::size_t>(sqlite3_column_bytes(stmt_, column)));
}

Db& Db::operator=(Db&& other) noexcept {
  if (this != &other) {
    sqlite3_close_v2(db_);
    db_ = std::exchange(other.db_, nullptr);
  }
  return *this;
}

Db::~Db() { sqlite3_close_v2(db_); }

Result<Db> Db::Open(const std::string& path, bool read_only, bool create) {
  int flags = SQLITE_OPEN_NOMUTEX;
  flags |= read_only ? SQLITE_OPEN_READONLY : SQLITE_OPEN_READWRITE;
  if (!read_only && create) flags |= SQLITE_OPEN_CREATE;
  sqlite3* raw = nullptr;
  int rc = sqlite3_open_v2(path.c_str(), &raw, flags, nullptr);
  Db db(raw);
  if (rc != SQLITE_OK) {
    std::string why = raw != nullptr ? sqlite3_errmsg(raw) : sqlite3_errstr(rc);
    return Error{"cannot open database '" + path + "': " + why};
  }
  sqlite3_extended_result_codes(raw, 0);
  return db;
}

Status Db::Exec(std::string_view sql) {
  if (auto error = ExecCoded(sql)) return Status::Fail(error->message);
  return Status::Ok();
}

std::optional<SqlError> Db::ExecCoded(std::string_view sql) {
  char* message = nullptr;
  int rc = sqlite3_exec(db_, std::string(sql).c_str(), nullptr, nullptr, &message);
  if (rc == SQLITE_OK) return std::nullopt;
  SqlError error{rc, message != nullptr ? message : sqlite3_errstr(rc)};
  sqlite3_free(message);
  return error;
}

Result<Statement> Db::Prepare(std::string_view sql) {
  sqlite3_stmt* stmt = nullptr;
  int rc = sqlite3_prepare_v2(db_, sql.data(), static_cast<int>(sql.size()), &stmt, nullptr);
  if (rc != SQLITE_OK) {
    return Error{"cannot prepare SQL '" + std::string(sql.substr(0, 60)) + "': " + ErrorMessage()};
  }
  return Statement(stmt);
}

Result<std::int64_t> Db::QueryInt(std::string_view sql) {
  auto stmt = Prepare(sql);
  if (!stmt) return stmt.status();
  int rc = stmt->Step();
  if (rc == SQLITE_ROW) return stmt->Int(0);
  if (rc == SQLITE_DONE) return Error{"SQL '" + std::string(sql) + "' returned no row"};
  return Error{"SQL '" + std::string(sql) + "' failed: " + ErrorMessage()};
}

std::string Db::ErrorMessage() const {
  return db_ != nullptr ? sqlite3_errmsg(db_) : "no database";
}
int Db::ErrorCode() const { return db_ != nullptr ? sqlite3_errcode(db_) : SQLITE_MISUSE; }
std::int64_t Db::Changes() const { return sqlite3_changes64(db_); }
std::int64_t Db::LastInsertRowid() const { return sqlite3_last_insert_rowid(db_); }

bool IsRetryable(int code) {
  switch (code & 0xff) {
    case SQLITE_FULL:
    case SQLITE_IOERR:
    case SQLITE_BUSY:
    case SQLITE_LOCKED:
    case SQLITE_CANTOPEN:
      return true;
    default:
      return false;
  }
}

}  // namespace spinward::storage::internal
