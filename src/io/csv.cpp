#include "io/csv.h"

#include <fmt/format.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <utility>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"

namespace keel::io {

CsvReader::CsvReader(std::string name, const CsvOptions& options)
    : name_(std::move(name)), options_(options) {
  if (options_.hash) sha_ = std::make_unique<Sha256>();
}

CsvReader::CsvReader(CsvReader&& o) noexcept
    : name_(std::move(o.name_)),
      options_(o.options_),
      file_(std::exchange(o.file_, nullptr)),
      memory_(std::move(o.memory_)),
      from_memory_(o.from_memory_),
      buf_(std::move(o.buf_)),
      pos_(o.pos_),
      end_(o.end_),
      consumed_(o.consumed_),
      file_size_(o.file_size_),
      eof_(o.eof_),
      started_(o.started_),
      line_(o.line_),
      spans_(std::move(o.spans_)),
      scratch_(std::move(o.scratch_)),
      sha_(std::move(o.sha_)),
      digest_(std::move(o.digest_)) {}

CsvReader& CsvReader::operator=(CsvReader&& o) noexcept {
  if (this != &o) {
    this->~CsvReader();
    new (this) CsvReader(std::move(o));
  }
  return *this;
}

CsvReader::~CsvReader() {
  if (file_) std::fclose(file_);
}

CsvReader CsvReader::open(const std::filesystem::path& path, const CsvOptions& options) {
  if (is_standard_input(path)) return from_text(standard_input_text(), input_name(path), options);
  CsvReader r(path.string(), options);
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec))
    throw InputError(fmt::format("{}: is a folder, not a file", printable(r.name_)));
  r.file_ = std::fopen(path.c_str(), "rb");
  if (!r.file_)
    throw InputError(fmt::format("{}: cannot open: {}", printable(r.name_), std::strerror(errno)));
  const auto size = std::filesystem::file_size(path, ec);
  r.file_size_ = ec ? 0 : size;
  r.buf_.resize(options.chunk_bytes);
  return r;
}

CsvReader CsvReader::from_text(std::string text, std::string name, const CsvOptions& options) {
  CsvReader r(std::move(name), options);
  r.from_memory_ = true;
  r.file_size_ = text.size();
  r.buf_.assign(text.begin(), text.end());
  r.end_ = r.buf_.size();
  if (r.sha_) r.sha_->update(r.buf_.data(), r.buf_.size());
  r.eof_ = true;
  return r;
}

bool CsvReader::refill() {
  if (eof_) return false;
  // Keep the unread tail at the front of the buffer.
  if (pos_ > 0) {
    std::memmove(buf_.data(), buf_.data() + pos_, end_ - pos_);
    end_ -= pos_;
    consumed_ += pos_;
    pos_ = 0;
  }
  if (end_ == buf_.size()) {
    if (buf_.size() >= options_.max_record_bytes)
      throw InputError(fmt::format("{}:{}: a record is longer than {} MiB; is the file CSV?",
                                   printable(name_), line_, options_.max_record_bytes >> 20));
    buf_.resize(std::min(buf_.size() * 2, options_.max_record_bytes));
  }
  const std::size_t got = std::fread(buf_.data() + end_, 1, buf_.size() - end_, file_);
  if (got == 0) {
    if (std::ferror(file_))
      throw InputError(fmt::format("{}: read failed: {}", printable(name_), std::strerror(errno)));
    eof_ = true;
    return false;
  }
  if (sha_) sha_->update(buf_.data() + end_, got);
  end_ += got;
  return true;
}

std::string CsvReader::sha256_hex() {
  if (!sha_) return {};
  if (digest_.empty()) {
    while (!eof_) {
      pos_ = end_;  // drop what is buffered: only the hash matters now
      refill();
    }
    digest_ = sha_->hex();
  }
  return digest_;
}

bool CsvReader::next(CsvRecord& record) {
  if (!started_) {
    started_ = true;
    while (end_ - pos_ < 3 && refill()) {
    }
    if (end_ - pos_ >= 3 && std::memcmp(buf_.data() + pos_, "\xEF\xBB\xBF", 3) == 0) pos_ += 3;
  }
  for (;;) {
    if (pos_ == end_ && !refill()) return false;
    if (parse(record) == Step::done) return true;
    if (!refill()) {
      // eof_ is now set; the parse below treats the buffer end as end of input.
      if (parse(record) == Step::done) return true;
      return false;
    }
  }
}

CsvReader::Step CsvReader::parse(CsvRecord& record) {
  const char delim = options_.delimiter;
  const char* const base = buf_.data();
  const char* p = base + pos_;
  const char* const e = base + end_;
  std::uint64_t newlines = 0;
  spans_.clear();
  scratch_.clear();
  record.problem.reset();
  record.quoted0 = false;

  auto off = [&](const char* q) { return static_cast<std::uint32_t>(q - base); };
  auto finish = [&](const char* q) {
    record.line = line_;
    line_ += newlines;
    pos_ = static_cast<std::size_t>(q - base);
    record.fields.resize(spans_.size());
    for (std::size_t i = 0; i < spans_.size(); ++i) {
      const Span& s = spans_[i];
      record.fields[i] = s.scratch ? std::string_view(scratch_.data() + s.offset, s.length)
                                   : std::string_view(base + s.offset, s.length);
    }
    return Step::done;
  };
  // A problem: note it, then skip to the end of the physical line.
  auto fail = [&](const char* q, std::string reason) {
    const void* nl = std::memchr(q, '\n', static_cast<std::size_t>(e - q));
    if (!nl && !eof_) return Step::need_more;
    record.problem = CsvProblem{spans_.size(), std::move(reason)};
    const char* stop = nl ? static_cast<const char*>(nl) + 1 : e;
    if (nl) ++newlines;
    return finish(stop);
  };

  for (;;) {
    if (p == e) {
      if (!eof_) return Step::need_more;
      spans_.push_back({off(p), 0, false});
      return finish(p);
    }
    if (*p == '"') {
      if (spans_.empty()) record.quoted0 = true;
      ++p;
      const auto start = static_cast<std::uint32_t>(scratch_.size());
      for (;;) {
        const char* q =
            static_cast<const char*>(std::memchr(p, '"', static_cast<std::size_t>(e - p)));
        if (!q) {
          if (!eof_) return Step::need_more;
          newlines += static_cast<std::uint64_t>(std::count(p, e, '\n'));
          record.problem = CsvProblem{spans_.size(),
                                      "quoted field is not closed before the end of the file "
                                      "(RFC 4180 section 2.7)"};
          return finish(e);
        }
        newlines += static_cast<std::uint64_t>(std::count(p, q, '\n'));
        scratch_.append(p, q);
        p = q + 1;
        if (p == e && !eof_) return Step::need_more;
        if (p < e && *p == '"') {
          scratch_.push_back('"');
          ++p;
          continue;
        }
        break;
      }
      spans_.push_back({start, static_cast<std::uint32_t>(scratch_.size() - start), true});
      if (p == e) return finish(p);
      if (*p == delim) {
        ++p;
        continue;
      }
      if (*p == '\n') {
        ++newlines;
        return finish(p + 1);
      }
      if (*p == '\r') {
        if (p + 1 == e && !eof_) return Step::need_more;
        if (p + 1 < e && p[1] == '\n') {
          ++newlines;
          return finish(p + 2);
        }
      }
      spans_.pop_back();
      return fail(p,
                  "unexpected text after a closing double quote; a quote inside a quoted "
                  "field must be doubled (RFC 4180 section 2.7)");
    }
    const char* s = p;
    while (p < e) {
      const char c = *p;
      if (c == delim || c == '\n' || c == '\r' || c == '"') break;
      ++p;
    }
    if (p == e) {
      if (!eof_) return Step::need_more;
      spans_.push_back({off(s), static_cast<std::uint32_t>(p - s), false});
      return finish(p);
    }
    const char c = *p;
    if (c == delim) {
      spans_.push_back({off(s), static_cast<std::uint32_t>(p - s), false});
      ++p;
      continue;
    }
    if (c == '\n') {
      spans_.push_back({off(s), static_cast<std::uint32_t>(p - s), false});
      ++newlines;
      return finish(p + 1);
    }
    if (c == '\r') {
      if (p + 1 == e && !eof_) return Step::need_more;
      if (p + 1 < e && p[1] == '\n') {
        spans_.push_back({off(s), static_cast<std::uint32_t>(p - s), false});
        ++newlines;
        return finish(p + 2);
      }
      return fail(p,
                  "carriage return not followed by a line feed outside double quotes "
                  "(RFC 4180 section 2.1)");
    }
    return fail(p,
                "double quote inside a field that does not start with one; enclose the field "
                "in double quotes and double the quote (RFC 4180 sections 2.5, 2.7)");
  }
}

void append_csv_record(std::string& out, const std::vector<std::string_view>& fields, bool crlf) {
  for (std::size_t i = 0; i < fields.size(); ++i) {
    if (i) out.push_back(',');
    const std::string_view f = fields[i];
    const bool quote = f.find_first_of(",\"\r\n") != std::string_view::npos;
    if (!quote) {
      out.append(f);
      continue;
    }
    out.push_back('"');
    for (char c : f) {
      if (c == '"') out.push_back('"');
      out.push_back(c);
    }
    out.push_back('"');
  }
  out.append(crlf ? "\r\n" : "\n");
}

namespace {

bool formula_start(char c) {
  return c == '=' || c == '+' || c == '-' || c == '@' || c == '\t' || c == '\r';
}

bool plain_number(std::string_view s) {
  std::size_t i = s.size() > 1 && s[0] == '-' ? 1 : 0;
  const std::size_t digits = i;
  while (i < s.size() && s[i] >= '0' && s[i] <= '9') ++i;
  if (i == digits) return false;
  if (i == s.size()) return true;
  if (s[i] != '.' || i + 1 == s.size()) return false;
  for (++i; i < s.size(); ++i)
    if (s[i] < '0' || s[i] > '9') return false;
  return true;
}

bool escaped_apostrophe(std::string_view s) {
  return s.size() >= 2 && s[0] == '\'' && (formula_start(s[1]) || s[1] == '\'');
}

bool needs_guard(std::string_view s) {
  return !s.empty() && ((formula_start(s[0]) && !plain_number(s)) || escaped_apostrophe(s));
}

}  // namespace

std::string_view formula_guarded(std::string_view cell, std::string& scratch) {
  if (!needs_guard(cell)) return cell;
  scratch.assign(1, '\'');
  scratch.append(cell);
  return scratch;
}

std::string_view formula_unguarded(std::string_view cell) {
  return escaped_apostrophe(cell) ? cell.substr(1) : cell;
}

void append_export_record(std::string& out, const std::vector<std::string_view>& fields) {
  bool any = false;
  for (const auto f : fields) any = any || needs_guard(f);
  if (!any) return append_csv_record(out, fields);
  std::vector<std::string> scratch(fields.size());
  std::vector<std::string_view> guarded(fields.size());
  for (std::size_t i = 0; i < fields.size(); ++i)
    guarded[i] = formula_guarded(fields[i], scratch[i]);
  append_csv_record(out, guarded);
}

}  // namespace keel::io
