#include "cli.hpp"

#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <sys/stat.h>

namespace critplex_cli {

static std::map<std::string, Command>& registry() {
  static std::map<std::string, Command> r;
  return r;
}
Registration::Registration(Command command) { registry()[command.name] = std::move(command); }
const std::map<std::string, Command>& commands() { return registry(); }

std::optional<std::string> Args::value(const std::string& flag) const {
  auto it = values.find(flag);
  if (it == values.end()) return std::nullopt;
  return it->second;
}

std::string Args::value_or(const std::string& flag, const std::string& fallback) const {
  auto v = value(flag);
  return v ? *v : fallback;
}

double Args::number(const std::string& flag, double fallback) const {
  auto v = value(flag);
  if (!v) return fallback;
  try {
    std::size_t used = 0;
    double d = std::stod(*v, &used);
    if (used != v->size() || !std::isfinite(d)) throw std::invalid_argument("x");
    return d;
  } catch (const std::exception&) {
    throw Failure("--" + flag + ": expected a number, got '" + *v + "'", 2);
  }
}

long long Args::integer(const std::string& flag, long long fallback) const {
  auto v = value(flag);
  if (!v) return fallback;
  try {
    std::size_t used = 0;
    long long i = std::stoll(*v, &used);
    if (used != v->size()) throw std::invalid_argument("x");
    return i;
  } catch (const std::exception&) {
    throw Failure("--" + flag + ": expected an integer, got '" + *v + "'", 2);
  }
}

Args parse_args(const Command& command, int argc, char** argv) {
  Args args;
  bool only_positional = false;
  for (int i = 0; i < argc; ++i) {
    std::string a = argv[i];
    if (!only_positional && a == "--") {
      only_positional = true;
      continue;
    }
    if (!only_positional && a.size() > 2 && a.rfind("--", 0) == 0) {
      std::string name = a.substr(2), inline_value;
      bool has_inline = false;
      if (auto eq = name.find('='); eq != std::string::npos) {
        inline_value = name.substr(eq + 1);
        name = name.substr(0, eq);
        has_inline = true;
      }
      const Flag* flag = nullptr;
      for (const auto& f : command.flags)
        if (f.name == name) flag = &f;
      if (flag == nullptr)
        throw Failure("critplex " + command.name + ": unknown option '--" + name + "' (see critplex " +
                          command.name + " --help)", 2);
      if (flag->value_name.empty()) {
        if (has_inline) throw Failure("--" + name + " takes no value", 2);
        args.switches[name] = true;
      } else if (has_inline) {
        args.values[name] = inline_value;
      } else {
        if (i + 1 >= argc) throw Failure("--" + name + " needs a value (" + flag->value_name + ")", 2);
        std::string value = argv[++i];
        while (flag->many && i + 1 < argc && std::string(argv[i + 1]).rfind("--", 0) != 0) value += "\t" + std::string(argv[++i]);
        args.values[name] = value;
      }
      continue;
    }
    args.positional.push_back(a);
  }
  if (args.positional.size() < command.min_positional || args.positional.size() > command.max_positional)
    throw Failure("usage: " + command.usage + " (see critplex " + command.name + " --help)", 2);
  return args;
}

std::string help_text(const Command& command) {
  std::string s = "usage: " + command.usage + "\n\n" + command.summary + "\n";
  if (!command.details.empty()) s += "\n" + command.details + "\n";
  if (!command.flags.empty()) {
    s += "\noptions:\n";
    for (const auto& f : command.flags) {
      std::string left = "  --" + f.name + (f.value_name.empty() ? "" : " " + f.value_name);
      if (left.size() < 28) left.resize(28, ' ');
      else left += "\n" + std::string(28, ' ');
      s += left + f.help + "\n";
    }
  }
  return s;
}

void check(cpx_status status) {
  if (status != CPX_OK) throw Failure(cpx_last_error(), 1);
}

bool path_exists(const std::string& path) {
  struct stat st;
  return ::stat(path.c_str(), &st) == 0;
}

void write_file_atomically(const std::string& path, const std::string& text) {
  const std::string tmp = path + ".tmp-" + std::to_string(::getpid());
  {
    std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
    if (!out) throw Failure("cannot write '" + path + "': cannot create a file there");
    out << text;
    out.flush();
    if (!out) {
      out.close();
      std::remove(tmp.c_str());
      throw Failure("cannot write '" + path + "': write failed (disk full?)");
    }
  }
  if (std::rename(tmp.c_str(), path.c_str()) != 0) {
    std::remove(tmp.c_str());
    throw Failure("cannot write '" + path + "': rename failed");
  }
}

std::string output_format(const Args& args, const std::string& out_path, const std::vector<std::string>& allowed) {
  std::string format = args.value_or("format", "");
  if (format.empty()) {
    auto dot = out_path.rfind('.');
    std::string ext = dot == std::string::npos ? "" : out_path.substr(dot + 1);
    for (const auto& a : allowed)
      if (a == ext) format = a;
    if (format.empty()) format = allowed.front();
  }
  for (const auto& a : allowed)
    if (a == format) return format;
  std::string list;
  for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + a;
  throw Failure("--format must be one of " + list + ", got '" + format + "'", 2);
}

namespace {
struct BarState {
  std::string label;
  std::chrono::steady_clock::time_point start = std::chrono::steady_clock::now();
  int last_permille = -1;
};

int draw_bar(double fraction, void* user) {
  auto* st = static_cast<BarState*>(user);
  if (st == nullptr) return 0;
  int permille = static_cast<int>(std::lround(std::fmin(1.0, std::fmax(0.0, fraction)) * 1000.0));
  if (permille == st->last_permille) return 0;
  st->last_permille = permille;
  double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - st->start).count();
  const int width = 30;
  int filled = permille * width / 1000;
  std::string bar(static_cast<std::size_t>(filled), '#');
  bar.resize(width, '.');
  char eta[32] = "";
  if (fraction > 0.01 && fraction < 1.0) std::snprintf(eta, sizeof eta, " eta %.0fs", elapsed * (1.0 - fraction) / fraction);
  std::fprintf(stderr, "\r%s [%s] %5.1f%%%s   ", st->label.c_str(), bar.c_str(), permille / 10.0, eta);
  std::fflush(stderr);
  return 0;
}
}  // namespace

cpx_progress_fn progress_bar_if_terminal() { return ::isatty(2) ? draw_bar : nullptr; }
void* progress_state(const std::string& label) {
  if (!::isatty(2)) return nullptr;
  auto* st = new BarState;
  st->label = label;
  return st;
}
void progress_done(void* state) {
  if (state == nullptr) return;
  std::fprintf(stderr, "\n");
  delete static_cast<BarState*>(state);
}

}  // namespace critplex_cli
