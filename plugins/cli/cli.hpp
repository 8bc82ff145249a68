// Shared pieces of the `critplex` command: subcommand registry, flag parsing, status
// checks, atomic output files and the progress bar. Only the C interface is used.
#pragma once

#include <critplex/critplex.h>
#include <nlohmann/json.hpp>

#include <functional>
#include <map>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

namespace critplex_cli {

// A failure the user should see: message on stderr, exit status `code`.
struct Failure : std::runtime_error {
  int code;
  Failure(const std::string& message, int exit_code = 1) : std::runtime_error(message), code(exit_code) {}
};

struct Flag {
  std::string name;         // without the leading "--"
  std::string value_name;   // "" for a switch without value
  std::string help;
  bool many = false;        // takes every following argument up to the next flag (joined by tabs)
};

struct Command {
  std::string name;
  std::string usage;        // e.g. "critplex connect INPUT --out FILE [options]"
  std::string summary;      // one line
  std::string details;      // more text for --help
  std::vector<Flag> flags;
  std::size_t min_positional = 0;
  std::size_t max_positional = 0;
  std::function<int(const struct Args&)> run;
};

// Registers a subcommand at static initialisation; each cmd_*.cpp holds one.
struct Registration {
  explicit Registration(Command command);
};
const std::map<std::string, Command>& commands();

struct Args {
  std::vector<std::string> positional;
  std::map<std::string, std::string> values;   // flags with a value
  std::map<std::string, bool> switches;        // flags without value
  bool has(const std::string& flag) const { return values.count(flag) || switches.count(flag); }
  std::optional<std::string> value(const std::string& flag) const;
  std::string value_or(const std::string& flag, const std::string& fallback) const;
  double number(const std::string& flag, double fallback) const;  // Failure on bad text
  long long integer(const std::string& flag, long long fallback) const;
};

// Parses argv after the subcommand; Failure (exit 2) on an unknown flag or missing value.
Args parse_args(const Command& command, int argc, char** argv);
std::string help_text(const Command& command);

// Deepest nesting of JSON arrays and objects the command reads (as the library's
// kMaxJsonDepth): brackets are counted before parsing so hostile text cannot exhaust the stack.
constexpr int kMaxJsonDepth = 64;
// Parses JSON text from a flag or a file: Failure (exit `code`) starting with `where` when the
// text is not JSON, nests deeper than kMaxJsonDepth or holds a key twice in one object.
nlohmann::json parse_json_input(const std::string& text, const std::string& where, int code = 2);

// Throws Failure with cpx_last_error() when status is not CPX_OK.
void check(cpx_status status);

// Writes text to path through a temporary file in the same folder, renamed into place, with
// the library's rules: missing folders created, a symbolic link followed (its target is
// replaced), a folder, FIFO, device or socket refused.
void write_file_atomically(const std::string& path, const std::string& text);
// The file an output path names after following a symbolic link; Failure for a folder, FIFO,
// device or socket; creates missing folders.
std::string output_target(const std::string& path);
// Failure (exit 2) when an existing output is one of the inputs (same device and inode, so
// links and other spellings of the path are caught).
void refuse_overwriting_inputs(const std::vector<std::string>& inputs, const std::vector<std::string>& outputs);
// SIGINT/SIGTERM: remove the temporaries being written (library and command), then end
// with the signal's default action.
void install_interrupt_cleanup();
// Folder of a path (".", when none), and whether a path exists.
bool path_exists(const std::string& path);

// Format from --format or from the output file's extension (tsv when unknown).
std::string output_format(const Args& args, const std::string& out_path,
                          const std::vector<std::string>& allowed);

// A progress callback drawing a bar on stderr when stderr is a terminal (else NULL).
cpx_progress_fn progress_bar_if_terminal();
// `eta`: show a remaining-time estimate. Only where the fraction measures work done (the
// cohort: finished subjects); a sweep's fraction counts grid points, whose cost grows
// steeply with density, so an estimate from it would mislead and none is shown.
void* progress_state(const std::string& label, bool eta = false);
void progress_done(void* state);

}  // namespace critplex_cli
