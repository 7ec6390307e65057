// storage/main_meter_store.cpp
#include "storage/main_meter_store.h"

namespace ampledger {
namespace {

Result<std::vector<MainMeterRead>> SelectAll(const Database& db) {
  Result<Statement> select = db.Prepare(
      "SELECT id, kind, at_ms, period_start_ms, kwh, source FROM main_meter_read "
      "ORDER BY at_ms, id");
  if (!select.ok()) return select.status();
  std::vector<MainMeterRead> reads;
  for (;;) {
    Result<bool> row = select->Step("list main meter reads");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    MainMeterRead& read = reads.emplace_back();
    read.id = select->Int(0);
    read.kind = select->Text(1) == "period" ? MeterReadKind::kPeriod : MeterReadKind::kRegister;
    read.at_ms = select->Int(2);
    if (!select->IsNull(3)) read.period_start_ms = select->Int(3);
    read.kwh = select->Double(4);
    read.source = select->Text(5);
  }
  return reads;
}

Result<std::int64_t> InsertChecked(const Database& db, const MainMeterRead& read,
                                   UnixMs added_ms) {
  Result<std::vector<MainMeterRead>> existing = SelectAll(db);
  if (!existing.ok()) return existing.status();
  if (Status s = CheckNewMeterRead(*existing, read); !s.ok()) return s;
  Result<Statement> insert = db.Prepare(
      "INSERT INTO main_meter_read (kind, at_ms, period_start_ms, kwh, source, added_ms) "
      "VALUES (?1, ?2, ?3, ?4, ?5, ?6)");
  if (!insert.ok()) return insert.status();
  insert->Bind(1, std::string_view(MeterReadKindName(read.kind)));
  insert->Bind(2, static_cast<std::int64_t>(read.at_ms));
  if (read.kind == MeterReadKind::kPeriod) {
    insert->Bind(3, static_cast<std::int64_t>(read.period_start_ms));
  }
  insert->Bind(4, read.kwh);
  insert->Bind(5, std::string_view(read.source));
  insert->Bind(6, static_cast<std::int64_t>(added_ms));
  if (Status s = insert->Run("insert main meter read"); !s.ok()) return s;
  return static_cast<std::int64_t>(sqlite3_last_insert_rowid(db.handle()));
}

}  // namespace

Result<std::int64_t> AddMainMeterRead(const Database& db, const MainMeterRead& read,
                                      UnixMs added_ms) {
  const char* what = "add main meter read";
  if (Status s = db.Exec("BEGIN IMMEDIATE", what); !s.ok()) return s;
  Result<std::int64_t> id = InsertChecked(db, read, added_ms);
  Status s = id.ok() ? db.Exec("COMMIT", what) : id.status();
  if (!s.ok()) {
    (void)db.Exec("ROLLBACK", what);
    return s;
  }
  return id;
}

Result<std::vector<MainMeterRead>> ListMainMeterReads(const Database& db) {
  return SelectAll(db);
}

Status RemoveMainMeterRead(const Database& db, std::int64_t id) {
  Result<Statement> remove = db.Prepare("DELETE FROM main_meter_read WHERE id = ?1");
  if (!remove.ok()) return remove.status();
  remove->Bind(1, id);
  if (Status s = remove->Run("remove main meter read"); !s.ok()) return s;
  if (sqlite3_changes(db.handle()) == 0) {
    return Status::NotFound("no main meter read " + std::to_string(id));
  }
  return Status::Ok();
}

}  // namespace ampledger
