// api/bill_json.cpp
#include "api/bill_json.h"

#include <sstream>

#include <nlohmann/json.hpp>

namespace ampledger {
namespace {

using nlohmann::json;

std::string Date(date::year_month_day day) {
  std::ostringstream out;
  out << day;
  return out.str();
}

json OptionalNumber(const std::optional<double>& value) {
  return value ? json(*value) : json(nullptr);
}

}  // namespace

const char* LineKindName(LineKind kind) {
  switch (kind) {
    case LineKind::kEnergy: return "energy";
    case LineKind::kTier: return "tier";
    case LineKind::kAdder: return "adder";
    case LineKind::kFixed: return "fixed";
    case LineKind::kDemand: return "demand";
    case LineKind::kExportCredit: return "export_credit";
    case LineKind::kMinimum: return "minimum";
    case LineKind::kAdjustment: return "adjustment";
    case LineKind::kCarried: return "carried_credit";
  }
  return "";
}

std::string RenderBillJson(const CycleStatements& cycle, const std::string& cycle_name,
                           const std::string& site_name, const std::string& currency) {
  const Bill& bill = cycle.site;
  json tariffs = json::array();
  for (const TariffSpan& span : cycle.tariffs) {
    tariffs.push_back({{"name", span.name},
                       {"title", span.title},
                       {"first_day", Date(span.first_day)},
                       {"last_day", Date(span.last_day)}});
  }
  json lines = json::array();
  for (const BillLine& line : bill.lines) {
    const bool percent = line.unit == "%";
    lines.push_back({{"kind", LineKindName(line.kind)},
                     {"description", line.description},
                     {"quantity", line.quantity},
                     {"unit", line.unit},
                     {"unit_price", percent ? json(nullptr) : json(FormatPrice(line.unit_price))},
                     {"amount", FormatCents(line.amount)}});
  }
  json body = {
      {"site", site_name},
      {"cycle",
       {{"name", cycle_name},
        {"first_day", Date(bill.cycle.first_day)},
        {"next_first_day", Date(bill.cycle.next_first_day)}}},
      {"currency", currency},
      {"tariffs", tariffs},
      {"lines", lines},
      {"total", FormatCents(bill.total)},
      {"credit_carried_out", FormatCents(bill.credit_carried_out)},
      {"days", bill.days},
      {"load_kwh", bill.load_kwh},
      {"import_kwh", bill.import_kwh},
      {"export_kwh", bill.export_kwh},
      {"billed_kwh", bill.billed_kwh},
      {"power_factor", bill.power_factor == 0 ? json(nullptr) : json(bill.power_factor)},
      {"coverage", bill.coverage},
      {"estimated_fraction", bill.estimated_fraction},
      {"main_meter",
       {{"kwh", OptionalNumber(cycle.main_meter_kwh)},
        {"basis", cycle.main_meter_basis},
        {"submetered_kwh", cycle.submetered_import_kwh},
        {"submetered_ratio", OptionalNumber(cycle.submetered_ratio)},
        {"remainder_kwh", cycle.remainder_kwh}}},
      {"notice", cycle.notice},
  };
  return body.dump();
}

}  // namespace ampledger
