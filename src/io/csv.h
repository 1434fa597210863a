// A streaming CSV reader after RFC 4180, section 2.
//
// Contract
//  - Reads the input in fixed-size chunks: memory stays constant in the file
//    size (one chunk plus the longest record), however large the file.
//  - Accepts what the RFC's grammar accepts: fields separated by the
//    delimiter (a comma unless told otherwise), records ended by CRLF or, as
//    is common practice, a bare LF; the last record may lack a line break;
//    quoted fields may hold delimiters, CR, LF and doubled quotes ("").
//    Bytes outside the RFC's TEXTDATA (UTF-8 in particular) are kept as they
//    are; a UTF-8 byte order mark at the very start is skipped.
//  - Refuses, with a problem naming the 1-based field and the RFC rule: a
//    double quote inside an unquoted field (2.5), anything but a delimiter or
//    line break after a closing quote (2.7), a CR not followed by LF outside
//    quotes (2.1, 2.6), a quoted field still open at end of file (2.7). After a
//    problem the reader resumes at the next line, so many problems can be
//    reported in one pass.
//  - next() fills a CsvRecord whose field views stay valid until the next
//    call. `line` is the physical line on which the record starts.
//  - The reader can hash every byte it reads (SHA-256) so a caller gets the
//    file's digest in the same pass.
#pragma once

#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "io/sha256.h"

namespace keel::io {

struct CsvProblem {
  std::size_t field = 0;  // 0-based index of the field at fault
  std::string reason;
};

struct CsvRecord {
  std::uint64_t line = 0;
  std::vector<std::string_view> fields;
  std::optional<CsvProblem> problem;  // set: `fields` is incomplete, report and go on

  // A line with nothing on it (one empty unquoted field).
  bool blank() const { return !problem && fields.size() == 1 && fields[0].empty() && !quoted0; }
  bool quoted0 = false;  // whether the first field was quoted
};

struct CsvOptions {
  char delimiter = ',';
  std::size_t chunk_bytes = 1 << 20;
  std::size_t max_record_bytes = 16 << 20;
  bool hash = false;  // compute SHA-256 of the raw bytes
};

class CsvReader {
 public:
  // Throws InputError naming the file when it cannot be opened.
  static CsvReader open(const std::filesystem::path& path, const CsvOptions& options = {});
  // For tests and small inputs held in memory.
  static CsvReader from_text(std::string text, std::string name, const CsvOptions& options = {});

  CsvReader(CsvReader&&) noexcept;
  CsvReader& operator=(CsvReader&&) noexcept;
  ~CsvReader();

  // false at end of input. Throws InputError only for a record longer than
  // max_record_bytes or a read failure (the file cannot be read on).
  bool next(CsvRecord& record);

  const std::string& name() const { return name_; }
  std::uint64_t bytes_consumed() const { return consumed_ + pos_; }
  std::uint64_t file_size() const { return file_size_; }
  // Reads to the end (if not already there) and gives the SHA-256 of all bytes.
  std::string sha256_hex();

 private:
  CsvReader(std::string name, const CsvOptions& options);
  enum class Step { done, need_more };
  Step parse(CsvRecord& record);
  bool refill();  // keeps [pos_, end_); false when nothing more could be read

  std::string name_;
  CsvOptions options_;
  std::FILE* file_ = nullptr;
  std::string memory_;  // from_text input
  bool from_memory_ = false;
  std::vector<char> buf_;
  std::size_t pos_ = 0, end_ = 0;
  std::uint64_t consumed_ = 0;  // bytes dropped from the front of buf_ so far
  std::uint64_t file_size_ = 0;
  bool eof_ = false;
  bool started_ = false;
  std::uint64_t line_ = 1;
  struct Span {
    std::uint32_t offset;
    std::uint32_t length;
    bool scratch;
  };
  std::vector<Span> spans_;
  std::string scratch_;
  std::unique_ptr<Sha256> sha_;
  std::string digest_;
};

// Writes one record, quoting only fields that need it (RFC 4180 2.6, 2.7),
// ending it with CRLF when `crlf`, else LF.
void append_csv_record(std::string& out, const std::vector<std::string_view>& fields,
                       bool crlf = false);

// Cells a spreadsheet cannot run, that still import back exactly (the rule
// of docs/import-formats.md, "Spreadsheets"):
//  - formula_guarded(): a cell starting with = + - @ TAB or CR, or with an
//    apostrophe followed by one of those or by another apostrophe, gets one
//    more apostrophe in front; a plain number (-?digits[.digits], keel's
//    canonical form) is left alone, so numbers stay numbers. Other cells come
//    back as they are. `scratch` holds a guarded cell.
//  - formula_unguarded(): drops one leading apostrophe when the next
//    character is = + - @ TAB CR or an apostrophe; unguard(guard(x)) == x.
//  - append_export_record(): append_csv_record() of the guarded cells.
std::string_view formula_guarded(std::string_view cell, std::string& scratch);
std::string_view formula_unguarded(std::string_view cell);
void append_export_record(std::string& out, const std::vector<std::string_view>& fields);

}  // namespace keel::io
