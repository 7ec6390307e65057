// config/status.h
// Status and Result<T>: the one error convention of every layer. A Status is a code and a
// message; OK carries no message and costs one byte. Result<T> holds a T or a non-OK Status.
// No exception crosses a module boundary: library throws are caught where called and turned
// into a Status. Both types are plain values, safe to copy between threads.
#pragma once

#include <cassert>
#include <string>
#include <utility>
#include <variant>

namespace ampledger {

enum class StatusCode {
  kOk = 0,
  kInvalidArgument,  // the input is wrong; retrying the same input fails the same way
  kNotFound,         // a named thing does not exist
  kUnavailable,      // not now: full queue, stopped writer, busy database; may succeed later
  kIOError,          // the operating system or SQLite failed to read or write
  kCorruption,       // stored data is not what we wrote
};

class [[nodiscard]] Status {
 public:
  Status() = default;  // OK
  static Status Ok() { return Status(); }
  static Status InvalidArgument(std::string message) {
    return Status(StatusCode::kInvalidArgument, std::move(message));
  }
  static Status NotFound(std::string message) {
    return Status(StatusCode::kNotFound, std::move(message));
  }
  static Status Unavailable(std::string message) {
    return Status(StatusCode::kUnavailable, std::move(message));
  }
  static Status IOError(std::string message) {
    return Status(StatusCode::kIOError, std::move(message));
  }
  static Status Corruption(std::string message) {
    return Status(StatusCode::kCorruption, std::move(message));
  }

  bool ok() const { return code_ == StatusCode::kOk; }
  StatusCode code() const { return code_; }
  const std::string& message() const { return message_; }

  // "invalid argument: <message>", or "OK".
  std::string ToString() const;

  // Returns a copy whose message is "<context>: <message>"; OK stays OK.
  Status WithContext(const std::string& context) const;

 private:
  Status(StatusCode code, std::string message) : code_(code), message_(std::move(message)) {
    assert(code != StatusCode::kOk);
  }

  StatusCode code_ = StatusCode::kOk;
  std::string message_;
};

const char* StatusCodeName(StatusCode code);

// A T or a non-OK Status. Reading value() of an error, or status() of a value, is a bug.
template <typename T>
class [[nodiscard]] Result {
 public:
  Result(T value) : state_(std::move(value)) {}  // NOLINT: implicit by design
  Result(Status status) : state_(std::move(status)) {  // NOLINT: implicit by design
    assert(!std::get<Status>(state_).ok());
  }

  bool ok() const { return std::holds_alternative<T>(state_); }
  const Status& status() const {
    static const Status kOkStatus;
    return ok() ? kOkStatus : std::get<Status>(state_);
  }
  T& value() & { return std::get<T>(state_); }
  const T& value() const& { return std::get<T>(state_); }
  T&& value() && { return std::get<T>(std::move(state_)); }
  T* operator->() { return &value(); }
  const T* operator->() const { return &value(); }
  T& operator*() & { return value(); }
  const T& operator*() const& { return value(); }

 private:
  std::variant<T, Status> state_;
};

}  // namespace ampledger
