// daemon/metering/statement_render.cpp
#include "daemon/metering/statement_render.h"

#include <cmath>
#include <cstdio>
#include <sstream>
#include <string_view>

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

// RFC 8259 section 7: quote, backslash and control characters escaped; other UTF-8 as is.
std::string JsonString(std::string_view text) {
  std::string out = "\"";
  for (char c : text) {
    switch (c) {
      case '"': out += "\\\""; break;
      case '\\': out += "\\\\"; break;
      case '\n': out += "\\n"; break;
      case '\r': out += "\\r"; break;
      case '\t': out += "\\t"; break;
      default:
        if (static_cast<unsigned char>(c) < 0x20) {
          char escape[8];
          std::snprintf(escape, sizeof escape, "\\u%04x", c);
          out += escape;
        } else {
          out += c;
        }
    }
  }
  return out + "\"";
}

// JSON has no NaN or infinity.
std::string JsonNumber(double value) {
  return std::isfinite(value) ? Number(value, "%.10g") : "null";
}

std::string Html(std::string_view text) {
  std::string out;
  for (char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

// Plain, printable: black on white, thin rules, sections on their own pages when printed.
constexpr const char* kHtmlStyle =
    "body { font-family: sans-serif; font-size: 11pt; margin: 2em; color: #111; }\n"
    "section.statement { max-width: 52em; margin: 0 auto 3em; }\n"
    "h1 { font-size: 16pt; margin: 0 0 0.2em; }\n"
    "p.where { color: #444; margin-top: 0; }\n"
    "table { border-collapse: collapse; width: 100%; margin: 1em 0; }\n"
    "th, td { border-bottom: 1px solid #bbb; padding: 0.25em 0.4em; text-align: left; }\n"
    "th.n, td.n { text-align: right; white-space: nowrap; }\n"
    "tfoot td { font-weight: bold; border-top: 2px solid #111; border-bottom: none; }\n"
    "tr.shared td, tr.remainder td { font-style: italic; }\n"
    "p.notice { border: 1px solid #111; padding: 0.6em; font-size: 10pt; }\n"
    "@media print { body { margin: 0; } section.statement { break-after: page; } }\n";

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
  } else if (!cycle.main_meter_basis.empty()) {
    out += "Main meter: " + cycle.main_meter_basis + ".\n";
  }
  for (const TariffSpan& span : cycle.tariffs) {
    out += "Tariff " + Date(span.first_day) + " to " + Date(span.last_day) + ": " + span.title +
           " (" + span.name + ")\n";
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
  return out + "total,,,,,," + FormatCents(statement.total) + "\r\n" + "notice," +
         CsvField(kTenantBillingNotice) + ",,,,,\r\n";
}

std::string RenderStatementJson(const CycleStatements& cycle, const UnitStatement& statement,
                                const std::string& site_name, const std::string& currency) {
  std::string out = "{\"site\": " + JsonString(site_name) + ", \"unit\": {\"id\": " +
                    JsonString(statement.unit_id) + ", \"name\": " +
                    JsonString(statement.unit_name) + "}, \"cycle\": {\"first_day\": " +
                    JsonString(Date(cycle.site.cycle.first_day)) + ", \"next_first_day\": " +
                    JsonString(Date(cycle.site.cycle.next_first_day)) + "}, \"currency\": " +
                    JsonString(currency) + ", \"tariffs\": [";
  for (std::size_t k = 0; k < cycle.tariffs.size(); ++k) {
    const TariffSpan& span = cycle.tariffs[k];
    out += std::string(k ? ", " : "") + "{\"name\": " + JsonString(span.name) +
           ", \"title\": " + JsonString(span.title) +
           ", \"first_day\": " + JsonString(Date(span.first_day)) +
           ", \"last_day\": " + JsonString(Date(span.last_day)) + "}";
  }
  out += "], \"lines\": [";
  for (std::size_t k = 0; k < statement.lines.size(); ++k) {
    const StatementLine& line = statement.lines[k];
    bool priced = line.unit_price != 0 && line.unit != "%";
    out += std::string(k ? ", " : "") + "{\"section\": " +
           JsonString(SectionName(line.section)) +
           ", \"description\": " + JsonString(line.description) +
           ", \"method\": " + JsonString(line.method) +
           ", \"quantity\": " + JsonNumber(line.quantity) +
           ", \"unit\": " + JsonString(line.unit) +
           ", \"unit_price\": " + (priced ? JsonString(FormatPrice(line.unit_price)) : "null") +
           ", \"amount\": " + JsonString(FormatCents(line.amount)) + "}";
  }
  out += "], \"total\": " + JsonString(FormatCents(statement.total)) +
         ", \"own_kwh\": " + JsonNumber(statement.own_kwh) +
         ", \"shared_kwh\": " + JsonNumber(statement.shared_kwh) +
         ", \"site_bill\": {\"total\": " + JsonString(FormatCents(cycle.site.total)) +
         ", \"coverage\": " + JsonNumber(cycle.site.coverage) +
         ", \"estimated_fraction\": " + JsonNumber(cycle.site.estimated_fraction) + "}" +
         ", \"main_meter\": {\"kwh\": " +
         (cycle.main_meter_kwh ? JsonNumber(*cycle.main_meter_kwh) : "null") +
         ", \"basis\": " + JsonString(cycle.main_meter_basis) +
         ", \"submetered_kwh\": " + JsonNumber(cycle.submetered_import_kwh) +
         ", \"submetered_ratio\": " +
         (cycle.submetered_ratio ? JsonNumber(*cycle.submetered_ratio) : "null") +
         ", \"remainder_kwh\": " + JsonNumber(cycle.remainder_kwh) +
         "}, \"notice\": " + JsonString(cycle.notice) + "}";
  return out;
}

std::string RenderStatementsHtml(const CycleStatements& cycle,
                                 const std::vector<const UnitStatement*>& statements,
                                 const std::string& site_name, const std::string& currency) {
  const std::string period =
      Date(cycle.site.cycle.first_day) + " to " + Date(cycle.site.cycle.next_first_day);
  std::string out =
      "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>" +
      Html(site_name) + ": energy statements " + period + "</title>\n<style>\n" + kHtmlStyle +
      "</style>\n</head>\n<body>\n";
  for (const UnitStatement* statement : statements) {
    out += "<section class=\"statement\">\n<header>\n<h1>" + Html(statement->unit_name) +
           "</h1>\n<p class=\"where\">" + Html(site_name) +
           (statement->unit_id.empty() ? "" : " &middot; unit " + Html(statement->unit_id)) +
           "</p>\n<p>Billing cycle " + Date(cycle.site.cycle.first_day) + " to " +
           Date(cycle.site.cycle.next_first_day) + " (not included); amounts in " +
           Html(currency) + ".</p>\n";
    for (const TariffSpan& span : cycle.tariffs) {
      out += "<p>Tariff: " + Html(span.title) + " (" + Html(span.name) + "), " +
             Date(span.first_day) + " to " + Date(span.last_day) + ".</p>\n";
    }
    out += "</header>\n<table>\n<thead><tr><th>What</th><th>How shared</th>"
           "<th class=\"n\">Quantity</th><th>Unit</th><th class=\"n\">Price</th>"
           "<th class=\"n\">Amount</th></tr></thead>\n<tbody>\n";
    for (const StatementLine& line : statement->lines) {
      bool priced = line.unit_price != 0 && line.unit != "%";
      out += "<tr class=\"" + std::string(SectionName(line.section)) + "\"><td>" +
             Html(line.description) + "</td><td>" + Html(line.method) + "</td><td class=\"n\">" +
             Number(line.quantity) + "</td><td>" + Html(line.unit) + "</td><td class=\"n\">" +
             (priced ? FormatPrice(line.unit_price) : "") + "</td><td class=\"n\">" +
             FormatCents(line.amount) + "</td></tr>\n";
    }
    out += "</tbody>\n<tfoot><tr><td colspan=\"5\">Total</td><td class=\"n\">" +
           FormatCents(statement->total) + "</td></tr></tfoot>\n</table>\n<p>Site bill " +
           FormatCents(cycle.site.total) + "; measured " +
           Number(cycle.site.coverage * 100, "%.1f") + "% of the cycle; " +
           Number(cycle.site.estimated_fraction * 100, "%.1f") +
           "% of the energy is estimated.</p>\n";
    if (cycle.submetered_ratio) {
      out += "<p>Submetered / main meter: " + Number(cycle.submetered_import_kwh, "%.1f") +
             " / " + Number(*cycle.main_meter_kwh, "%.1f") + " kWh = " +
             Number(*cycle.submetered_ratio * 100, "%.1f") + "%.</p>\n";
    } else if (!cycle.main_meter_basis.empty()) {
      out += "<p>Main meter: " + Html(cycle.main_meter_basis) + ".</p>\n";
    }
    out += "<p class=\"notice\">" + Html(cycle.notice) + "</p>\n</section>\n";
  }
  return out + "</body>\n</html>\n";
}

}  // namespace ampledger
