#include "io/demo.h"

#include <fmt/format.h>
#include <toml++/toml.h>

#include <fstream>
#include <sstream>
#include <stdexcept>

#include "core/error.h"
#include "core/text.h"
#include "io/demo_data.h"
#include "io/ledger_intake.h"
#include "io/market_intake.h"

namespace keel::io {
namespace fs = std::filesystem;
namespace {

struct TomlFile {
  std::string name;
  [[noreturn]] void fail(const toml::node& node, std::string_view key, std::string_view why) const {
    throw InputError(fmt::format("{}:{}: key '{}': {}", printable(name), node.source().begin.line,
                                 printable(key), why));
  }
  const toml::node& need(const toml::table& t, std::string_view key) const {
    const toml::node* n = t.get(key);
    if (!n) throw InputError(fmt::format("{}: key '{}' is missing", printable(name), key));
    return *n;
  }
  std::string text(const toml::table& t, std::string_view key) const {
    const toml::node& n = need(t, key);
    if (auto s = n.value<std::string>(); s && !s->empty()) return *s;
    fail(n, key, "must be a non-empty string");
  }
  Date date(const toml::table& t, std::string_view key) const {
    const toml::node& n = need(t, key);
    const auto s = n.value<std::string>();
    if (!s) fail(n, key, "must be a date written as a string, \"YYYY-MM-DD\"");
    try {
      return Date::parse(*s);
    } catch (const InputError& e) {
      fail(n, key, e.what());
    }
  }
};

// The bytes of one built-in file; a name missing from the build is a bug.
std::string_view built_in_file(std::string_view name) {
  for (const auto& f : embedded_demo_files())
    if (f.name == name) return f.text;
  throw std::logic_error(fmt::format("the built-in demo data has no {}", name));
}

constexpr std::string_view kBuiltInFolder = "built-in demo data";

// scenario.toml's keys; `name` names the file in messages.
DemoScenario parse_scenario(const std::string& text, const std::string& name) {
  const TomlFile file{name};
  toml::table root;
  try {
    root = toml::parse(text, file.name);
  } catch (const toml::parse_error& e) {
    throw InputError(fmt::format("{}:{}:{}: not valid TOML: {}", printable(file.name),
                                 e.source().begin.line, e.source().begin.column,
                                 printable(e.description())));
  }
  for (const auto& [k, v] : root) {
    const auto key = k.str();
    if (key != "household" && key != "first_day" && key != "last_day" && key != "benchmark" &&
        key != "accounts")
      file.fail(v, key,
                "unknown key; expected one of: household, first_day, last_day, benchmark, "
                "accounts");
  }
  DemoScenario s;
  s.household = file.text(root, "household");
  s.first_day = file.date(root, "first_day");
  s.last_day = file.date(root, "last_day");
  if (s.last_day < s.first_day)
    file.fail(file.need(root, "last_day"), "last_day", "is before first_day");
  s.benchmark = file.text(root, "benchmark");
  const toml::node& accounts = file.need(root, "accounts");
  const toml::array* list = accounts.as_array();
  if (!list || list->empty()) file.fail(accounts, "accounts", "must be a list of account names");
  for (const auto& a : *list) {
    auto name = a.value<std::string>();
    if (!name || name->empty()) file.fail(a, "accounts", "must be a list of account names");
    s.accounts.push_back(*name);
  }
  return s;
}

}  // namespace

fs::path DemoScenario::rule_file(const fs::path& ledger_dir) const {
  return built_in() ? ledger_dir / "rule.toml" : dir / ".." / "rule.toml";
}

DemoScenario built_in_scenario() {
  return parse_scenario(std::string(built_in_file("scenario.toml")),
                        (fs::path(kBuiltInFolder) / "scenario.toml").string());
}

std::string_view built_in_rule() {
  return built_in_file("rule.toml");
}

DemoScenario load_scenario(const fs::path& dir, std::string_view option) {
  std::error_code ec;
  if (!fs::is_directory(dir, ec))
    throw InputError(fmt::format("{}: '{}' is not a folder holding the demo scenario", option,
                                 printable(dir.string())));
  const fs::path toml_path = dir / "scenario.toml";
  for (const auto& f : kDemoFiles)
    if (!fs::is_regular_file(dir / f.file, ec))
      throw InputError(fmt::format("{}: '{}' has no {} (run examples/demo/generate.py to write it)",
                                   option, printable(dir.string()), f.file));
  std::ifstream in(toml_path, std::ios::binary);
  if (!in)
    throw InputError(
        fmt::format("{}: '{}' has no scenario.toml (run examples/demo/generate.py to "
                    "write it)",
                    option, printable(dir.string())));
  std::stringstream buffer;
  buffer << in.rdbuf();
  DemoScenario s = parse_scenario(buffer.str(), toml_path.string());
  s.dir = dir;
  return s;
}

std::vector<DemoImport> import_scenario(store::Database& db, const DemoScenario& scenario) {
  std::vector<DemoImport> done;
  ImportOptions options;  // keel's own layouts; nothing to map
  for (const auto& f : kDemoFiles) {
    const fs::path path = (scenario.built_in() ? fs::path(kBuiltInFolder) : scenario.dir) / f.file;
    if (scenario.built_in()) options.content = built_in_file(f.file);
    DemoImport d{std::string(f.what), path.string()};
    if (f.what == "accounts" || f.what == "transactions") {
      const auto sum = f.what == "accounts" ? import_accounts(db, path, options)
                                            : import_transactions(db, path, options);
      d.rows = sum.rows;
      d.added = sum.added;
    } else {
      const auto sum = import_market(db, parse_market_kind(f.what), path, options);
      d.rows = sum.rows;
      d.added = sum.added;
    }
    done.push_back(std::move(d));
  }
  return done;
}

std::vector<std::string> expand_placeholders(const std::vector<std::string>& args,
                                             const DemoScenario& scenario,
                                             const std::filesystem::path& ledger_dir) {
  const Date month_start = Date::from_ymd(scenario.last_day.year(), scenario.last_day.month(), 1);
  const std::pair<std::string_view, std::string> values[] = {
      {"first_day", scenario.first_day.str()},
      {"last_day", scenario.last_day.str()},
      {"month_start", month_start.str()},
      {"year", std::to_string(scenario.last_day.year())},
      {"benchmark", scenario.benchmark},
      {"ledger_dir", ledger_dir.string()},
      {"rule", scenario.rule_file(ledger_dir).string()}};
  std::vector<std::string> out;
  for (const auto& arg : args) {
    std::string text;
    std::size_t i = 0;
    while (i < arg.size()) {
      const std::size_t open = arg.find('{', i);
      if (open == std::string::npos) {
        text += arg.substr(i);
        break;
      }
      const std::size_t close = arg.find('}', open);
      if (close == std::string::npos)
        throw std::logic_error(fmt::format("demo step argument '{}' has an unclosed '{{'", arg));
      const std::string_view name(arg.data() + open + 1, close - open - 1);
      const std::string* value = nullptr;
      for (const auto& [k, v] : values)
        if (k == name) value = &v;
      if (!value)
        throw std::logic_error(
            fmt::format("demo step argument '{}' names no scenario value '{}'", arg, name));
      text += arg.substr(i, open - i) + *value;
      i = close + 1;
    }
    out.push_back(std::move(text));
  }
  return out;
}

}  // namespace keel::io
