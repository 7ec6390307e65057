// config/table_reader.cpp
#include "config/table_reader.h"

#include <charconv>
#include <cmath>

namespace ampledger {

namespace {

constexpr const char* kIdExpected = "expected an id of 1 to 64 letters, digits, '.', '_' or '-'";

int LineOf(const toml::source_region& region) {
  return static_cast<int>(region.begin.line);
}

}  // namespace

void ReadContext::Fail(int line, const std::string& path, const std::string& what) {
  if (failed()) return;
  error_ = Status::InvalidArgument(KeyLines::Format(lines_->source(), line, path, what));
}

bool NumberRange::Contains(double value) const {
  if (std::isnan(value)) return false;
  if (above_min ? value <= min : value < min) return false;
  return value <= max;
}

std::string NumberRange::Describe() const {
  return std::string("a number ") + (above_min ? "above " : "from ") + FormatNumber(min) +
         (above_min ? " up to " : " to ") + FormatNumber(max);
}

std::string FormatNumber(double value) {
  char buffer[64];
  auto [end, error] =
      std::to_chars(buffer, buffer + sizeof buffer, value, std::chars_format::fixed);
  if (error != std::errc()) return "?";
  return std::string(buffer, end);
}

std::string DescribeTomlType(const toml::node& node) {
  switch (node.type()) {
    case toml::node_type::table: return "a table";
    case toml::node_type::array: return "an array";
    case toml::node_type::string: return "a string";
    case toml::node_type::integer: return "an integer";
    case toml::node_type::floating_point: return "a floating-point number";
    case toml::node_type::boolean: return "a boolean";
    case toml::node_type::date: return "a date";
    case toml::node_type::time: return "a time";
    case toml::node_type::date_time: return "a date-time";
    case toml::node_type::none: break;
  }
  return "nothing";
}

bool IsValidId(std::string_view id) {
  if (id.empty() || id.size() > 64) return false;
  for (char c : id) {
    bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
              c == '.' || c == '_' || c == '-';
    if (!ok) return false;
  }
  return true;
}

TableReader::TableReader(ReadContext* context, const toml::table& table, std::string path)
    : context_(context),
      table_(table),
      path_(std::move(path)),
      // The whole file has no line of its own: a missing top-level table is reported without one.
      line_(path_.empty() ? 0 : LineOf(table.source())) {
  if (!path_.empty()) context_->lines()->Set(path_, line_);
}

std::string TableReader::KeyPath(std::string_view key) const {
  return path_.empty() ? std::string(key) : path_ + "." + std::string(key);
}

void TableReader::AllowOnly(const std::vector<std::string_view>& allowed,
                            const std::string& message) {
  for (auto&& [key, value] : table_) {
    bool known = false;
    for (std::string_view name : allowed) known = known || key.str() == name;
    if (known) continue;
    std::string expected;
    for (std::string_view name : allowed) {
      expected += (expected.empty() ? "" : ", ") + std::string(name);
    }
    context_->Fail(LineOf(key.source()), KeyPath(key.str()),
                   message.empty() ? "unknown key; expected one of " + expected : message);
    return;
  }
}

void TableReader::Fail(std::string_view key, const std::string& what) {
  const toml::node* node = table_.get(key);
  context_->Fail(node ? LineOf(node->source()) : line_, KeyPath(key), what);
}

void TableReader::FailAt(const toml::node& node, const std::string& path, const std::string& what) {
  context_->Fail(LineOf(node.source()), path, what);
}

const toml::node* TableReader::Get(std::string_view key, Need need, const std::string& expected) {
  if (failed()) return nullptr;
  const toml::node* node = table_.get(key);
  if (node == nullptr) {
    if (need == Need::kRequired) context_->Fail(line_, KeyPath(key), "missing; " + expected);
    return nullptr;
  }
  context_->lines()->Set(KeyPath(key), LineOf(node->source()));
  return node;
}

bool TableReader::String(std::string_view key, std::string* out, Need need) {
  const toml::node* node = Get(key, need, "expected a string");
  if (node == nullptr) return false;
  if (!node->is_string()) {
    FailAt(*node, KeyPath(key), "expected a string, got " + DescribeTomlType(*node));
    return false;
  }
  *out = node->as_string()->get();
  return true;
}

bool TableReader::Id(std::string_view key, std::string* out) {
  std::string id;
  if (!String(key, &id, Need::kRequired)) return false;
  if (!IsValidId(id)) {
    Fail(key, std::string(kIdExpected) + ", got \"" + id + "\"");
    return false;
  }
  *out = id;
  return true;
}

bool TableReader::Number(std::string_view key, double* out, NumberRange range, Need need) {
  const std::string expected = "expected " + range.Describe();
  const toml::node* node = Get(key, need, expected);
  if (node == nullptr) return false;
  double value = 0;
  if (const auto* integer = node->as_integer()) {
    value = static_cast<double>(integer->get());
  } else if (const auto* floating = node->as_floating_point()) {
    value = floating->get();
  } else {
    FailAt(*node, KeyPath(key), expected + ", got " + DescribeTomlType(*node));
    return false;
  }
  if (!range.Contains(value)) {
    FailAt(*node, KeyPath(key), expected + ", got " + FormatNumber(value));
    return false;
  }
  *out = value;
  return true;
}

bool TableReader::Integer(std::string_view key, std::int64_t* out, std::int64_t min,
                          std::int64_t max, Need need) {
  const std::string expected =
      "expected an integer from " + std::to_string(min) + " to " + std::to_string(max);
  const toml::node* node = Get(key, need, expected);
  if (node == nullptr) return false;
  const auto* integer = node->as_integer();
  if (integer == nullptr) {
    FailAt(*node, KeyPath(key), expected + ", got " + DescribeTomlType(*node));
    return false;
  }
  std::int64_t value = integer->get();
  if (value < min || value > max) {
    FailAt(*node, KeyPath(key), expected + ", got " + std::to_string(value));
    return false;
  }
  *out = value;
  return true;
}

bool TableReader::Bool(std::string_view key, bool* out) {
  const toml::node* node = Get(key, Need::kOptional, "");
  if (node == nullptr) return false;
  if (!node->is_boolean()) {
    FailAt(*node, KeyPath(key), "expected true or false, got " + DescribeTomlType(*node));
    return false;
  }
  *out = node->as_boolean()->get();
  return true;
}

bool TableReader::Date(std::string_view key, date::year_month_day* out, Need need) {
  const std::string expected = "expected a date such as 2026-06-01 (written without quotes)";
  const toml::node* node = Get(key, need, expected);
  if (node == nullptr) return false;
  const auto* value = node->as_date();
  if (value == nullptr) {
    FailAt(*node, KeyPath(key), expected + ", got " + DescribeTomlType(*node));
    return false;
  }
  // toml++ has already refused impossible dates such as 2026-02-30.
  const toml::date& d = value->get();
  *out = date::year{d.year} / date::month{d.month} / date::day{d.day};
  return true;
}

bool TableReader::Strings(std::string_view key, std::vector<std::string>* out, Need need) {
  const toml::node* node = Get(key, need, "expected an array of strings");
  if (node == nullptr) return false;
  const toml::array* array = node->as_array();
  if (array == nullptr) {
    FailAt(*node, KeyPath(key), "expected an array of strings, got " + DescribeTomlType(*node));
    return false;
  }
  std::vector<std::string> values;
  for (size_t i = 0; i < array->size(); ++i) {
    const toml::node& element = *array->get(i);
    std::string path = KeyPath(key) + "[" + std::to_string(i) + "]";
    context_->lines()->Set(path, LineOf(element.source()));
    if (!element.is_string()) {
      FailAt(element, path, "expected a string, got " + DescribeTomlType(element));
      return false;
    }
    values.push_back(element.as_string()->get());
  }
  *out = std::move(values);
  return true;
}

bool TableReader::Numbers(std::string_view key, std::vector<double>* out, NumberRange range,
                          Need need) {
  const std::string expected = "expected an array of numbers, each " + range.Describe();
  const toml::node* node = Get(key, need, expected);
  if (node == nullptr) return false;
  const toml::array* array = node->as_array();
  if (array == nullptr) {
    FailAt(*node, KeyPath(key), expected + ", got " + DescribeTomlType(*node));
    return false;
  }
  std::vector<double> values;
  for (size_t i = 0; i < array->size(); ++i) {
    const toml::node& element = *array->get(i);
    std::string path = KeyPath(key) + "[" + std::to_string(i) + "]";
    context_->lines()->Set(path, LineOf(element.source()));
    double value = 0;
    if (const auto* integer = element.as_integer()) {
      value = static_cast<double>(integer->get());
    } else if (const auto* floating = element.as_floating_point()) {
      value = floating->get();
    } else {
      FailAt(element, path, "expected " + range.Describe() + ", got " + DescribeTomlType(element));
      return false;
    }
    if (!range.Contains(value)) {
      FailAt(element, path, "expected " + range.Describe() + ", got " + FormatNumber(value));
      return false;
    }
    values.push_back(value);
  }
  *out = std::move(values);
  return true;
}

const toml::table* TableReader::Table(std::string_view key, std::string_view header, Need need) {
  const std::string expected = "expected a table (" + std::string(header) + ")";
  const toml::node* node = Get(key, need, expected);
  if (node == nullptr) return nullptr;
  if (!node->is_table()) {
    FailAt(*node, KeyPath(key), expected + ", got " + DescribeTomlType(*node));
    return nullptr;
  }
  return node->as_table();
}

std::vector<const toml::table*> TableReader::Tables(std::string_view key, std::string_view header,
                                                    Need need) {
  const std::string expected = "expected an array of tables (" + std::string(header) + ")";
  const toml::node* node = Get(key, need, expected);
  if (node == nullptr) return {};
  const toml::array* array = node->as_array();
  if (array == nullptr) {
    FailAt(*node, KeyPath(key), expected + ", got " + DescribeTomlType(*node));
    return {};
  }
  std::vector<const toml::table*> tables;
  for (size_t i = 0; i < array->size(); ++i) {
    const toml::node& element = *array->get(i);
    if (!element.is_table()) {
      FailAt(element, KeyPath(key) + "[" + std::to_string(i) + "]",
             expected + ", got " + DescribeTomlType(element));
      return {};
    }
    tables.push_back(element.as_table());
  }
  return tables;
}

}  // namespace ampledger
