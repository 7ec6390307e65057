// daemon/metering/statement_render.cpp
#include "daemon/metering/statement_render.h"

#include <cstdio>
#include <sstream>

namespace ampledger {
namespace {

std::string Number(double value, const char* format = "%.3f") {
  char text[48];
  std::snprintf(text, sizeof text, format, value);
  return text;
}

std::string Date(date::year_month_day day) {
  std::ostringstream out;
  out << day;
  return out.str();
}

const char* SectionName(StatementSection section) {
  switch (section) {
    case StatementSection::kOwn: return "own";
    case StatementSection::kShared: return "shared";
    case StatementSection::kRemainder: return "remainder";
    case StatementSection::kCommon: return "common";
  }
  return "";
}

std::string Pad(const std::string& text, std::size_t width, bool right = false) {
  if (text.size() >= width) return text;
  std::string fill(width - text.size(), ' ');
  return right ? fill + text : text + fill;
}

std::string Row(const std::string& what, const std::string& quantity, const std::string& unit,
                const std::string& price, const std::string& amount) {
  return Pad(what, 58) + " " + Pad(quantity, 12, true) + " " + Pad(unit, 5) + " " +
         Pad(price, 10, true) + " " + Pad(amount, 12, true) + "\n";
}

std::string Heading(const std::string& site_name, const std::string& who,
                    const BillingCycle& cycle, const std::string& currency) {
  return site_name + ": " + who + "\nBilling cycle " + Date(cycle.first_day) + " to " +
         Date(cycle.next_first_day) + " (exclusive), amounts in " + currency + "\n\n" +
         Row("", "quantity", "unit", "price", "amount");
}

std::string CsvField(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string quoted = "\"";
  for (char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + "\"";
}

}  // namespace

std::string RenderBillText(const Bill& bill, const std::string& site_name,
                           const std::string& currency) {
  std::string out = Heading(site_name, "site bill", bill.cycle, currency);
  for (const BillLine& line : bill.lines) {
    out += Row(line.description, Number(line.quantity), line.unit,
               line.unit == "%" ? "" : FormatPrice(line.unit_price), FormatCents(line.amount));
  }
  out += Row("Total", "", "", "", FormatCents(bill.total));
  out += "\nMeasured " + Number(bill.coverage * 100, "%.1f") + "% of the cycle; " +
         Number(bill.estimated_fraction * 100, "%.1f") + "% of the energy is estimated.\n";
  return out;
}

std::string RenderStatementText(const CycleStatements& cycle, const UnitStatement& statement,
                                const std::string& site_name, const std::string& currency) {
  std::string who = statement.unit_id.empty() ? statement.unit_name
                                              : statement.unit_name + " (" + statement.unit_id + ")";
  std::string out = Heading(site_name, who, cycle.site.cycle, currency);
  for (const StatementLine& line : statement.lines) {
    std::string what = line.description;
    if (!line.method.empty()) what += " [" + line.method + "]";
    out += Row(what, Number(line.quantity), line.unit,
               line.unit_price == 0 || line.unit == "%" ? "" : FormatPrice(line.unit_price),
               FormatCents(line.amount));
  }
  out += Row("Total", "", "", "", FormatCents(statement.total));
  out += "\nSite bill " + FormatCents(cycle.site.total) + "; measured " +
         Number(cycle.site.coverage * 100, "%.1f") + "% of the cycle; " +
         Number(cycle.site.estimated_fraction * 100, "%.1f") + "% of the energy is estimated.\n";
  if (cycle.submetered_ratio) {
    out += "Submetered / main meter: " + Number(cycle.submetered_import_kwh, "%.1f") + " / " +
           Number(*cycle.main_meter_kwh, "%.1f") + " kWh = " +
           Number(*cycle.submetered_ratio * 100, "%.1f") + "%\n";
  }
  return out + "\n" + cycle.notice + "\n";
}

std::string RenderStatementCsv(const UnitStatement& statement) {
  std::string out = "section,description,method,quantity,unit,unit_price,amount\r\n";
  for (const StatementLine& line : statement.lines) {
    out += std::string(SectionName(line.section)) + "," + CsvField(line.description) + "," +
           CsvField(line.method) + "," + Number(line.quantity, "%.6g") + "," + line.unit + "," +
           (line.unit_price == 0 || line.unit == "%" ? "" : FormatPrice(line.unit_price)) + "," +
           FormatCents(line.amount) + "\r\n";
  }
  return out + "total,,,,,," + FormatCents(statement.total) + "\r\n";
}

}  // namespace ampledger
