// ReadTransaction: RAII read transaction (BEGIN DEFERRED) on the ledger.
//
// Contract
//  - Every statement run inside it reads one state of the ledger, and they
//    share one read lock instead of taking and releasing it each (for a
//    reader of thousands of names, about a twentieth of its time).
//  - Not for writes: close packs, for one, are kept only outside a
//    transaction (store/market_rows.h).
//  - Inside a transaction already open it does nothing.
//  - Ends in the destructor, which never throws. Errors of BEGIN follow
//    store/sqlite_error.h.
#pragma once

#include "store/database.h"

namespace keel::store {

class ReadTransaction {
 public:
  explicit ReadTransaction(Database& db);
  ~ReadTransaction();
  ReadTransaction(const ReadTransaction&) = delete;
  ReadTransaction& operator=(const ReadTransaction&) = delete;

 private:
  Database& db_;
  bool open_ = false;
};

}  // namespace keel::store
