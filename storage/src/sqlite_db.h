// Thin RAII owners of a SQLite connection and a prepared statement, private to storage/: the one
// place that touches sqlite3.h. Errors come back as Status naming the SQL step and SQLite's text.
// Thread-safety: a Db and its statements are used by one thread at a time (each connection is
// opened with SQLITE_OPEN_NOMUTEX; the store gives the writer and each reader their own
// connection).
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "spinward/estimators/result.h"

namespace spinward::storage::internal {

// SQLite's primary result code of a failure, kept so callers can tell a full disk or a locked
// database (worth retrying) from a bad statement (not worth retrying).
struct SqlError {
  int code = SQLITE_OK;
  std::string message;
};

class Statement {
 public:
  Statement() = default;
  explicit Statement(sqlite3_stmt* stmt) : stmt_(stmt) {}
  Statement(Statement&& other) noexcept : stmt_(other.stmt_) { other.stmt_ = nullptr; }
  Statement& operator=(Statement&& other) noexcept;
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;
  ~Statement();

  Statement& Bind(int index, std::int64_t value);
  Statement& Bind(int index, double value);
  Statement& Bind(int index, std::string_view text);
  Statement& BindBlob(int index, const void* data, std::size_t size);
  Statement& BindNull(int index);
  Statement& BindOptional(int index, const std::optional<double>& value);

  // Steps once: SQLITE_ROW, SQLITE_DONE or an error code.
  int Step();
  void Reset();

  std::int64_t Int(int column) const;
  double Real(int column) const;
  std::string Text(int column) const;
  bool IsNull(int column) const;
  std::string Blob(int column) const;  // bytes as a string
  sqlite3_stmt* get() const { return stmt_; }

 private:
  sqlite3_stmt* stmt_ = nullptr;
};

class Db {
 public:
  Db() = default;
  Db(Db&& other) noexcept : db_(other.db_) { other.db_ = nullptr; }
  Db& operator=(Db&& other) noexcept;
  Db(const Db&) = delete;
  Db& operator=(const Db&) = delete;
  ~Db();

  // Opens (read-write, creating when asked, or read-only). Never truncates or rewrites a file.
  static Result<Db> Open(const std::string& path, bool read_only, bool create);

  Status Exec(std::string_view sql);
  // Like Exec, with the SQLite result code kept for retry decisions.
  std::optional<SqlError> ExecCoded(std::string_view sql);
  Result<Statement> Prepare(std::string_view sql);
  // First column of the first row as an integer (e.g. a PRAGMA's value).
  Result<std::int64_t> QueryInt(std::string_view sql);
  std::string ErrorMessage() const;
  int ErrorCode() const;
  std::int64_t Changes() const;
  std::int64_t LastInsertRowid() const;
  sqlite3* get() const { return db_; }

 private:
  explicit Db(sqlite3* db) : db_(db) {}
  sqlite3* db_ = nullptr;
};

// True for failures that a later retry may get past: disk full, I/O error, locked or busy database.
bool IsRetryable(int code);

}  // namespace spinward::storage::internal
