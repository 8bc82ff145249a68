#include "cli.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>

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

namespace {
std::string shortened(const std::string& text, std::size_t limit = 200) {
  if (text.size() <= limit) return text;
  return text.substr(0, limit) + "... (" + std::to_string(text.size()) + " characters)";
}

void check_json_depth(const std::string& text, const std::string& where, int code) {
  int depth = 0;
  bool in_string = false, escaped = false;
  std::size_t line = 1, column = 0;
  for (char c : text) {
    ++column;
    if (c == '\n') line += 1, column = 0;
    if (in_string) {
      if (escaped) escaped = false;
      else if (c == '\\') escaped = true;
      else if (c == '"') in_string = false;
      continue;
    }
    if (c == '"') in_string = true;
    else if (c == '[' || c == '{') {
      if (++depth > kMaxJsonDepth)
        throw Failure(where + ": JSON nested deeper than " + std::to_string(kMaxJsonDepth) + " levels at line " +
                          std::to_string(line) + ", column " + std::to_string(column), code);
    } else if (c == ']' || c == '}') {
      --depth;
    }
  }
}
}  // namespace

nlohmann::json parse_json_input(const std::string& text, const std::string& where, int code) {
  check_json_depth(text, where, code);
  std::vector<std::vector<std::string>> keys;  // keys of each open object
  auto on_event = [&](int, nlohmann::json::parse_event_t event, nlohmann::json& parsed) {
    using E = nlohmann::json::parse_event_t;
    if (event == E::object_start) keys.emplace_back();
    else if (event == E::object_end && !keys.empty()) keys.pop_back();
    else if (event == E::key && !keys.empty()) {
      const std::string key = parsed.get<std::string>();
      for (const auto& k : keys.back())
        if (k == key) throw Failure(where + ": key \"" + shortened(key) + "\" appears twice in the same JSON object", code);
      keys.back().push_back(key);
    }
    return true;
  };
  try {
    return nlohmann::json::parse(text, on_event);
  } catch (const nlohmann::json::parse_error& e) {
    throw Failure(where + ": not valid JSON (" + shortened(e.what()) + ")", code);
  } catch (const nlohmann::json::out_of_range& e) {  // a number beyond double's range, e.g. 1e400
    throw Failure(where + ": not usable JSON (" + shortened(e.what()) + ")", code);
  }
}

void check(cpx_status status) {
  if (status != CPX_OK) throw Failure(cpx_last_error(), 1);
}

bool path_exists(const std::string& path) {
  struct stat st;
  return ::stat(path.c_str(), &st) == 0;
}

namespace {
// The command's own temporary (text outputs written here, not by the library), for the
// signal handler: one C string and a flag, nothing allocated in the handler.
char current_temporary[4096];
volatile std::sig_atomic_t has_temporary = 0;

void on_interrupt(int signal_number) {
  cpx_remove_partial_files();
  if (has_temporary) ::unlink(current_temporary);
  ::signal(signal_number, SIG_DFL);
  ::raise(signal_number);
}

std::string folder_of(const std::string& path) {
  const auto slash = path.find_last_of('/');
  if (slash == std::string::npos) return ".";
  return slash == 0 ? "/" : path.substr(0, slash);
}

void make_folders(const std::string& dir) {
  struct stat st;
  for (std::size_t pos = dir.find('/', 1);; pos = dir.find('/', pos + 1)) {
    const std::string prefix = dir.substr(0, pos);
    if (::stat(prefix.c_str(), &st) == 0 && !S_ISDIR(st.st_mode))
      throw Failure("cannot create folder '" + dir + "': '" + prefix + "' is a file, not a folder");
    if (pos == std::string::npos) break;
  }
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) throw Failure("cannot create folder '" + dir + "': " + ec.message());
}
}  // namespace

void install_interrupt_cleanup() {
  struct sigaction action {};
  action.sa_handler = on_interrupt;
  sigemptyset(&action.sa_mask);
  ::sigaction(SIGINT, &action, nullptr);
  ::sigaction(SIGTERM, &action, nullptr);
}

std::string output_target(const std::string& path) {
  struct stat st;
  std::string target = path;
  if (::lstat(path.c_str(), &st) == 0 && S_ISLNK(st.st_mode)) {
    std::error_code ec;
    target = std::filesystem::canonical(path, ec).string();
    if (ec) throw Failure("cannot write '" + path + "': it is a symbolic link to a missing file or folder");
  }
  if (::stat(target.c_str(), &st) == 0) {
    if (S_ISDIR(st.st_mode)) throw Failure("cannot write '" + path + "': it is a folder");
    if (!S_ISREG(st.st_mode))
      throw Failure("cannot write '" + path + "': not a regular file (a FIFO, device or socket); only regular files are written");
  } else {
    make_folders(folder_of(target));
  }
  return target;
}

void refuse_overwriting_inputs(const std::vector<std::string>& inputs, const std::vector<std::string>& outputs) {
  for (const auto& out : outputs) {
    struct stat o;
    if (::stat(out.c_str(), &o) != 0) continue;  // a new file cannot be an input
    for (const auto& in : inputs) {
      struct stat i;
      if (!in.empty() && ::stat(in.c_str(), &i) == 0 && i.st_dev == o.st_dev && i.st_ino == o.st_ino)
        throw Failure("output '" + out + "' is the input '" + in + "' of this run; choose another output name", 2);
    }
  }
}

void write_file_atomically(const std::string& path, const std::string& text) {
  const std::string target = output_target(path);
  const std::string tmp = target + ".tmp-" + std::to_string(::getpid()) + "-0";
  const bool tracked = tmp.size() < sizeof current_temporary;
  if (tracked) {
    std::memcpy(current_temporary, tmp.c_str(), tmp.size() + 1);
    has_temporary = 1;
  }
  auto give_up = [&](const std::string& why, int error) {
    ::unlink(tmp.c_str());
    has_temporary = 0;
    throw Failure("cannot write '" + path + "': " + why + std::strerror(error));
  };
  const int fd = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
  if (fd < 0) {
    const int e = errno;
    has_temporary = 0;
    throw Failure("cannot write '" + path + "': " + std::strerror(e));
  }
  for (std::size_t done = 0; done < text.size();) {
    const ssize_t n = ::write(fd, text.data() + done, text.size() - done);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) {
      const int e = errno;
      ::close(fd);
      give_up("", e);
    }
    done += static_cast<std::size_t>(n);
  }
  if (::close(fd) != 0) give_up("", errno);
  if (std::rename(tmp.c_str(), target.c_str()) != 0) give_up("rename of the temporary file failed: ", errno);
  has_temporary = 0;
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
  bool eta = false;
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
  if (st->eta && fraction > 0.01 && fraction < 1.0) std::snprintf(eta, sizeof eta, " eta %.0fs", elapsed * (1.0 - fraction) / fraction);
  std::fprintf(stderr, "\r%s [%s] %5.1f%%%s   ", st->label.c_str(), bar.c_str(), permille / 10.0, eta);
  std::fflush(stderr);
  return 0;
}
}  // namespace

cpx_progress_fn progress_bar_if_terminal() { return ::isatty(2) ? draw_bar : nullptr; }
void* progress_state(const std::string& label, bool eta) {
  if (!::isatty(2)) return nullptr;
  auto* st = new BarState;
  st->label = label;
  st->eta = eta;
  return st;
}
void progress_done(void* state) {
  if (state == nullptr) return;
  std::fprintf(stderr, "\n");
  delete static_cast<BarState*>(state);
}

}  // namespace critplex_cli
