// Documents generated from the very definitions CLI11 parses, so they cannot
// drift from the program: `keel reference` (Markdown, docs/commands.md),
// `keel manpage` (roff, docs/keel.1) and `keel completion bash|zsh`. Tests
// compare the committed files with what the program prints.
#include <fmt/format.h>

#include <memory>
#include <string>
#include <vector>

#include "cli/context.h"
#include "cli/mistakes.h"
#include "cli/options.h"

namespace keel::cli {
namespace {

bool is_help(const CLI::Option* o) {
  return o->check_lname("help") || o->check_lname("version");
}

void describe_options(const CLI::App& command, std::string& out) {
  const auto options = command.get_options([](const CLI::Option* o) { return !is_help(o); });
  if (options.empty()) return;
  out += "| option | meaning |\n|---|---|\n";
  for (const auto* o : options) {
    std::string meaning = o->get_description();
    if (o->get_required()) meaning += " (required)";
    const std::string def = o->get_default_str();
    if (!def.empty() && !o->get_required() && o->get_expected_min() > 0)
      meaning += fmt::format(" (default `{}`)", def);
    out += fmt::format("| `{}` | {} |\n", o->get_name(o->get_positional(), true), meaning);
  }
  out += "\n";
}

void describe(const CLI::App& command, const std::string& path, std::string& out) {
  if (!path.empty()) {
    out += fmt::format("## `{}`\n\n{}\n\n", path, command.get_description());
    describe_options(command, out);
    const auto lines = examples(command);
    if (!lines.empty()) out += fmt::format("Examples: `{}`\n\n", fmt::join(lines, "`, `"));
  }
  for (const auto* sub : command.get_subcommands({}))
    describe(*sub, path.empty() ? "keel " + sub->get_name() : path + " " + sub->get_name(), out);
}

struct CommandNode {
  std::string path;  // "keel record buy"
  const CLI::App* app;
};

void walk(const CLI::App& command, const std::string& path, std::vector<CommandNode>& out) {
  out.push_back({path, &command});
  for (const auto* sub : command.get_subcommands({})) walk(*sub, path + " " + sub->get_name(), out);
}

std::string roff_escape(std::string text) {
  std::string out;
  for (char c : text) {
    if (c == '\\')
      out += "\\e";
    else if (c == '-')
      out += "\\-";
    else
      out.push_back(c);
  }
  if (!out.empty() && (out.front() == '.' || out.front() == '\'')) out.insert(0, "\\&");
  return out;
}

// A roff list item: .TP, the tag in bold, then the text.
std::string roff_item(const std::string& tag, const std::string& text) {
  return ".TP\n.B " + roff_escape(tag) + "\n" + roff_escape(text) + "\n";
}

std::string manpage(const CLI::App& app) {
  std::vector<CommandNode> nodes;
  walk(app, "keel", nodes);
  std::string out =
      ".TH KEEL 1 \"\" \"keel 0.1.0\" \"User Commands\"\n"
      ".nh\n.ad l\n"  // paths and options are neither hyphenated nor stretched
      ".SH NAME\nkeel \\- " +
      roff_escape(
          "an exact ledger of your own accounts, with rule-based "
          "rebalancing, back-tests and year-end statements") +
      "\n.SH SYNOPSIS\n.B keel\n[\\-\\-db PATH] COMMAND [OPTIONS]\n.br\n.B keel help\n"
      "[COMMAND]\n"
      ".SH DESCRIPTION\n" +
      roff_escape(app.get_description()) +
      "\n.PP\nThe ledger file is found at \\-\\-db, else $KEEL_DB, else "
      "$XDG_DATA_HOME/keel/keel.db, else ~/.local/share/keel/keel.db. The global options "
      "\\-\\-db and \\-\\-allow\\-unsafe\\-permissions may come before or after the command.\n"
      ".SH COMMANDS\n";
  for (std::size_t i = 1; i < nodes.size(); ++i) {
    out += ".SS " + roff_escape(nodes[i].path) + "\n" +
           roff_escape(nodes[i].app->get_description()) + "\n";
    for (const auto* o :
         nodes[i].app->get_options([](const CLI::Option* o) { return !is_help(o); }))
      out += roff_item(o->get_name(o->get_positional(), true), o->get_description());
  }
  out += ".SH EXAMPLES\nThe examples that end each command's \\-\\-help, command by command.\n";
  for (const auto& node : nodes) {
    const auto lines = examples(*node.app);
    if (lines.empty()) continue;
    out += ".PP\n.nf\n.RS\n";
    for (const auto& line : lines) out += roff_escape(line) + "\n";
    out += ".RE\n.fi\n";
  }
  out += ".SH ENVIRONMENT\n";
  out += roff_item("KEEL_DB", "The ledger file, when --db is not given.");
  out += roff_item("XDG_DATA_HOME",
                   "Without --db or KEEL_DB, the ledger is $XDG_DATA_HOME/keel/keel.db.");
  out += roff_item("HOME",
                   "When XDG_DATA_HOME is unset too, the ledger is "
                   "~/.local/share/keel/keel.db.");
  out += roff_item("NO_COLOR", "When set, no colour, even on a terminal.");
  out += roff_item("PAGER",
                   "The program that shows output longer than the terminal (default less -FRX); "
                   "empty or cat: none. Only at a terminal, and not with --no-pager.");
  out += roff_item("PATH",
                   "Searched for chromium (or chromium-browser), which prints the statement as "
                   "PDF.");
  out += roff_item("LC_ALL, LC_PAPER, LANG",
                   "The locale whose paper size (letter or A4) the statement takes when "
                   "--paper is not given; A4 without one.");
  out += roff_item("TMPDIR",
                   "Where temporary folders go: the demo's ledger without --dir, and the page "
                   "Chromium prints.");
  out += ".SH FILES\n";
  out += roff_item("~/.local/share/keel/keel.db",
                   "The default ledger (an SQLite database, mode 0600; keel.db-wal and "
                   "keel.db-shm beside it while in use).");
  out += roff_item("LEDGER.replaced-TIME",
                   "The ledger that keel restore moved aside, kept beside the restored one.");
  out += roff_item("share/bash-completion/completions/keel",
                   "The bash completion script, installed with keel (keel completion bash).");
  out += roff_item("share/zsh/vendor-completions/_keel",
                   "The zsh completion function (share/zsh/site-functions outside /usr).");
  out += ".SH EXIT STATUS\n";
  out += roff_item("0", "Done.");
  out += roff_item("1", "Input refused: a bad option value, file or row. Nothing changed.");
  out += roff_item("2", "The command line was not understood (an unknown command or option).");
  out += roff_item("3", "The ledger file is unusable, busy, or fails its checks.");
  out += roff_item("70", "An internal error: please report it.");
  out +=
      ".SH CAUTIONS\nkeel gives no investment or tax advice. Past results, real or simulated, "
      "do not predict future returns. Tax treatment depends on local rules: check with your "
      "tax authority or a licensed professional.\n";
  return out;
}

std::string option_words(const CLI::App& command, bool with_help) {
  std::string words;
  for (const auto* o : command.get_options([with_help](const CLI::Option* o) {
         return !o->get_positional() && (with_help || !is_help(o));
       }))
    for (const auto& name : o->get_lnames()) words += "--" + name + " ";
  return words;
}

// Each command path ("keel record") with the words that may follow it: its
// subcommands, its options and the global options (accepted after it too).
std::vector<std::pair<std::string, std::string>> completion_table(const CLI::App& app) {
  std::vector<CommandNode> nodes;
  walk(app, "keel", nodes);
  const std::string global = option_words(app, false);
  std::vector<std::pair<std::string, std::string>> table;
  for (const auto& node : nodes) {
    std::string words;
    for (const auto* sub : node.app->get_subcommands({})) words += sub->get_name() + " ";
    words += option_words(*node.app, true);
    if (node.app != &app) words += global;
    table.emplace_back(node.path, words);
  }
  return table;
}

std::string completion_bash(const CLI::App& app) {
  std::string table;
  for (const auto& [path, words] : completion_table(app))
    table += fmt::format("  [\"{}\"]=\"{}\"\n", path, words);
  return "# bash completion for keel; generated by 'keel completion bash'.\n"
         "# Installed with keel for bash-completion, or: source <(keel completion bash)\n"
         "_keel_complete() {\n"
         "  local -A words=(\n" +
         table +
         "  )\n"
         "  local path=keel i w\n"
         "  for ((i = 1; i < COMP_CWORD; i++)); do\n"
         "    w=${COMP_WORDS[i]}\n"
         "    [[ $w == -* ]] && continue\n"
         "    if [[ -n ${words[$path $w]+set} ]]; then path=\"$path $w\"; fi\n"
         "  done\n"
         "  COMPREPLY=($(compgen -W \"${words[$path]}\" -- \"${COMP_WORDS[COMP_CWORD]}\"))\n"
         "}\n"
         "complete -o default -F _keel_complete keel\n";
}

// A native zsh completion function: autoloaded from a folder of $fpath
// (where keel installs it as _keel), or defined and registered with compdef
// when sourced. Offers the words of the command typed so far, else files.
std::string completion_zsh(const CLI::App& app) {
  std::string table;
  for (const auto& [path, words] : completion_table(app))
    table += fmt::format("    '{}' '{}'\n", path, words);
  return "#compdef keel\n"
         "# zsh completion for keel; generated by 'keel completion zsh'.\n"
         "# Installed with keel in zsh's $fpath, or: source <(keel completion zsh)\n"
         "_keel() {\n"
         "  local -A table\n"
         "  table=(\n" +
         table +
         "  )\n"
         "  local at=keel w\n"
         "  for w in ${words[2,CURRENT-1]}; do\n"
         "    [[ $w == -* ]] && continue\n"
         "    (( ${+table[$at $w]} )) && at=\"$at $w\"\n"
         "  done\n"
         "  compadd -- ${=table[$at]} || _files\n"
         "}\n"
         "if [[ $zsh_eval_context[-1] == loadautofunc ]]; then\n"
         "  _keel \"$@\"\n"
         "else\n"
         "  compdef _keel keel\n"
         "fi\n";
}

}  // namespace

void register_reference_command(CLI::App& app) {
  auto words = std::make_shared<std::vector<std::string>>();
  auto* help = app.add_subcommand("help", "Show the help of keel or of one of its commands");
  add_examples(*help, {"keel help record buy", "keel help"});
  help->add_option("COMMAND", *words, "The command, in words: keel help record buy")
      ->default_str("");
  help->callback([&app, words] {
    const CLI::App& cmd = find_command(app, *words);
    out(app.get_formatter()->make_help(&cmd, command_path(cmd), CLI::AppFormatMode::Normal));
  });

  auto* cmd = app.add_subcommand("reference", "Print this command reference as Markdown");
  add_examples(*cmd, {"keel reference > commands.md"});
  cmd->callback([&app] {
    std::string text =
        "# Command reference\n\nGenerated by `keel reference` from the program's own "
        "definitions; do not edit by hand.\n\n";
    text +=
        "Global options, before or after the command: `--db PATH` (also `KEEL_DB`; default "
        "`$XDG_DATA_HOME/keel/keel.db`, else `~/.local/share/keel/keel.db`), "
        "`--allow-unsafe-permissions`, `--version`, `--help`. `keel help COMMAND` shows the "
        "help of a command, as `keel COMMAND --help` does.\n\n";
    describe(app, "", text);
    out(text);
  });
  auto* page = app.add_subcommand("manpage", "Print the manual page (roff) for man(1)");
  add_examples(*page, {"keel manpage > ~/.local/share/man/man1/keel.1"});
  page->callback([&app] { out(manpage(app)); });
  auto shell = std::make_shared<std::string>();
  auto* completion =
      app.add_subcommand("completion", "Print a shell completion script: bash or zsh");
  add_examples(*completion,
               {"keel completion bash > ~/.local/share/bash-completion/completions/keel",
                "keel completion zsh > ~/.zfunc/_keel"});
  completion->add_option("SHELL", *shell, "bash or zsh")
      ->required()
      ->check(CLI::IsMember({"bash", "zsh"}));
  completion->callback(
      [&app, shell] { out(*shell == "zsh" ? completion_zsh(app) : completion_bash(app)); });
}

}  // namespace keel::cli
