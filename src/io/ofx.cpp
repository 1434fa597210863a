#include "io/ofx.h"

#include <dlfcn.h>
#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <fstream>
#include <map>
#include <sstream>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "io/ofx_module.h"

// Defined when the program links the libofx pass into itself (the unit tests
// and fuzz targets do); the keel program does not, and loads its module.
#pragma weak keel_ofx_read_v1

#ifndef KEEL_OFX_MODULE_FROM_BIN
#error "KEEL_OFX_MODULE_FROM_BIN: the module's folder relative to the program's (CMakeLists.txt)"
#endif

namespace keel::io {
namespace {

constexpr std::size_t kMaxBytes = 64u << 20;
constexpr std::size_t kMaxDepth = 64;
constexpr std::size_t kMaxName = 64;

constexpr std::array<std::string_view, 21> kTransactionElements = {
    "BUYDEBT",  "BUYMF",       "BUYOPT",         "BUYOTHER",  "BUYSTOCK", "SELLDEBT",
    "SELLMF",   "SELLOPT",     "SELLOTHER",      "SELLSTOCK", "INCOME",   "INVEXPENSE",
    "REINVEST", "RETOFCAP",    "MARGININTEREST", "SPLIT",     "TRANSFER", "JRNLFUND",
    "JRNLSEC",  "INVBANKTRAN", "CLOSUREOPT"};
constexpr std::array<std::string_view, 5> kPositionElements = {"POSDEBT", "POSMF", "POSOPT",
                                                               "POSOTHER", "POSSTOCK"};

bool one_of(std::string_view name, const auto& list) {
  return std::find(list.begin(), list.end(), name) != list.end();
}

// What the well-formedness scan learns on the way: lines and exact day text.
struct ScannedTransaction {
  std::string element;
  std::uint64_t line = 0;
  std::string fitid;
  std::uint64_t fitid_line = 0;
  std::string day;  // DTTRADE, else DTPOSTED, as written
  std::uint64_t day_line = 0;
};

struct ScannedPosition {
  std::uint64_t line = 0;
  std::string unique_id;
};

struct Scan {
  std::vector<ScannedTransaction> transactions;
  std::vector<ScannedPosition> positions;
  std::string as_of;
  std::uint64_t as_of_line = 0;
  std::size_t statements = 0;
};

class Scanner {
 public:
  Scanner(std::string_view text, std::string file) : text_(text), file_(std::move(file)) {}

  Scan run() {
    struct Open {
      std::string name;
      std::uint64_t line;
      std::optional<std::size_t> txn, pos;
    };
    std::vector<Open> stack;
    bool root_seen = false, root_closed = false;
    while (true) {
      const std::size_t lt = text_.find('<', pos_);
      count_lines(lt == std::string_view::npos ? text_.size() : lt);
      if (lt == std::string_view::npos) break;
      const std::string_view before = text_.substr(pos_, lt - pos_);
      if (root_closed && !blank(before)) fail(line_, "OFX", "text after the end of </OFX>");
      pos_ = lt;
      const std::uint64_t tag_line = line_;
      if (starts("<?") || starts("<!")) {
        const std::size_t end = text_.find('>', pos_);
        if (end == std::string_view::npos) fail(tag_line, "?", "a '<?' or '<!' is never closed");
        count_lines(end + 1);
        pos_ = end + 1;
        continue;
      }
      const bool closing = starts("</");
      const std::string name = tag_name(closing ? pos_ + 2 : pos_ + 1, tag_line);
      if (!root_seen) {
        if (closing || name != "OFX")
          fail(tag_line, name, "an OFX file starts with <OFX> after its header");
        root_seen = true;
      } else if (root_closed) {
        fail(tag_line, name, "comes after the end of </OFX>");
      }
      if (closing) {
        if (stack.empty() || stack.back().name != name) {
          const bool open_deeper = std::any_of(stack.begin(), stack.end(),
                                               [&](const Open& o) { return o.name == name; });
          if (open_deeper)
            fail(tag_line, name,
                 fmt::format("closes an element while <{}> opened on line {} is still open",
                             stack.back().name, stack.back().line));
          fail(tag_line, name, "closes no open element");
        }
        stack.pop_back();
        if (stack.empty()) root_closed = true;
        continue;
      }
      // A start tag: a leaf if text follows before the next tag.
      const std::size_t next = text_.find('<', pos_);
      const std::string_view value =
          trim(text_.substr(pos_, (next == std::string_view::npos ? text_.size() : next) - pos_));
      if (!value.empty()) {
        leaf(name, value, tag_line, stack);
        count_lines(next == std::string_view::npos ? text_.size() : next);
        pos_ = next == std::string_view::npos ? text_.size() : next;
        // OFX 2 (XML) closes leaves too.
        const std::string end_tag = "</" + name + ">";
        if (text_.substr(pos_, end_tag.size()) == end_tag) pos_ += end_tag.size();
        continue;
      }
      if (stack.size() >= kMaxDepth)
        fail(tag_line, name, fmt::format("nested more than {} elements deep", kMaxDepth));
      Open open{name, tag_line, std::nullopt, std::nullopt};
      if (one_of(name, kTransactionElements)) {
        open.txn = scan_.transactions.size();
        scan_.transactions.push_back({name, tag_line, "", 0, "", 0});
      } else if (one_of(name, kPositionElements)) {
        open.pos = scan_.positions.size();
        scan_.positions.push_back({tag_line, ""});
      } else if (name == "INVSTMTRS") {
        ++scan_.statements;
      }
      stack.push_back(std::move(open));
    }
    if (!root_seen) fail(0, "OFX", "no <OFX> element: this is not an OFX file");
    if (!stack.empty()) fail(stack.back().line, stack.back().name, "opened here and never closed");
    return std::move(scan_);
  }

 private:
  template <typename Stack>
  void leaf(const std::string& name, std::string_view value, std::uint64_t line, Stack& stack) {
    if (name == "DTASOF" && !stack.empty() && stack.back().name == "INVSTMTRS") {
      scan_.as_of = std::string(value);
      scan_.as_of_line = line;
      return;
    }
    for (auto it = stack.rbegin(); it != stack.rend(); ++it) {
      if (it->txn) {
        auto& t = scan_.transactions[*it->txn];
        if (name == "FITID" && t.fitid.empty()) {
          t.fitid = std::string(value);
          t.fitid_line = line;
        } else if (name == "DTTRADE" || (name == "DTPOSTED" && t.day.empty())) {
          t.day = std::string(value);
          t.day_line = line;
        }
        return;
      }
      if (it->pos) {
        if (name == "UNIQUEID") scan_.positions[*it->pos].unique_id = std::string(value);
        return;
      }
    }
  }

  static std::string_view trim(std::string_view s) {
    while (!s.empty() &&
           (s.front() == ' ' || s.front() == '\t' || s.front() == '\r' || s.front() == '\n'))
      s.remove_prefix(1);
    while (!s.empty() &&
           (s.back() == ' ' || s.back() == '\t' || s.back() == '\r' || s.back() == '\n'))
      s.remove_suffix(1);
    return s;
  }
  static bool blank(std::string_view s) { return trim(s).empty(); }
  bool starts(std::string_view p) const { return text_.substr(pos_, p.size()) == p; }

  std::string tag_name(std::size_t from, std::uint64_t line) {
    std::size_t i = from;
    while (
        i < text_.size() && i - from <= kMaxName &&
        (std::isalnum(static_cast<unsigned char>(text_[i])) || text_[i] == '.' || text_[i] == '_'))
      ++i;
    const std::string name(text_.substr(from, i - from));
    if (i >= text_.size() || text_[i] != '>' || name.empty()) {
      const std::string shown(text_.substr(pos_, std::min<std::size_t>(20, text_.size() - pos_)));
      fail(line, name.empty() ? shown : name,
           fmt::format("'{}' is not an OFX tag", printable(shown)));
    }
    pos_ = i + 1;
    std::string upper = name;
    for (auto& c : upper) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    return upper;
  }

  void count_lines(std::size_t upto) {
    for (; counted_ < upto && counted_ < text_.size(); ++counted_)
      if (text_[counted_] == '\n') ++line_;
  }

  [[noreturn]] void fail(std::uint64_t line, std::string_view element, std::string_view why) {
    throw InputError(fmt::format("{}{}: element <{}>: {}", printable(file_),
                                 line ? fmt::format(":{}", line) : "", printable(element), why));
  }

  std::string_view text_;
  std::string file_;
  std::size_t pos_ = 0, counted_ = 0;
  std::uint64_t line_ = 1;
  Scan scan_;
};

std::string cstr(const char* s, std::size_t max) {
  return std::string(s, strnlen(s, max));
}

// The libofx pass: linked in, else from keel-ofx.so, looked for first where
// `cmake --install` puts it relative to the program (KEEL_OFX_MODULE_FROM_BIN,
// e.g. ../lib/keel), then beside the program (the build folder). Loaded
// once, on the first OFX file, and kept.
KeelOfxRead ofx_reader(const std::string& name) {
  if (&keel_ofx_read_v1 != nullptr) return &keel_ofx_read_v1;
  static KeelOfxRead loaded = nullptr;
  if (loaded) return loaded;
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::path program = fs::read_symlink("/proc/self/exe", ec);
  if (ec)
    throw InputError(fmt::format("{}: cannot find keel's OFX module: where is this program? {}",
                                 printable(name), ec.message()));
  const fs::path folders[] = {(program.parent_path() / KEEL_OFX_MODULE_FROM_BIN).lexically_normal(),
                              program.parent_path()};
  for (const auto& folder : folders) {
    const fs::path module = folder / kOfxModuleFile;
    if (!fs::exists(module, ec)) continue;
    void* handle = dlopen(module.c_str(), RTLD_NOW | RTLD_LOCAL);
    if (!handle)
      throw InputError(fmt::format("{}: keel's OFX module cannot be loaded: {}", printable(name),
                                   printable(dlerror())));
    loaded = reinterpret_cast<KeelOfxRead>(dlsym(handle, kOfxModuleEntry));
    if (!loaded)
      throw InputError(fmt::format("{}: {} is not this keel's OFX module (it has no {})",
                                   printable(name), printable(module.string()), kOfxModuleEntry));
    return loaded;
  }
  throw InputError(fmt::format(
      "{}: reading OFX needs keel's OFX module, {}, found neither in {} nor in {}; install keel "
      "with it, or import the statement as CSV",
      printable(name), kOfxModuleFile, printable(folders[0].string()),
      printable(folders[1].string())));
}

struct Collected {
  std::string account, currency;
  std::optional<double> cash;
  bool statement = false;
  std::vector<OfxTransactionData> transactions;
  std::vector<OfxPositionData> positions;
  std::map<std::string, std::string> tickers;  // unique id -> ticker
};

int on_account(const OfxAccountData d, void* p) {
  auto& c = *static_cast<Collected*>(p);
  if (d.account_id_valid) c.account = cstr(d.account_id, sizeof d.account_id);
  if (d.currency_valid && c.currency.empty()) c.currency = cstr(d.currency, sizeof d.currency);
  return 0;
}
int on_statement(const OfxStatementData d, void* p) {
  auto& c = *static_cast<Collected*>(p);
  c.statement = true;
  if (d.currency_valid) c.currency = cstr(d.currency, sizeof d.currency);
  if (d.available_balance_valid) c.cash = d.available_balance;
  return 0;
}
int on_security(const OfxSecurityData d, void* p) {
  auto& c = *static_cast<Collected*>(p);
  if (d.unique_id_valid && d.ticker_valid)
    c.tickers[cstr(d.unique_id, sizeof d.unique_id)] = cstr(d.ticker, sizeof d.ticker);
  return 0;
}
int on_transaction(const OfxTransactionData d, void* p) {
  static_cast<Collected*>(p)->transactions.push_back(d);
  return 0;
}
int on_position(const OfxPositionData d, void* p) {
  static_cast<Collected*>(p)->positions.push_back(d);
  return 0;
}

Date ofx_day(const std::string& text, std::uint64_t line, const std::string& file,
             std::string_view element) {
  const bool digits = text.size() >= 8 && std::all_of(text.begin(), text.begin() + 8,
                                                      [](char c) { return c >= '0' && c <= '9'; });
  if (digits) {
    const int y = std::stoi(text.substr(0, 4)), m = std::stoi(text.substr(4, 2)),
              d = std::stoi(text.substr(6, 2));
    if (Date::valid_ymd(y, m, d)) return Date::from_ymd(y, m, d);
  }
  throw InputError(fmt::format("{}:{}: element <{}>: '{}' is not a day written YYYYMMDD",
                               printable(file), line, element, printable(text)));
}

std::optional<Decimal> figure(int valid, double value) {
  if (!valid) return std::nullopt;
  return decimal_from_double(value);
}

Decimal magnitude(const Decimal& d) {
  return d.is_negative() ? -d : d;
}

void set_trade(OfxTransaction& t, const OfxTransactionData& d, TxnKind kind) {
  t.kind = kind;
  if (auto q = figure(d.units_valid, d.units)) t.quantity = magnitude(*q);
  t.price = figure(d.unitprice_valid, d.unitprice);
  Decimal fee;
  for (auto [valid, value] :
       {std::pair{d.commission_valid, d.commission}, std::pair{d.fees_valid, d.fees},
        std::pair{d.taxes_valid, d.taxes}, std::pair{d.load_valid, d.load}})
    if (valid) fee += magnitude(decimal_from_double(value));
  if (!fee.is_zero()) t.fee = fee;
}

void interpret(OfxTransaction& t, const OfxTransactionData& d) {
  const auto amount = figure(d.amount_valid, d.amount);
  if (d.memo_valid) t.note = cstr(d.memo, sizeof d.memo);
  if (!d.invtransactiontype_valid) {
    t.refused = "libofx gave no investment transaction type";
    return;
  }
  switch (d.invtransactiontype) {
    case OFX_BUYDEBT:
    case OFX_BUYMF:
    case OFX_BUYOPT:
    case OFX_BUYOTHER:
    case OFX_BUYSTOCK:
      set_trade(t, d, TxnKind::buy);
      return;
    case OFX_SELLDEBT:
    case OFX_SELLMF:
    case OFX_SELLOPT:
    case OFX_SELLOTHER:
    case OFX_SELLSTOCK:
      set_trade(t, d, TxnKind::sell);
      return;
    case OFX_INCOME:
      t.kind = d.income_type_valid && d.income_type == OfxTransactionData::OFX_INTEREST
                   ? TxnKind::interest
                   : TxnKind::dividend;
      if (d.income_type_valid && (d.income_type == OfxTransactionData::OFX_CGLONG ||
                                  d.income_type == OfxTransactionData::OFX_CGSHORT))
        t.note = t.note.empty() ? "capital gain distribution" : t.note;
      if (amount) t.amount = magnitude(*amount);
      if (d.withholding_valid && d.withholding != 0)
        t.withheld = magnitude(decimal_from_double(d.withholding));
      return;
    case OFX_INVEXPENSE:
    case OFX_MARGININTEREST:
      t.kind = TxnKind::fee;
      if (amount) t.amount = magnitude(*amount);
      if (d.invtransactiontype == OFX_MARGININTEREST && t.note.empty()) t.note = "margin interest";
      return;
    case OFX_TRANSFER: {
      const bool in =
          !d.transfer_action_valid || d.transfer_action == OfxTransactionData::OFX_TFERACTION_IN;
      t.kind = in ? TxnKind::transfer_in : TxnKind::transfer_out;
      if (auto q = figure(d.units_valid, d.units)) t.quantity = magnitude(*q);
      if (in) t.price = figure(d.unitprice_valid, d.unitprice);
      return;
    }
    case OFX_INVBANKTRAN: {
      if (!amount) {
        t.refused = "has no amount";
        return;
      }
      const bool in = amount->is_positive();
      t.amount = magnitude(*amount);
      t.kind = in ? TxnKind::deposit : TxnKind::withdrawal;
      if (d.transactiontype_valid) {
        if (d.transactiontype == OFX_INT && in) t.kind = TxnKind::interest;
        if (d.transactiontype == OFX_DIV && in) t.kind = TxnKind::dividend;
        if ((d.transactiontype == OFX_FEE || d.transactiontype == OFX_SRVCHG) && !in)
          t.kind = TxnKind::fee;
      }
      if (d.name_valid && t.note.empty()) t.note = cstr(d.name, sizeof d.name);
      return;
    }
    case OFX_JRNLFUND:
    case OFX_JRNLSEC:
      t.skipped = true;
      return;
    case OFX_REINVEST:
      t.refused = "a reinvestment is not read yet; book it as a dividend and a buy";
      return;
    case OFX_RETOFCAP:
      t.refused = "a return of capital is not a kind keel books yet";
      return;
    case OFX_SPLIT:
      t.refused = "keel records splits per security: keel record split --symbol ... --ratio ...";
      return;
    case OFX_CLOSUREOPT:
      t.refused = "option closures are not read";
      return;
  }
  t.refused = "not a transaction keel reads";
}

}  // namespace

Decimal decimal_from_double(double value) {
  if (!std::isfinite(value)) throw InputError("a number in the OFX file is not finite");
  return Decimal::parse(fmt::format("{}", value));
}

bool looks_like_ofx(std::string_view text) {
  if (text.substr(0, 3) == "\xEF\xBB\xBF") text.remove_prefix(3);
  while (!text.empty() && (text.front() == ' ' || text.front() == '\r' || text.front() == '\n' ||
                           text.front() == '\t'))
    text.remove_prefix(1);
  if (text.substr(0, 10) == "OFXHEADER:" || text.substr(0, 5) == "<OFX>") return true;
  return text.substr(0, 5) == "<?xml" &&
         text.substr(0, 512).find("<?OFX") != std::string_view::npos;
}

bool is_ofx_file(const std::filesystem::path& file) {
  if (is_standard_input(file)) return looks_like_ofx(std::string_view(standard_input_text()));
  std::ifstream in(file, std::ios::binary);
  if (!in) return false;
  std::string head(600, '\0');
  in.read(head.data(), static_cast<std::streamsize>(head.size()));
  head.resize(static_cast<std::size_t>(in.gcount()));
  return looks_like_ofx(head);
}

OfxStatement read_ofx(const std::filesystem::path& file) {
  const std::string name = input_name(file);
  std::string text;
  if (is_standard_input(file)) {
    text = standard_input_text();
  } else {
    std::ifstream in(file, std::ios::binary);
    if (!in) throw InputError(fmt::format("{}: cannot open", printable(name)));
    std::ostringstream ss;
    ss << in.rdbuf();
    text = ss.str();
  }
  if (text.size() > kMaxBytes)
    throw InputError(
        fmt::format("{}: larger than 64 MiB; is it an OFX statement?", printable(name)));
  const Scan scan = Scanner(text, name).run();
  if (scan.statements != 1)
    throw InputError(fmt::format(
        "{}: holds {} investment statements (<INVSTMTRS>); keel reads one account's statement "
        "per file",
        printable(name), scan.statements));

  const KeelOfxRead read = ofx_reader(name);
  Collected c;
  const KeelOfxCallbacks callbacks{on_account,     on_statement, on_security,
                                   on_transaction, on_position,  &c};
  read(name.c_str(), &callbacks);
  if (!c.statement)
    throw InputError(fmt::format("{}: libofx found no statement in it", printable(name)));

  OfxStatement st;
  st.account = c.account;
  st.currency = c.currency;
  if (scan.as_of.empty())
    throw InputError(fmt::format("{}: element <INVSTMTRS>: has no DTASOF", printable(name)));
  st.as_of = ofx_day(scan.as_of, scan.as_of_line, name, "DTASOF");
  if (c.cash) st.cash = decimal_from_double(*c.cash);

  auto symbol_of = [&](const char* id, std::size_t size) {
    const std::string uid = cstr(id, size);
    const auto it = c.tickers.find(uid);
    return it == c.tickers.end() ? uid : it->second;
  };
  std::map<std::string, const ScannedTransaction*> by_fitid;
  for (const auto& s : scan.transactions) {
    if (s.fitid.empty())
      throw InputError(
          fmt::format("{}:{}: element <{}>: has no FITID", printable(name), s.line, s.element));
    const auto [it, fresh] = by_fitid.emplace(s.fitid, &s);
    if (!fresh)
      throw InputError(fmt::format("{}:{}: element <FITID>: '{}' also identifies the {} on line {}",
                                   printable(name), s.fitid_line, printable(s.fitid),
                                   it->second->element, it->second->line));
  }
  for (const auto& d : c.transactions) {
    const std::string fitid = d.fi_id_valid ? cstr(d.fi_id, sizeof d.fi_id) : "";
    const auto it = by_fitid.find(fitid);
    if (it == by_fitid.end()) continue;  // not in an investment transaction list
    const ScannedTransaction& s = *it->second;
    OfxTransaction t;
    t.line = s.line;
    t.element = s.element;
    t.fitid = fitid;
    if (s.day.empty())
      throw InputError(fmt::format("{}:{}: element <{}>: has no DTTRADE or DTPOSTED",
                                   printable(name), s.line, s.element));
    t.date = ofx_day(s.day, s.day_line, name, "DTTRADE");
    if (d.unique_id_valid) t.security = symbol_of(d.unique_id, sizeof d.unique_id);
    if (d.currency_valid) t.currency = cstr(d.currency, sizeof d.currency);
    interpret(t, d);
    st.transactions.push_back(std::move(t));
  }
  std::sort(st.transactions.begin(), st.transactions.end(),
            [](const OfxTransaction& a, const OfxTransaction& b) { return a.line < b.line; });
  std::size_t next_position = 0;
  for (const auto& p : c.positions) {
    OfxPosition pos;
    pos.security = p.unique_id_valid ? symbol_of(p.unique_id, sizeof p.unique_id) : "";
    const std::string uid = p.unique_id_valid ? cstr(p.unique_id, sizeof p.unique_id) : "";
    for (std::size_t i = next_position; i < scan.positions.size(); ++i)
      if (scan.positions[i].unique_id == uid) {
        pos.line = scan.positions[i].line;
        next_position = i + 1;
        break;
      }
    pos.units = p.units_valid ? decimal_from_double(p.units) : Decimal();
    if (p.position_type_valid && p.position_type == OfxPositionData::OFX_POSITION_SHORT &&
        pos.units.is_positive())
      pos.units = -pos.units;
    st.positions.push_back(std::move(pos));
  }
  return st;
}

}  // namespace keel::io
