// Errors as values. Every folder's public interface returns Status or Result<T> instead of throwing,
// so a bad parameter, a broken file or a full disk becomes a message the caller can log and survive.
// This header lives in estimators/ because estimators is the one folder everything else may depend on.
// Thread-safety: plain values; safe to copy between threads.
#pragma once

#include <cassert>
#include <optional>
#include <string>
#include <utility>
#include <variant>

namespace spinward {

struct Error {
  std::string message;  // one line, names the thing that is wrong and its value
};

class [[nodiscard]] Status {
 public:
  Status() = default;
  static Status Ok() { return Status(); }
  static Status Fail(std::string message) { return Status(Error{std::move(message)}); }
  Status(Error error) : error_(std::move(error)) {}  // NOLINT: implicit on purpose, `return Error{..}`

  bool ok() const { return !error_.has_value(); }
  explicit operator bool() const { return ok(); }
  const std::string& message() const {
    static const std::string kEmpty;
    return error_ ? error_->message : kEmpty;
  }
  void IgnoreError() const {}

 private:
  std::optional<Error> error_;
};

template <typename T>
class [[nodiscard]] Result {
 public:
  Result(T value) : value_(std::move(value)) {}        // NOLINT: implicit on purpose
  Result(Error error) : value_(std::move(error)) {}    // NOLINT: implicit on purpose
  Result(Status status) : value_(Error{status.message()}) { assert(!status.ok()); }  // NOLINT

  bool ok() const { return std::holds_alternative<T>(value_); }
  explicit operator bool() const { return ok(); }
  const T& value() const& { return std::get<T>(value_); }
  T& value() & { return std::get<T>(value_); }
  T&& value() && { return std::get<T>(std::move(value_)); }
  const T& operator*() const& { return value(); }
  T& operator*() & { return value(); }
  const T* operator->() const { return &value(); }
  T* operator->() { return &value(); }
  const std::string& message() const {
    static const std::string kEmpty;
    return ok() ? kEmpty : std::get<Error>(value_).message;
  }
  Status status() const { return ok() ? Status::Ok() : Status::Fail(message()); }

 private:
  std::variant<T, Error> value_;
};

}  // namespace spinward
