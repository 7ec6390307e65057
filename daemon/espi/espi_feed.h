// daemon/espi/espi_feed.h
// Energy usage data in the NAESB REQ.21 ESPI format ("Green Button"): an Atom feed whose
// entries hold ESPI resources (namespace http://naesb.org/espi): a UsagePoint (where energy is
// metered), its MeterReadings, each described by one ReadingType and made of IntervalBlocks of
// IntervalReadings. EspiFeed is the part of that model ampledger writes and reads: plain
// values, any thread.
//
// The numeric codes below are the ESPI schema's enumerations (usage.xsd v3.3, "NAESB REQ.21
// ESPI Model Business Practices, Version 3.3"; the code lists are summarised in
// tests/reference/data/espi/SOURCES.md); the values a delivered-energy interval series uses
// match the published sample saved there (its ReadingType: accumulationBehaviour 4,
// commodity 1, flowDirection 1, kind 12, uom 72).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace ampledger {

// ReadingType/accumulationBehaviour (AccumulationKind): 4 deltaData, "the difference between
// the value at the end of the interval and the value at its start", i.e. interval energy.
constexpr int kEspiAccumulationDeltaData = 4;
// ReadingType/commodity (CommodityKind): 1 electricity secondary-metered (metered at the
// low-voltage service, as a house or a building's branch circuits are).
constexpr int kEspiCommodityElectricitySecondary = 1;
// ReadingType/dataQualifier (DataQualifierKind): 12 normal (a plain measured value).
constexpr int kEspiDataQualifierNormal = 12;
// ReadingType/flowDirection (FlowDirectionKind): 1 forward (delivered to the customer),
// 19 reverse (received from the customer, e.g. a solar export).
constexpr int kEspiFlowForward = 1;
constexpr int kEspiFlowReverse = 19;
// ReadingType/kind (MeasurementKind): 12 energy.
constexpr int kEspiKindEnergy = 12;
// ReadingType/uom (UnitSymbolKind): 72 Wh; with powerOfTenMultiplier 0 a value is whole Wh.
constexpr int kEspiUomWattHour = 72;
// ReadingType/timeAttribute (TimePeriodOfInterest): 0 none; the interval length is stated in
// intervalLength, as the published sample does.
constexpr int kEspiTimeAttributeNone = 0;
// UsagePoint/ServiceCategory/kind (ServiceKind): 0 electricity.
constexpr int kEspiServiceElectricity = 0;

// The ESPI namespace and Atom's (RFC 4287).
inline constexpr const char* kEspiNamespace = "http://naesb.org/espi";
inline constexpr const char* kAtomNamespace = "http://www.w3.org/2005/Atom";

struct EspiReadingType {
  int accumulation_behaviour = kEspiAccumulationDeltaData;
  int commodity = kEspiCommodityElectricitySecondary;
  int data_qualifier = kEspiDataQualifierNormal;
  int flow_direction = kEspiFlowForward;
  int interval_length_s = 900;  // default interval length, seconds
  int kind = kEspiKindEnergy;
  int power_of_ten_multiplier = 0;  // value x 10^this is in `uom`
  int time_attribute = kEspiTimeAttributeNone;
  int uom = kEspiUomWattHour;
};

// TimeType: seconds since 1970-01-01T00:00:00Z.
struct EspiIntervalReading {
  std::int64_t start_s = 0;
  std::int64_t duration_s = 0;
  std::int64_t value = 0;  // in ReadingType units: value x 10^multiplier uom
};

struct EspiIntervalBlock {
  std::int64_t start_s = 0;
  std::int64_t duration_s = 0;
  std::vector<EspiIntervalReading> readings;
};

// One MeterReading with its ReadingType and blocks, under its UsagePoint.
struct EspiSeries {
  std::string usage_point_title;
  std::string title;  // the MeterReading entry's title
  EspiReadingType type;
  std::vector<EspiIntervalBlock> blocks;
};

struct EspiFeed {
  std::string title;
  std::vector<EspiSeries> series;  // grouped by usage_point_title when written
};

}  // namespace ampledger
