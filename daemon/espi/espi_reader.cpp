// daemon/espi/espi_reader.cpp
#include "daemon/espi/espi_reader.h"

#include <libxml/parser.h>
#include <libxml/tree.h>

#include <charconv>
#include <map>
#include <memory>
#include <optional>

namespace ampledger {
namespace {

struct DocFree {
  void operator()(xmlDoc* doc) const { xmlFreeDoc(doc); }
};
struct ContextFree {
  void operator()(xmlParserCtxt* context) const { xmlFreeParserCtxt(context); }
};

std::string_view Name(const xmlNode* node) {
  return reinterpret_cast<const char*>(node->name);
}

bool InNamespace(const xmlNode* node, const char* ns) {
  return node->ns != nullptr && node->ns->href != nullptr &&
         std::string_view(reinterpret_cast<const char*>(node->ns->href)) == ns;
}

bool IsElement(const xmlNode* node, const char* ns, std::string_view name) {
  return node->type == XML_ELEMENT_NODE && InNamespace(node, ns) && Name(node) == name;
}

const xmlNode* Child(const xmlNode* parent, const char* ns, std::string_view name) {
  for (const xmlNode* child = parent->children; child != nullptr; child = child->next) {
    if (IsElement(child, ns, name)) return child;
  }
  return nullptr;
}

std::string Text(const xmlNode* node) {
  std::unique_ptr<xmlChar, decltype(xmlFree)> content(xmlNodeGetContent(node), xmlFree);
  std::string text = content ? reinterpret_cast<const char*>(content.get()) : "";
  const size_t first = text.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return "";
  return text.substr(first, text.find_last_not_of(" \t\r\n") - first + 1);
}

std::string Attribute(const xmlNode* node, const char* name) {
  std::unique_ptr<xmlChar, decltype(xmlFree)> value(
      xmlGetProp(node, reinterpret_cast<const xmlChar*>(name)), xmlFree);
  return value ? reinterpret_cast<const char*>(value.get()) : "";
}

// The part of `href` before the last "/<segment>/" or "/<segment>" at its end; "" when absent.
std::string Before(const std::string& href, const std::string& segment) {
  const size_t at = href.rfind("/" + segment);
  return at == std::string::npos ? "" : href.substr(0, at);
}

struct FirstError {
  bool seen = false;
  int line = 0;
  std::string message;
};

void RecordFirstError(void* data, xmlErrorPtr error) {
  auto* first = static_cast<FirstError*>(data);
  if (first->seen || error == nullptr || error->level < XML_ERR_ERROR) return;
  first->seen = true;
  first->line = error->line;
  first->message = error->message != nullptr ? error->message : "error";
  while (!first->message.empty() &&
         (first->message.back() == '\n' || first->message.back() == ' ')) {
    first->message.pop_back();
  }
}

class Reader {
 public:
  explicit Reader(const std::string& file_name) : file_(file_name) {}

  Status Error(const xmlNode* node, const std::string& what) const {
    return Status::InvalidArgument(file_ + ":" + std::to_string(xmlGetLineNo(node)) + ": <" +
                                   std::string(Name(node)) + ">: " + what);
  }

  // The integer text of ESPI child `name` of `parent`; nullopt when absent.
  Result<std::optional<std::int64_t>> OptionalInteger(const xmlNode* parent, const char* name) {
    const xmlNode* child = Child(parent, kEspiNamespace, name);
    if (child == nullptr) return std::optional<std::int64_t>();
    const std::string text = Text(child);
    std::int64_t value = 0;
    auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
    if (error != std::errc() || end != text.data() + text.size()) {
      return Error(child, "\"" + text + "\" is not an integer");
    }
    return std::optional<std::int64_t>(value);
  }

  Result<std::int64_t> Integer(const xmlNode* parent, const char* name) {
    Result<std::optional<std::int64_t>> value = OptionalInteger(parent, name);
    if (!value.ok()) return value.status();
    if (!value->has_value()) return Error(parent, std::string("has no <") + name + ">");
    return **value;
  }

  Result<EspiReadingType> ReadingType(const xmlNode* node) {
    EspiReadingType type;
    const std::pair<const char*, int*> fields[] = {
        {"accumulationBehaviour", &type.accumulation_behaviour},
        {"commodity", &type.commodity},
        {"dataQualifier", &type.data_qualifier},
        {"flowDirection", &type.flow_direction},
        {"intervalLength", &type.interval_length_s},
        {"kind", &type.kind},
        {"powerOfTenMultiplier", &type.power_of_ten_multiplier},
        {"timeAttribute", &type.time_attribute},
        {"uom", &type.uom},
    };
    for (const auto& [name, field] : fields) {
      Result<std::optional<std::int64_t>> value = OptionalInteger(node, name);
      if (!value.ok()) return value.status();
      const bool multiplier = std::string_view(name) == "powerOfTenMultiplier";
      *field = value->has_value() ? static_cast<int>(**value) : (multiplier ? 0 : -1);
    }
    return type;
  }

  // `start` and `duration` children of `node` (an interval or timePeriod).
  Status Period(const xmlNode* node, std::int64_t* start, std::int64_t* duration) {
    Result<std::int64_t> s = Integer(node, "start");
    if (!s.ok()) return s.status();
    Result<std::int64_t> d = Integer(node, "duration");
    if (!d.ok()) return d.status();
    *start = *s;
    *duration = *d;
    return Status::Ok();
  }

  Result<EspiIntervalBlock> IntervalBlock(const xmlNode* node) {
    EspiIntervalBlock block;
    const xmlNode* interval = Child(node, kEspiNamespace, "interval");
    if (interval == nullptr) return Error(node, "has no <interval>");
    if (Status s = Period(interval, &block.start_s, &block.duration_s); !s.ok()) return s;
    for (const xmlNode* child = node->children; child != nullptr; child = child->next) {
      if (!IsElement(child, kEspiNamespace, "IntervalReading")) continue;
      const xmlNode* period = Child(child, kEspiNamespace, "timePeriod");
      if (period == nullptr) return Error(child, "has no <timePeriod>");
      EspiIntervalReading& reading = block.readings.emplace_back();
      if (Status s = Period(period, &reading.start_s, &reading.duration_s); !s.ok()) return s;
      Result<std::int64_t> value = Integer(child, "value");
      if (!value.ok()) return value.status();
      reading.value = *value;
    }
    return block;
  }

  Result<EspiFeed> Read(const xmlNode* root) {
    if (!IsElement(root, kAtomNamespace, "feed")) {
      return Error(root, "the root element is not an Atom <feed> (namespace " +
                             std::string(kAtomNamespace) + ")");
    }
    EspiFeed feed;
    if (const xmlNode* title = Child(root, kAtomNamespace, "title")) feed.title = Text(title);
    struct PendingBlock {
      const xmlNode* node;
      std::string reading_href;
      EspiIntervalBlock block;
    };
    std::map<std::string, std::string> usage_point_titles;  // self href -> title
    std::map<std::string, EspiReadingType> reading_types;   // self href -> type
    struct Reading {
      const xmlNode* node;
      std::string title;
      std::string type_href;
    };
    std::map<std::string, Reading> readings;  // MeterReading self href -> links
    std::vector<std::string> reading_order;
    std::vector<PendingBlock> blocks;
    for (const xmlNode* entry = root->children; entry != nullptr; entry = entry->next) {
      if (!IsElement(entry, kAtomNamespace, "entry")) continue;
      std::string self, up, title;
      std::vector<std::string> related;
      for (const xmlNode* child = entry->children; child != nullptr; child = child->next) {
        if (!IsElement(child, kAtomNamespace, "link")) continue;
        const std::string rel = Attribute(child, "rel");
        if (rel == "self") self = Attribute(child, "href");
        if (rel == "up") up = Attribute(child, "href");
        if (rel == "related") related.push_back(Attribute(child, "href"));
      }
      if (const xmlNode* t = Child(entry, kAtomNamespace, "title")) title = Text(t);
      const xmlNode* content = Child(entry, kAtomNamespace, "content");
      if (content == nullptr) continue;
      for (const xmlNode* node = content->children; node != nullptr; node = node->next) {
        if (node->type != XML_ELEMENT_NODE || !InNamespace(node, kEspiNamespace)) continue;
        const std::string_view name = Name(node);
        if (name == "UsagePoint") {
          usage_point_titles[self] = title;
        } else if (name == "ReadingType") {
          Result<EspiReadingType> type = ReadingType(node);
          if (!type.ok()) return type.status();
          reading_types[self] = *type;
        } else if (name == "MeterReading") {
          std::string type_href;
          for (const std::string& href : related) {
            if (href.find("/ReadingType/") != std::string::npos) type_href = href;
          }
          if (readings.emplace(self, Reading{node, title, type_href}).second) {
            reading_order.push_back(self);
          }
        } else if (name == "IntervalBlock") {
          Result<EspiIntervalBlock> block = IntervalBlock(node);
          if (!block.ok()) return block.status();
          std::string reading_href = Before(self, "IntervalBlock");
          if (reading_href.empty()) reading_href = Before(up, "IntervalBlock");
          blocks.push_back({node, reading_href, std::move(*block)});
        }
      }
    }
    std::map<std::string, size_t> series_of_reading;
    for (const std::string& href : reading_order) {
      const Reading& reading = readings.at(href);
      auto type = reading_types.find(reading.type_href);
      if (type == reading_types.end() && reading_types.size() == 1) type = reading_types.begin();
      if (type == reading_types.end()) {
        return Error(reading.node, "its ReadingType \"" + reading.type_href +
                                       "\" is not in the file");
      }
      EspiSeries& series = feed.series.emplace_back();
      series.title = reading.title;
      series.type = type->second;
      auto point = usage_point_titles.find(Before(href, "MeterReading"));
      if (point != usage_point_titles.end()) series.usage_point_title = point->second;
      series_of_reading[href] = feed.series.size() - 1;
    }
    for (PendingBlock& pending : blocks) {
      auto series = series_of_reading.find(pending.reading_href);
      if (series == series_of_reading.end() && feed.series.size() == 1) {
        series = series_of_reading.begin();
      }
      if (series == series_of_reading.end()) {
        return Error(pending.node, "no MeterReading \"" + pending.reading_href +
                                       "\" in the file for this block");
      }
      feed.series[series->second].blocks.push_back(std::move(pending.block));
    }
    return feed;
  }

 private:
  std::string file_;
};

}  // namespace

Result<EspiFeed> ReadEspiFeed(std::string_view xml, const std::string& file_name) {
  if (xml.size() > kMaxEspiFileBytes) {
    return Status::InvalidArgument(file_name + ": " + std::to_string(xml.size()) +
                                   " bytes is larger than the limit of " +
                                   std::to_string(kMaxEspiFileBytes) + " bytes");
  }
  std::unique_ptr<xmlParserCtxt, ContextFree> context(xmlNewParserCtxt());
  if (!context) return Status::IOError(file_name + ": cannot start the XML parser");
  // No network, no DTD loading, no entity substitution (an external or nested entity could
  // read local files or grow without bound). The first error is the one worth reporting
  // (later ones follow from it); libxml2 keeps the handler per thread.
  FirstError first;
  xmlSetStructuredErrorFunc(&first, RecordFirstError);
  std::unique_ptr<xmlDoc, DocFree> doc(
      xmlCtxtReadMemory(context.get(), xml.data(), static_cast<int>(xml.size()),
                        file_name.c_str(), nullptr, XML_PARSE_NONET | XML_PARSE_NOWARNING));
  xmlSetStructuredErrorFunc(nullptr, nullptr);
  if (!doc || first.seen) {
    return Status::InvalidArgument(file_name + ":" + std::to_string(first.line) +
                                   ": not well-formed XML: " +
                                   (first.seen ? first.message : "cannot be parsed"));
  }
  // ESPI files have no DOCTYPE; one could only declare entities, whose references would be
  // expanded when a value's text is read (nested entities grow without bound).
  if (doc->intSubset != nullptr || doc->extSubset != nullptr) {
    return Status::InvalidArgument(file_name +
                                   ": a DOCTYPE is not allowed in an ESPI file (it could "
                                   "declare entities)");
  }
  const xmlNode* root = xmlDocGetRootElement(doc.get());
  if (root == nullptr) return Status::InvalidArgument(file_name + ": the document is empty");
  return Reader(file_name).Read(root);
}

}  // namespace ampledger
