// config/tariff_reader.cpp
// One function per table of a tariff file, each reading its keys in a fixed order through a
// TableReader, so the first error found is the one reported.
#include "config/tariff_reader.h"

#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <sstream>

#include "config/key_lines.h"
#include "config/table_reader.h"

namespace ampledger {
namespace {

std::string Indexed(const std::string& path, std::size_t index) {
  return path + "[" + std::to_string(index) + "]";
}

const std::initializer_list<std::pair<std::string_view, date::weekday>> kWeekdays = {
    {"monday", date::Monday},     {"tuesday", date::Tuesday}, {"wednesday", date::Wednesday},
    {"thursday", date::Thursday}, {"friday", date::Friday},   {"saturday", date::Saturday},
    {"sunday", date::Sunday}};

class TariffReader {
 public:
  explicit TariffReader(KeyLines* lines) : context_(lines) {}

  Status Read(const toml::table& root, TariffConfig* out) {
    TableReader r(&context_, root, "");
    r.AllowOnly({"name", "currency", "weekend_days", "holiday", "season", "tier_proration_days",
                 "adder", "fixed", "demand", "minimum_bill", "adjustment", "export", "rounding"});
    r.String("name", &out->rates.name, Need::kRequired);
    r.String("currency", &out->currency);
    std::vector<std::string> weekend;
    if (r.Strings("weekend_days", &weekend)) {
      out->rates.weekend_days.clear();
      for (std::size_t k = 0; k < weekend.size(); ++k) {
        date::weekday day{0u};
        if (!WeekdayNamed(weekend[k], &day)) {
          r.Fail("weekend_days", "expected weekday names (\"saturday\", ...), got \"" +
                                     weekend[k] + "\"");
        }
        out->rates.weekend_days.push_back(day);
      }
    }
    out->rates.holidays = ReadHolidays(r);
    std::vector<const toml::table*> seasons = r.Tables("season", "[[season]]", Need::kRequired);
    for (std::size_t k = 0; k < seasons.size(); ++k) {
      ReadSeason(*seasons[k], Indexed("season", k), out);
    }
    if (r.Integer("tier_proration_days", &out->prorate_days, 1, 366)) out->prorate_tiers = true;
    std::vector<const toml::table*> adders = r.Tables("adder", "[[adder]]");
    for (std::size_t k = 0; k < adders.size(); ++k) {
      TableReader a(&context_, *adders[k], Indexed("adder", k));
      a.AllowOnly({"name", "price"});
      EnergyAdder adder;
      a.String("name", &adder.name, Need::kRequired);
      Price(a, "price", &adder.per_kwh, Need::kRequired);
      out->adders.push_back(adder);
    }
    std::vector<const toml::table*> fixed = r.Tables("fixed", "[[fixed]]");
    for (std::size_t k = 0; k < fixed.size(); ++k) {
      TableReader f(&context_, *fixed[k], Indexed("fixed", k));
      f.AllowOnly({"name", "amount", "per"});
      FixedCharge charge;
      f.String("name", &charge.name, Need::kRequired);
      Price(f, "amount", &charge.amount, Need::kRequired);
      f.Choice<FixedPer>("per", {{"day", FixedPer::kDay}, {"cycle", FixedPer::kCycle}},
                         &charge.per, Need::kRequired);
      out->fixed.push_back(charge);
    }
    std::vector<const toml::table*> demand = r.Tables("demand", "[[demand]]");
    for (std::size_t k = 0; k < demand.size(); ++k) {
      out->demand.push_back(ReadDemand(*demand[k], Indexed("demand", k)));
    }
    Price(r, "minimum_bill", &out->minimum_bill, Need::kOptional, 0);
    std::vector<const toml::table*> adjustments = r.Tables("adjustment", "[[adjustment]]");
    for (std::size_t k = 0; k < adjustments.size(); ++k) {
      TableReader a(&context_, *adjustments[k], Indexed("adjustment", k));
      a.AllowOnly({"name", "percent"});
      PercentAdjustment adjustment;
      a.String("name", &adjustment.name, Need::kRequired);
      a.Number("percent", &adjustment.percent, {-100, 100}, Need::kRequired);
      out->adjustments.push_back(adjustment);
    }
    ReadExport(r, &out->export_rule);
    if (const toml::table* rounding = r.Table("rounding", "[rounding]")) {
      TableReader o(&context_, *rounding, "rounding");
      o.AllowOnly({"each_line", "mode"});
      o.Bool("each_line", &out->rounding.each_line);
      o.Choice<RoundingMode>("mode", {{"half-up", RoundingMode::kHalfUp},
                                      {"half-even", RoundingMode::kHalfEven}},
                             &out->rounding.mode);
    }
    return context_.error();
  }

 private:
  static bool WeekdayNamed(const std::string& name, date::weekday* out) {
    for (const auto& [text, day] : kWeekdays) {
      if (text == name) {
        *out = day;
        return true;
      }
    }
    return false;
  }

  // A price: at most 6 decimal places (config/tariff_config.h, Money).
  bool Price(TableReader& r, std::string_view key, double* out, Need need, double min = -1e9) {
    if (!r.Number(key, out, {min, 1e9}, need)) return false;
    double micros = *out * 1e6;
    if (std::fabs(micros - std::nearbyint(micros)) > 1e-3) {
      r.Fail(key, "expected at most 6 decimal places, got " + FormatNumber(*out));
      return false;
    }
    return true;
  }

  // "MM-DD"
  bool MonthDay(TableReader& r, std::string_view key, date::month_day* out, Need need) {
    std::string text;
    if (!r.String(key, &text, need)) return false;
    unsigned month = 0, day = 0;
    char tail = 0;
    date::month_day value;
    if (std::sscanf(text.c_str(), "%2u-%2u%c", &month, &day, &tail) == 2 && text.size() == 5) {
      value = date::month{month} / date::day{day};
    }
    if (!value.ok()) {
      r.Fail(key, "expected a month and day \"MM-DD\", got \"" + text + "\"");
      return false;
    }
    *out = value;
    return true;
  }

  // "HH:MM" on a quarter hour, 00:00..24:00, as minutes.
  bool Clock(TableReader& r, std::string_view key, int* out, Need need) {
    std::string text;
    if (!r.String(key, &text, need)) return false;
    int hour = -1, minute = -1;
    char tail = 0;
    bool shaped = std::sscanf(text.c_str(), "%2d:%2d%c", &hour, &minute, &tail) == 2 &&
                  text.size() == 5 && hour >= 0 && minute >= 0 && minute < 60 &&
                  hour * 60 + minute <= 1440;
    if (!shaped || minute % 15 != 0) {
      r.Fail(key, "expected a time \"HH:MM\" from 00:00 to 24:00 on a quarter hour, got \"" +
                      text + "\"");
      return false;
    }
    *out = hour * 60 + minute;
    return true;
  }

  bool DayKinds(TableReader& r, std::string_view key, unsigned* out) {
    std::vector<std::string> names;
    if (!r.Strings(key, &names)) return false;
    unsigned kinds = 0;
    for (const std::string& name : names) {
      if (name == "weekday") kinds |= DayKindBit(DayKind::kWeekday);
      else if (name == "weekend") kinds |= DayKindBit(DayKind::kWeekend);
      else if (name == "holiday") kinds |= DayKindBit(DayKind::kHoliday);
      else {
        r.Fail(key, "expected day kinds \"weekday\", \"weekend\" or \"holiday\", got \"" + name +
                        "\"");
        return false;
      }
    }
    if (kinds == 0) {
      r.Fail(key, "expected at least one day kind");
      return false;
    }
    *out = kinds;
    return true;
  }

  std::vector<HolidayRule> ReadHolidays(TableReader& parent) {
    std::vector<HolidayRule> rules;
    std::vector<const toml::table*> tables = parent.Tables("holiday", "[[holiday]]");
    for (std::size_t k = 0; k < tables.size(); ++k) {
      TableReader h(&context_, *tables[k], parent.KeyPath(Indexed("holiday", k)));
      h.AllowOnly({"name", "date", "month", "weekday", "nth", "last", "on_or_before",
                   "easter_offset_days", "dates", "observed"});
      HolidayRule rule;
      h.String("name", &rule.name, Need::kRequired);
      int forms = h.Has("date") + h.Has("month") + h.Has("on_or_before") +
                  h.Has("easter_offset_days") + h.Has("dates");
      if (forms != 1) {
        h.Fail("", "expected exactly one of date, month (with weekday and nth or last), "
                   "on_or_before (with weekday), easter_offset_days or dates");
      }
      date::weekday weekday{0u};  // set below, or an error is reported
      if (h.Has("weekday")) {
        std::string name;
        if (h.String("weekday", &name) && !WeekdayNamed(name, &weekday)) {
          h.Fail("weekday", "expected a weekday name (\"monday\", ...), got \"" + name + "\"");
        }
      }
      if (h.Has("date")) {
        date::month_day day;
        MonthDay(h, "date", &day, Need::kRequired);
        rule.date = FixedDate{day};
      } else if (h.Has("month")) {
        unsigned month = 1, nth = 1;
        bool last = false;
        h.Integer("month", &month, 1, 12);
        h.String("weekday", &scratch_, Need::kRequired);
        h.Bool("last", &last);
        if (last) {
          rule.date = LastWeekday{date::month{month}, weekday};
        } else {
          h.Integer("nth", &nth, 1, 5, Need::kRequired);
          rule.date = NthWeekday{date::month{month}, weekday, nth};
        }
      } else if (h.Has("on_or_before")) {
        date::month_day day;
        MonthDay(h, "on_or_before", &day, Need::kRequired);
        h.String("weekday", &scratch_, Need::kRequired);
        rule.date = WeekdayOnOrBefore{day, weekday};
      } else if (h.Has("easter_offset_days")) {
        int offset = 0;
        h.Integer("easter_offset_days", &offset, -366, 366);
        rule.date = EasterRelative{offset};
      } else if (h.Has("dates")) {
        std::vector<std::string> texts;
        ExplicitDates dates;
        h.Strings("dates", &texts, Need::kRequired);
        for (const std::string& text : texts) {
          int y = 0;
          unsigned m = 0, d = 0;
          char tail = 0;
          date::year_month_day day;
          if (std::sscanf(text.c_str(), "%4d-%2u-%2u%c", &y, &m, &d, &tail) == 3 &&
              text.size() == 10) {
            day = date::year{y} / date::month{m} / date::day{d};
          }
          if (!day.ok()) {
            h.Fail("dates", "expected dates \"YYYY-MM-DD\", got \"" + text + "\"");
            break;
          }
          dates.dates.push_back(day);
        }
        rule.date = dates;
      }
      h.Choice<ObservedRule>("observed",
                             {{"same-day", ObservedRule::kSameDay},
                              {"friday-or-monday", ObservedRule::kFridayOrMonday},
                              {"next-monday", ObservedRule::kNextMonday}},
                             &rule.observed);
      rules.push_back(rule);
    }
    return rules;
  }

  void ReadSeason(const toml::table& table, const std::string& path, TariffConfig* out) {
    TableReader s(&context_, table, path);
    s.AllowOnly({"name", "from", "to", "default_period", "period", "window", "holiday",
                 "no_holidays", "tier"});
    Season season;
    s.String("name", &season.name, Need::kRequired);
    MonthDay(s, "from", &season.first_day, Need::kRequired);
    MonthDay(s, "to", &season.last_day, Need::kRequired);
    std::vector<const toml::table*> periods = s.Tables("period", "[[season.period]]");
    for (std::size_t k = 0; k < periods.size(); ++k) {
      TableReader p(&context_, *periods[k], s.KeyPath(Indexed("period", k)));
      p.AllowOnly({"name", "price"});
      PeriodPrice price;
      p.String("name", &price.period, Need::kRequired);
      Price(p, "price", &price.per_kwh, Need::kRequired);
      season.prices.push_back(price);
    }
    if (periods.empty()) {
      season.prices.push_back({"all hours", 0});  // no time-of-use price: tiers or adders only
      season.default_period = "all hours";
    }
    s.String("default_period", &season.default_period, periods.empty() ? Need::kOptional
                                                                       : Need::kRequired);
    std::vector<const toml::table*> windows = s.Tables("window", "[[season.window]]");
    for (std::size_t k = 0; k < windows.size(); ++k) {
      TableReader w(&context_, *windows[k], s.KeyPath(Indexed("window", k)));
      w.AllowOnly({"period", "from", "to", "days", "months"});
      RateWindow window;
      w.String("period", &window.period, Need::kRequired);
      Clock(w, "from", &window.start_minute, Need::kRequired);
      Clock(w, "to", &window.end_minute, Need::kRequired);
      DayKinds(w, "days", &window.day_kinds);
      std::vector<double> months;
      if (w.Numbers("months", &months, {1, 12})) {
        window.months = 0;
        for (double month : months) {
          if (month != std::floor(month)) w.Fail("months", "expected month numbers 1..12");
          window.months |= MonthBit(date::month{static_cast<unsigned>(month)});
        }
      }
      season.windows.push_back(window);
    }
    bool no_holidays = false;
    s.Bool("no_holidays", &no_holidays);
    if (s.Has("holiday") || no_holidays) season.holidays = ReadHolidays(s);
    std::vector<const toml::table*> tiers = s.Tables("tier", "[[season.tier]]");
    if (!tiers.empty()) {
      TierTable table{season.name, {}};
      for (std::size_t k = 0; k < tiers.size(); ++k) {
        TableReader t(&context_, *tiers[k], s.KeyPath(Indexed("tier", k)));
        t.AllowOnly({"size_kwh", "price"});
        TierBlock block;
        bool last = k + 1 == tiers.size();
        t.Number("size_kwh", &block.kwh, {0, 1e9, true}, last ? Need::kOptional : Need::kRequired);
        if (last && block.kwh != 0) {
          t.Fail("size_kwh", "the last tier takes everything above the others; leave size_kwh out");
        }
        Price(t, "price", &block.per_kwh, Need::kRequired);
        table.blocks.push_back(block);
      }
      out->tiers.push_back(table);
    }
    out->rates.seasons.push_back(season);
  }

  DemandCharge ReadDemand(const toml::table& table, const std::string& path) {
    TableReader d(&context_, table, path);
    d.AllowOnly({"name", "price_per_kw", "interval_minutes", "from", "to", "days", "periods",
                 "seasons", "ratchet_percent", "ratchet_cycles", "minimum_kw", "power_factor",
                 "power_factor_target", "minimum_amount"});
    DemandCharge demand;
    d.String("name", &demand.name, Need::kRequired);
    Price(d, "price_per_kw", &demand.per_kw, Need::kRequired, 0);
    d.Integer("interval_minutes", &demand.interval_minutes, 15, 60);
    if (demand.interval_minutes != 15 && demand.interval_minutes != 30 &&
        demand.interval_minutes != 60) {
      d.Fail("interval_minutes", "expected 15, 30 or 60, got " +
                                     std::to_string(demand.interval_minutes));
    }
    if (d.Has("from") || d.Has("to") || d.Has("days")) {
      RateWindow window;
      Clock(d, "from", &window.start_minute, Need::kRequired);
      Clock(d, "to", &window.end_minute, Need::kRequired);
      DayKinds(d, "days", &window.day_kinds);
      demand.window = window;
    }
    d.Strings("periods", &demand.periods);
    d.Strings("seasons", &demand.seasons);
    if (d.Number("ratchet_percent", &demand.ratchet_percent, {0, 100, true})) {
      d.Integer("ratchet_cycles", &demand.ratchet_cycles, 1, 36, Need::kRequired);
    } else if (d.Has("ratchet_cycles")) {
      d.Fail("ratchet_cycles", "only with ratchet_percent");
    }
    d.Number("minimum_kw", &demand.minimum_kw, {0, 1e6});
    d.Choice<PowerFactorMethod>("power_factor",
                                {{"none", PowerFactorMethod::kNone},
                                 {"add-difference", PowerFactorMethod::kAddDifference},
                                 {"ratio", PowerFactorMethod::kRatio}},
                                &demand.power_factor);
    d.Number("power_factor_target", &demand.power_factor_target, {0, 1, true});
    Price(d, "minimum_amount", &demand.minimum_amount, Need::kOptional, 0);
    return demand;
  }

  void ReadExport(TableReader& r, ExportRule* out) {
    const toml::table* table = r.Table("export", "[export]");
    if (table == nullptr) return;
    TableReader e(&context_, *table, "export");
    e.AllowOnly({"method", "netting", "price"});
    e.Choice<ExportMethod>("method", {{"none", ExportMethod::kNone},
                                      {"net-metering", ExportMethod::kNetMetering},
                                      {"net-billing", ExportMethod::kNetBilling}},
                           &out->method, Need::kRequired);
    if (out->method == ExportMethod::kNetMetering) {
      e.Choice<Netting>("netting", {{"interval", Netting::kInterval},
                                    {"period", Netting::kPeriod},
                                    {"cycle", Netting::kCycle}},
                        &out->netting, Need::kRequired);
    } else if (e.Has("netting")) {
      e.Fail("netting", "only with method = \"net-metering\"");
    }
    if (out->method == ExportMethod::kNetBilling) {
      Price(e, "price", &out->per_kwh, Need::kRequired, 0);
    } else if (e.Has("price")) {
      e.Fail("price", "only with method = \"net-billing\"");
    }
  }

  ReadContext context_;
  std::string scratch_;  // a key read only to report it missing
};

}  // namespace

Result<TariffConfig> ParseTariff(const std::string& text, const std::string& source_name) {
  KeyLines lines(source_name);
  toml::table root;
  try {
    root = toml::parse(text, source_name);
  } catch (const toml::parse_error& error) {
    const toml::source_position& where = error.source().begin;
    return Status::InvalidArgument(
        KeyLines::Format(source_name, static_cast<int>(where.line), "",
                         "TOML syntax: " + std::string(error.description()) + " (column " +
                             std::to_string(where.column) + ")"));
  }
  TariffConfig config;
  Status status = TariffReader(&lines).Read(root, &config);
  if (!status.ok()) return status;
  return config;
}

Result<TariffConfig> ReadTariffFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return Status::IOError("cannot read \"" + path + "\": " + std::strerror(errno));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) return Status::IOError("cannot read \"" + path + "\": " + std::strerror(errno));
  return ParseTariff(text.str(), path);
}

}  // namespace ampledger
