// daemon/espi/espi_writer.cpp
#include "daemon/espi/espi_writer.h"

#include <openssl/sha.h>

#include <chrono>
#include <cstdio>
#include <map>

#include <date/date.h>

namespace ampledger {
namespace {

std::string Escaped(const std::string& text) {
  std::string out;
  for (char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      default: out += c;
    }
  }
  return out;
}

std::string AtomTime(std::int64_t seconds) {
  return date::format("%FT%TZ", date::sys_seconds(std::chrono::seconds(seconds)));
}

// Appends one Atom entry holding `content` (one ESPI element, already indented).
class EntryWriter {
 public:
  EntryWriter(std::string* out, const EspiWriteOptions& options) : out_(out), options_(options) {}

  void Write(const std::string& title, const std::string& self, const std::string& up,
             const std::vector<std::string>& related, const std::string& content) {
    std::string& out = *out_;
    out += "  <entry>\n    <id>urn:uuid:" + NameBasedUuid(options_.id_seed + self) + "</id>\n";
    out += "    <link rel=\"self\" href=\"" + Escaped(self) + "\"/>\n";
    out += "    <link rel=\"up\" href=\"" + Escaped(up) + "\"/>\n";
    for (const std::string& href : related) {
      out += "    <link rel=\"related\" href=\"" + Escaped(href) + "\"/>\n";
    }
    out += "    <title>" + Escaped(title) + "</title>\n    <content>\n" + content +
           "    </content>\n";
    out += "    <published>" + AtomTime(options_.updated_s) + "</published>\n";
    out += "    <updated>" + AtomTime(options_.updated_s) + "</updated>\n  </entry>\n";
  }

 private:
  std::string* out_;
  const EspiWriteOptions& options_;
};

std::string Element(const char* name, std::int64_t value, const char* indent) {
  return std::string(indent) + "<" + name + ">" + std::to_string(value) + "</" + name + ">\n";
}

std::string ReadingTypeXml(const EspiReadingType& type) {
  const char* in = "        ";
  // The schema's sequence order (usage.xsd ReadingType).
  return std::string("      <ReadingType xmlns=\"") + kEspiNamespace + "\">\n" +
         Element("accumulationBehaviour", type.accumulation_behaviour, in) +
         Element("commodity", type.commodity, in) +
         Element("dataQualifier", type.data_qualifier, in) +
         Element("flowDirection", type.flow_direction, in) +
         Element("intervalLength", type.interval_length_s, in) + Element("kind", type.kind, in) +
         Element("powerOfTenMultiplier", type.power_of_ten_multiplier, in) +
         Element("timeAttribute", type.time_attribute, in) + Element("uom", type.uom, in) +
         "      </ReadingType>\n";
}

std::string IntervalBlockXml(const EspiIntervalBlock& block) {
  std::string xml = std::string("      <IntervalBlock xmlns=\"") + kEspiNamespace + "\">\n";
  xml += "        <interval>\n" + Element("duration", block.duration_s, "          ") +
         Element("start", block.start_s, "          ") + "        </interval>\n";
  for (const EspiIntervalReading& reading : block.readings) {
    // IntervalReading's sequence: (cost, ReadingQuality,) timePeriod, value.
    xml += "        <IntervalReading>\n          <timePeriod>\n" +
           Element("duration", reading.duration_s, "            ") +
           Element("start", reading.start_s, "            ") + "          </timePeriod>\n" +
           Element("value", reading.value, "          ") + "        </IntervalReading>\n";
  }
  return xml + "      </IntervalBlock>\n";
}

}  // namespace

std::string NameBasedUuid(const std::string& name) {
  // RFC 9562 section 6.6: the URL namespace, 6ba7b811-9dad-11d1-80b4-00c04fd430c8.
  static const unsigned char kUrlNamespace[16] = {0x6b, 0xa7, 0xb8, 0x11, 0x9d, 0xad, 0x11, 0xd1,
                                                  0x80, 0xb4, 0x00, 0xc0, 0x4f, 0xd4, 0x30, 0xc8};
  std::string input(reinterpret_cast<const char*>(kUrlNamespace), 16);
  input += name;
  unsigned char hash[SHA_DIGEST_LENGTH];
  SHA1(reinterpret_cast<const unsigned char*>(input.data()), input.size(), hash);
  hash[6] = static_cast<unsigned char>((hash[6] & 0x0f) | 0x50);  // version 5
  hash[8] = static_cast<unsigned char>((hash[8] & 0x3f) | 0x80);  // variant 10
  std::string text;
  char hex[3];
  for (int i = 0; i < 16; ++i) {
    if (i == 4 || i == 6 || i == 8 || i == 10) text += '-';
    std::snprintf(hex, sizeof hex, "%02x", hash[i]);
    text += hex;
  }
  return text;
}

std::string WriteEspiFeed(const EspiFeed& feed, const EspiWriteOptions& options) {
  const std::string base = options.href_base;
  std::string out = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out += std::string("<feed xmlns=\"") + kAtomNamespace + "\">\n";
  out += "  <id>urn:uuid:" + NameBasedUuid(options.id_seed) + "</id>\n";
  out += "  <title>" + Escaped(feed.title) + "</title>\n";
  out += "  <updated>" + AtomTime(options.updated_s) + "</updated>\n";
  out += "  <link rel=\"self\" href=\"" + Escaped(base + "/UsagePoint") + "\"/>\n";
  EntryWriter entries(&out, options);

  // UsagePoints are numbered in order of first appearance; MeterReadings within each.
  std::map<std::string, int> usage_point_of_title;
  std::vector<std::vector<int>> series_of_point;
  for (size_t i = 0; i < feed.series.size(); ++i) {
    auto [it, added] = usage_point_of_title.try_emplace(feed.series[i].usage_point_title,
                                                        static_cast<int>(series_of_point.size()));
    if (added) series_of_point.emplace_back();
    series_of_point[it->second].push_back(static_cast<int>(i));
  }
  int reading_type_number = 0;
  for (size_t point = 0; point < series_of_point.size(); ++point) {
    const std::string point_href = base + "/UsagePoint/" + std::to_string(point + 1);
    const EspiSeries& first = feed.series[series_of_point[point].front()];
    entries.Write(first.usage_point_title, point_href, base + "/UsagePoint",
                  {point_href + "/MeterReading"},
                  std::string("      <UsagePoint xmlns=\"") + kEspiNamespace + "\">\n" +
                      "        <ServiceCategory>\n" +
                      Element("kind", kEspiServiceElectricity, "          ") +
                      "        </ServiceCategory>\n      </UsagePoint>\n");
    for (size_t m = 0; m < series_of_point[point].size(); ++m) {
      const EspiSeries& series = feed.series[series_of_point[point][m]];
      const std::string reading_href = point_href + "/MeterReading/" + std::to_string(m + 1);
      const std::string type_href = base + "/ReadingType/" + std::to_string(++reading_type_number);
      entries.Write(series.title, reading_href, point_href + "/MeterReading",
                    {reading_href + "/IntervalBlock", type_href},
                    std::string("      <MeterReading xmlns=\"") + kEspiNamespace + "\"/>\n");
      entries.Write(series.title + " (reading type)", type_href, base + "/ReadingType", {},
                    ReadingTypeXml(series.type));
      for (size_t b = 0; b < series.blocks.size(); ++b) {
        entries.Write(series.title + " " + AtomTime(series.blocks[b].start_s),
                      reading_href + "/IntervalBlock/" + std::to_string(b + 1),
                      reading_href + "/IntervalBlock", {}, IntervalBlockXml(series.blocks[b]));
      }
    }
  }
  return out + "</feed>\n";
}

}  // namespace ampledger
