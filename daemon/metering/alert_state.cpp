// daemon/metering/alert_state.cpp
#include "daemon/metering/alert_state.h"

#include <array>
#include <charconv>
#include <vector>

namespace ampledger {

namespace {

constexpr std::array<const char*, 5> kPhaseNames = {"calm", "holding", "raised", "running",
                                                    "quieting"};

template <typename T>
void Append(std::string* out, const char* name, T value) {
  std::array<char, 32> buffer;
  auto [end, error] = std::to_chars(buffer.data(), buffer.data() + buffer.size(), value);
  (void)error;  // 32 characters hold any int64 and the shortest form of any double
  if (!out->empty()) out->push_back(' ');
  out->append(name).push_back('=');
  out->append(buffer.data(), end);
}

template <typename T>
bool ReadNumber(std::string_view text, T* value) {
  auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), *value);
  return error == std::errc() && end == text.data() + text.size();
}

}  // namespace

const char* AlertPhaseName(AlertPhase phase) {
  return kPhaseNames[static_cast<std::size_t>(phase)];
}

std::string AlertState::Serialize() const {
  std::string out = std::string("phase=") + AlertPhaseName(phase);
  Append(&out, "since", since_ms);
  Append(&out, "quiet", quiet_since_ms);
  Append(&out, "last", last_ms);
  Append(&out, "wh", energy_wh);
  Append(&out, "tail", tail_wh);
  Append(&out, "extreme", extreme_w);
  Append(&out, "interval", interval_ms);
  Append(&out, "count", count);
  Append(&out, "stage", stage);
  Append(&out, "night", night);
  Append(&out, "samples", samples);
  Append(&out, "cost", cost);
  Append(&out, "tailcost", tail_cost);
  return out;
}

Result<AlertState> AlertState::Parse(std::string_view text) {
  AlertState state;
  // Every field once, in Serialize()'s order: anything else was not written by us. The last
  // `kOptional` fields came later; a text that ends before them is an older state.
  const std::vector<std::string_view> names = {"phase", "since", "quiet",   "last",
                                               "wh",    "tail",  "extreme", "interval",
                                               "count", "stage", "night",   "samples",
                                               "cost",  "tailcost"};
  constexpr std::size_t kOptional = 2;
  std::size_t position = 0;
  for (std::size_t n = 0; n < names.size(); ++n) {
    const std::string_view name = names[n];
    const bool optional = n >= names.size() - kOptional;
    const bool after_separator = position > 0 && text[position - 1] == ' ';
    if (optional && position == text.size() && !after_separator) break;
    std::size_t end = text.find(' ', position);
    std::string_view field = text.substr(position, end == std::string_view::npos
                                                       ? std::string_view::npos
                                                       : end - position);
    const std::size_t equals = field.find('=');
    std::string_view value = equals == std::string_view::npos ? "" : field.substr(equals + 1);
    bool ok = equals != std::string_view::npos && field.substr(0, equals) == name;
    if (!ok && optional && !field.empty()) break;  // reported as unexpected text below
    position = end == std::string_view::npos ? text.size() : end + 1;
    if (ok && name == "phase") {
      ok = false;
      for (std::size_t i = 0; i < kPhaseNames.size(); ++i) {
        if (value == kPhaseNames[i]) {
          state.phase = static_cast<AlertPhase>(i);
          ok = true;
        }
      }
    } else if (ok) {
      if (name == "since") ok = ReadNumber(value, &state.since_ms);
      if (name == "quiet") ok = ReadNumber(value, &state.quiet_since_ms);
      if (name == "last") ok = ReadNumber(value, &state.last_ms);
      if (name == "wh") ok = ReadNumber(value, &state.energy_wh);
      if (name == "tail") ok = ReadNumber(value, &state.tail_wh);
      if (name == "extreme") ok = ReadNumber(value, &state.extreme_w);
      if (name == "interval") ok = ReadNumber(value, &state.interval_ms);
      if (name == "count") ok = ReadNumber(value, &state.count);
      if (name == "stage") ok = ReadNumber(value, &state.stage);
      if (name == "night") ok = ReadNumber(value, &state.night);
      if (name == "samples") ok = ReadNumber(value, &state.samples);
      if (name == "cost") ok = ReadNumber(value, &state.cost);
      if (name == "tailcost") ok = ReadNumber(value, &state.tail_cost);
    }
    if (!ok) {
      return Status::Corruption("alert state: field \"" + std::string(name) +
                                "\" does not read: \"" + std::string(field) + "\"");
    }
  }
  if (position != text.size()) {
    return Status::Corruption("alert state: unexpected text after the last field: \"" +
                              std::string(text.substr(position)) + "\"");
  }
  return state;
}

}  // namespace ampledger
