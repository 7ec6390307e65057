// config/table_reader.h
// TableReader reads typed, range-checked values out of one toml++ table and reports the first
// problem in the config error format (config/key_lines.h). Every reader of one file shares a
// ReadContext, which keeps only the first error: after it, reads do nothing and return false,
// so section readers can read key after key and check the context once at the end.
// Internal to config/ (the only place that includes toml++). Not thread-safe.
#pragma once

#include <date/date.h>
#include <toml++/toml.h>

#include <cstdint>
#include <initializer_list>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "config/key_lines.h"
#include "config/status.h"

namespace ampledger {

class ReadContext {
 public:
  explicit ReadContext(KeyLines* lines) : lines_(lines) {}
  bool failed() const { return !error_.ok(); }
  const Status& error() const { return error_; }
  KeyLines* lines() { return lines_; }
  // Keeps the first error only.
  void Fail(int line, const std::string& path, const std::string& what);
  // Same, at the recorded line of `path` (KeyLines::LineOf).
  void FailPath(const std::string& path, const std::string& what) {
    Fail(lines_->LineOf(path), path, what);
  }
  // Keeps `error` as it is (already in the format, e.g. from another file), if first.
  void FailWith(const Status& error) {
    if (!failed()) error_ = error;
  }

 private:
  KeyLines* lines_;
  Status error_;
};

// An inclusive range of numbers; `above_min` makes the lower end exclusive ("above 0").
struct NumberRange {
  double min = 0;
  double max = 0;
  bool above_min = false;
  bool Contains(double value) const;  // false for NaN
  std::string Describe() const;       // "a number from 0.5 to 2", "a number above 0 up to 1e6"
};

enum class Need { kOptional, kRequired };

// Formats a number the way messages show it: shortest round-trip digits, no exponent.
std::string FormatNumber(double value);

// "a string", "an integer", "a table", ... for messages.
std::string DescribeTomlType(const toml::node& node);

class TableReader {
 public:
  // `path` is the table's key path ("" for the whole file). The table must outlive this.
  TableReader(ReadContext* context, const toml::table& table, std::string path);

  const std::string& path() const { return path_; }
  int line() const { return line_; }
  bool failed() const { return context_->failed(); }
  ReadContext* context() const { return context_; }
  std::string KeyPath(std::string_view key) const;

  // Reports the first key, in file order, not in `allowed`: "unknown key; expected one of
  // ...", or `message` when given (e.g. a known key that does not apply here).
  void AllowOnly(const std::vector<std::string_view>& allowed, const std::string& message = "");
  bool Has(std::string_view key) const { return table_.contains(key); }
  // Fails at the key's line, or for an absent key at the table's line.
  void Fail(std::string_view key, const std::string& what);

  // The readers below leave *out untouched and return false when the key is absent (an error
  // only with Need::kRequired: "missing; expected ...") or after any error. They return true
  // when *out was set from a valid value.
  bool String(std::string_view key, std::string* out, Need need = Need::kOptional);
  bool Id(std::string_view key, std::string* out);  // always required; see IsValidId
  bool Number(std::string_view key, double* out, NumberRange range, Need need = Need::kOptional);
  bool Integer(std::string_view key, std::int64_t* out, std::int64_t min, std::int64_t max,
               Need need = Need::kOptional);
  template <typename Int>
  bool Integer(std::string_view key, Int* out, std::int64_t min, std::int64_t max,
               Need need = Need::kOptional) {
    std::int64_t value = 0;
    if (!Integer(key, &value, min, max, need)) return false;
    *out = static_cast<Int>(value);
    return true;
  }
  bool Bool(std::string_view key, bool* out);
  // A TOML local date, written without quotes: 2026-06-01.
  bool Date(std::string_view key, date::year_month_day* out, Need need = Need::kOptional);
  bool Strings(std::string_view key, std::vector<std::string>* out, Need need = Need::kOptional);
  bool Numbers(std::string_view key, std::vector<double>* out, NumberRange range,
               Need need = Need::kOptional);
  // A string that must be one of `names`; sets *out to the matching value.
  template <typename E>
  bool Choice(std::string_view key, std::initializer_list<std::pair<std::string_view, E>> names,
              E* out, Need need = Need::kOptional) {
    std::string text;
    if (!String(key, &text, need)) return false;
    for (const auto& [name, value] : names) {
      if (name == text) {
        *out = value;
        return true;
      }
    }
    std::string expected = "expected one of";
    for (const auto& entry : names)
      expected += std::string(" \"") + std::string(entry.first) + "\",";
    expected.back() = ';';
    Fail(key, expected + " got \"" + text + "\"");
    return false;
  }

  // A sub-table written [name]; nullptr when absent or on error. `header` is how it is
  // written, for messages: "[site]".
  const toml::table* Table(std::string_view key, std::string_view header,
                           Need need = Need::kOptional);
  // An array of tables written [[name]]; empty when absent or on error.
  std::vector<const toml::table*> Tables(std::string_view key, std::string_view header,
                                         Need need = Need::kOptional);

 private:
  // The value of `key`, after recording its line; nullptr when absent (and reported as missing
  // with `expected` when required) or when an earlier error stopped reading.
  const toml::node* Get(std::string_view key, Need need, const std::string& expected);
  void FailAt(const toml::node& node, const std::string& path, const std::string& what);

  ReadContext* context_;
  const toml::table& table_;
  std::string path_;
  int line_;
};

// Ids of nodes, channels, circuits, units and alert rules: 1..64 of A-Z a-z 0-9 . _ -
// (they appear in SenML names, URLs and file names).
bool IsValidId(std::string_view id);

}  // namespace ampledger
