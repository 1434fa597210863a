// Fuzz target: the RFC 4180 reader on arbitrary bytes.
//
// Invariants: the reader never reads out of bounds or loops forever; line
// numbers never go backwards; a record without a problem, written back with
// append_csv_record and read again, gives the same fields.
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "core/error.h"
#include "fuzz_check.h"
#include "io/csv.h"

namespace {

std::vector<std::string> copy_fields(const keel::io::CsvRecord& r) {
  return {r.fields.begin(), r.fields.end()};
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0) return 0;
  // The first byte picks the delimiter; the rest is the file.
  static constexpr char kDelimiters[] = {',', ';', '\t', '|'};
  keel::io::CsvOptions options;
  options.delimiter = kDelimiters[data[0] % 4];
  options.hash = (data[0] & 0x10) != 0;
  const std::string text(reinterpret_cast<const char*>(data + 1), size - 1);
  try {
    auto reader = keel::io::CsvReader::from_text(text, "fuzz.csv", options);
    keel::io::CsvRecord record;
    std::uint64_t last_line = 0;
    std::size_t records = 0;
    while (reader.next(record)) {
      KEEL_FUZZ_CHECK(record.line > last_line);
      KEEL_FUZZ_CHECK(record.line <= text.size() + 1);
      KEEL_FUZZ_CHECK(++records <= text.size() + 1);
      last_line = record.line;
      if (record.problem) {
        KEEL_FUZZ_CHECK(!record.problem->reason.empty());
        continue;
      }
      if (options.delimiter != ',') continue;
      const auto fields = copy_fields(record);
      std::vector<std::string_view> views(fields.begin(), fields.end());
      std::string again;
      keel::io::append_csv_record(again, views, (data[0] & 0x20) != 0);
      // A leading byte order mark would be skipped on the way back in.
      if (again.rfind("\xEF\xBB\xBF", 0) == 0) continue;
      auto second = keel::io::CsvReader::from_text(again, "again.csv");
      keel::io::CsvRecord back;
      KEEL_FUZZ_CHECK(second.next(back));
      KEEL_FUZZ_CHECK(!back.problem);
      KEEL_FUZZ_CHECK(copy_fields(back) == fields);
      KEEL_FUZZ_CHECK(!second.next(back));
    }
    KEEL_FUZZ_CHECK(reader.bytes_consumed() == text.size());
    if (options.hash) KEEL_FUZZ_CHECK(reader.sha256_hex().size() == 64);
  } catch (const keel::InputError&) {
    // A refusal with a message is an allowed outcome.
  }
  return 0;
}
