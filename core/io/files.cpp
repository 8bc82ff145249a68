#include "io/files.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "base/error.hpp"
#include "base/options.hpp"
#include "io/image_file.hpp"
#include "io/xml.hpp"

namespace critplex::io {

std::string read_file(const std::string& path) {
  struct stat st;
  if (::stat(path.c_str(), &st) == 0 && S_ISDIR(st.st_mode))
    fail(ErrorKind::io, "cannot read '" + path + "': it is a folder, not a file");
  std::ifstream in(path, std::ios::binary);
  if (!in) fail(ErrorKind::io, "cannot open '" + path + "': " + system_error_text(errno));
  std::ostringstream ss;
  ss << in.rdbuf();
  if (in.bad()) fail(ErrorKind::io, "cannot read '" + path + "'");
  return ss.str();
}

// ------------------------------------------------------------------ safe output

namespace {

// Temporaries being written right now, for removal from a signal handler: a fixed table
// of C strings and atomic states (0 free, 1 being filled, 2 ready), nothing allocated.
constexpr int kTemporarySlots = 64;
constexpr std::size_t kTemporaryPathMax = 4096;
char temporary_paths[kTemporarySlots][kTemporaryPathMax];
std::atomic<int> temporary_states[kTemporarySlots];
std::atomic<unsigned> temporary_counter{0};

static_assert(std::atomic<int>::is_always_lock_free, "signal handlers need lock-free atomics");

int register_temporary(const std::string& tmp) {
  if (tmp.size() + 1 > kTemporaryPathMax) return -1;
  for (int i = 0; i < kTemporarySlots; ++i) {
    int expected = 0;
    if (temporary_states[i].compare_exchange_strong(expected, 1)) {
      std::memcpy(temporary_paths[i], tmp.c_str(), tmp.size() + 1);
      temporary_states[i].store(2);
      return i;
    }
  }
  return -1;  // table full: the file is still written safely, only not removed on a signal
}

void release_temporary(int slot) {
  if (slot >= 0) temporary_states[slot].store(0);
}

std::string folder_of(const std::string& path) {
  const auto slash = path.find_last_of('/');
  if (slash == std::string::npos) return ".";
  return slash == 0 ? "/" : path.substr(0, slash);
}

// Leftovers "<name>.tmp-<pid>-<n>" of a process that no longer runs (killed hard) are removed.
void remove_stale_temporaries(const std::string& path) {
  const std::string folder = folder_of(path);
  const std::string prefix = path.substr(path.find_last_of('/') == std::string::npos ? 0 : path.find_last_of('/') + 1) + ".tmp-";
  std::error_code ec;
  for (std::filesystem::directory_iterator it(folder, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string name = it->path().filename().string();
    if (name.compare(0, prefix.size(), prefix) != 0) continue;
    const std::string rest = name.substr(prefix.size());
    const auto dash = rest.find('-');
    if (dash == std::string::npos || dash == 0 || rest.find_first_not_of("0123456789-") != std::string::npos) continue;
    const long pid = std::strtol(rest.substr(0, dash).c_str(), nullptr, 10);
    if (pid > 0 && ::kill(static_cast<pid_t>(pid), 0) != 0 && errno == ESRCH) ::unlink(it->path().c_str());
  }
}

// The file a write to `path` replaces: a symlink is followed (the target is replaced and the
// link stays); a folder, FIFO, device or socket is refused; missing folders are created.
std::string resolve_output(const std::string& path) {
  struct stat st;
  std::string target = path;
  if (::lstat(path.c_str(), &st) == 0 && S_ISLNK(st.st_mode)) {
    std::error_code ec;
    target = std::filesystem::canonical(path, ec).string();
    if (ec) fail(ErrorKind::io, "cannot write '" + path + "': it is a symbolic link to a missing file or folder");
  }
  if (::stat(target.c_str(), &st) == 0) {
    if (S_ISDIR(st.st_mode)) fail(ErrorKind::io, "cannot write '" + path + "': it is a folder");
    if (!S_ISREG(st.st_mode))
      fail(ErrorKind::io, "cannot write '" + path + "': not a regular file (a FIFO, device or socket); only regular files are written");
    return target;
  }
  make_folders(folder_of(target));
  return target;
}

void write_all(int fd, const std::string& bytes, const std::string& path, const std::string& tmp, int slot) {
  std::size_t done = 0;
  while (done < bytes.size()) {
    const ssize_t n = ::write(fd, bytes.data() + done, bytes.size() - done);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) {
      const int e = errno;
      ::close(fd);
      ::unlink(tmp.c_str());
      release_temporary(slot);
      fail(ErrorKind::io, "cannot write '" + path + "': " + system_error_text(e));
    }
    done += static_cast<std::size_t>(n);
  }
}

}  // namespace

void remove_temporaries_now() noexcept {
  for (int i = 0; i < kTemporarySlots; ++i)
    if (temporary_states[i].load() == 2) ::unlink(temporary_paths[i]);
}

void write_file_atomically(const std::string& path, const std::string& bytes) {
  if (path.empty()) fail(ErrorKind::argument, "output path is empty");
  const std::string target = resolve_output(path);
  remove_stale_temporaries(target);
  const std::string tmp = target + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(temporary_counter++);
  const int slot = register_temporary(tmp);
  // O_EXCL: never write through a file or link someone planted under the temporary's name.
  const int fd = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
  if (fd < 0) {
    const int e = errno;
    release_temporary(slot);
    fail(ErrorKind::io, "cannot write '" + path + "': " + system_error_text(e));
  }
  write_all(fd, bytes, path, tmp, slot);
  if (::close(fd) != 0) {
    const int e = errno;
    ::unlink(tmp.c_str());
    release_temporary(slot);
    fail(ErrorKind::io, "cannot write '" + path + "': " + system_error_text(e));
  }
  if (std::rename(tmp.c_str(), target.c_str()) != 0) {
    const int e = errno;
    ::unlink(tmp.c_str());
    release_temporary(slot);
    fail(ErrorKind::io, "cannot write '" + path + "': rename of the temporary file failed: " + system_error_text(e));
  }
  release_temporary(slot);
}

void make_folders(const std::string& dir) {
  struct stat st;
  // A path component that is a file: say so instead of "Not a directory".
  for (std::size_t pos = dir.find('/', 1); ; pos = dir.find('/', pos + 1)) {
    const std::string prefix = dir.substr(0, pos);
    if (::stat(prefix.c_str(), &st) == 0 && !S_ISDIR(st.st_mode))
      fail(ErrorKind::io, "cannot create folder '" + dir + "': '" + prefix + "' is a file, not a folder");
    if (pos == std::string::npos) break;
  }
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) fail(ErrorKind::io, "cannot create folder '" + dir + "': " + ec.message());
}

std::string detect_format(const std::string& path) {
  auto dot = path.rfind('.');
  std::string ext = dot == std::string::npos ? "" : path.substr(dot + 1);
  std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  if (ext == "tsv") return "tsv";
  if (ext == "csv") return "csv";
  if (ext == "npy") return "npy";
  return "text";
}

// ---------------------------------------------------------------------------- text

namespace {

std::vector<std::string> split_line(const std::string& line, char separator) {
  std::vector<std::string> cells;
  if (separator == ' ') {
    std::size_t i = 0;
    while (i < line.size()) {
      while (i < line.size() && (line[i] == ' ' || line[i] == '\t')) ++i;
      if (i >= line.size()) break;
      std::size_t j = i;
      while (j < line.size() && line[j] != ' ' && line[j] != '\t') ++j;
      cells.push_back(line.substr(i, j - i));
      i = j;
    }
    return cells;
  }
  std::size_t start = 0;
  while (true) {
    std::size_t pos = line.find(separator, start);
    std::string cell = line.substr(start, pos == std::string::npos ? std::string::npos : pos - start);
    // Trim surrounding blanks and one pair of double quotes (spreadsheet exports).
    auto b = cell.find_first_not_of(" \t");
    auto e = cell.find_last_not_of(" \t");
    cell = b == std::string::npos ? std::string() : cell.substr(b, e - b + 1);
    if (cell.size() >= 2 && cell.front() == '"' && cell.back() == '"') cell = cell.substr(1, cell.size() - 2);
    cells.push_back(cell);
    if (pos == std::string::npos) break;
    start = pos + 1;
  }
  return cells;
}

bool parse_number(const std::string& cell, double& out) {
  if (cell.empty()) return false;
  const char* b = cell.data();
  const char* e = b + cell.size();
  if (*b == '+') ++b;  // from_chars does not take a leading '+'
  auto [ptr, ec] = std::from_chars(b, e, out);
  if (ec == std::errc::result_out_of_range) {
    out = std::strtod(cell.c_str(), nullptr);  // overflow to inf, underflow to 0: judged later
    return true;
  }
  return ec == std::errc() && ptr == e;
}

std::string column_label(std::size_t column, const std::vector<std::string>& names) {
  std::string s = "column " + std::to_string(column + 1);
  if (column < names.size() && !names[column].empty() && is_utf8(names[column])) s += " (" + excerpt(names[column]) + ")";
  return s;
}

// A whole number of an NPY shape: digits only, and at most 2^62 (so products are checked).
std::size_t npy_dimension(const std::string& text, const std::string& path) {
  std::size_t value = 0;
  auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || ptr != text.data() + text.size() || value > (std::size_t{1} << 62))
    fail(ErrorKind::parse, "'" + path + "': malformed NPY header (shape entry " + excerpt(text) + " is not a size)");
  return value;
}

// Region names from a header row (one line, several columns) or from the first column
// (one per line): valid UTF-8 without control characters, and each name once.
void check_names(const std::string& path, const std::vector<std::string>& names, std::size_t header_line,
                 const std::vector<std::size_t>& row_lines) {
  auto place = [&](std::size_t i) {
    return header_line > 0 ? "'" + path + "', line " + std::to_string(header_line) + ", column " + std::to_string(i + 1)
                           : "'" + path + "', line " + std::to_string(row_lines[i]);
  };
  std::map<std::string, std::size_t> seen;
  for (std::size_t i = 0; i < names.size(); ++i) {
    if (names[i].empty()) continue;  // replaced by a default name
    check_region_name(names[i], place(i));
    auto [it, fresh] = seen.emplace(names[i], i);
    if (fresh) continue;
    if (header_line > 0)
      fail(ErrorKind::data, "'" + path + "', line " + std::to_string(header_line) + ": region name " + excerpt(names[i]) +
                                " appears twice (columns " + std::to_string(it->second + 1) + " and " + std::to_string(i + 1) + ")");
    fail(ErrorKind::data, "'" + path + "': region name " + excerpt(names[i]) + " appears twice (lines " +
                              std::to_string(row_lines[it->second]) + " and " + std::to_string(row_lines[i]) + ")");
  }
}

Table read_text_table(const std::string& path, const std::string& bytes, char separator, const TableOptions& opt) {
  // Lines, with their 1-based numbers; blank lines and '#' comments are skipped.
  std::vector<std::pair<std::size_t, std::string>> lines;
  {
    std::size_t number = 0, start = 0;
    while (start <= bytes.size()) {
      std::size_t end = bytes.find('\n', start);
      if (end == std::string::npos) end = bytes.size();
      std::string line = bytes.substr(start, end - start);
      ++number;
      if (!line.empty() && line.back() == '\r') line.pop_back();
      if (number == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line = line.substr(3);  // UTF-8 byte order mark
      if (line.find_first_not_of(" \t") != std::string::npos && line[line.find_first_not_of(" \t")] != '#')
        lines.emplace_back(number, line);
      if (end == bytes.size()) break;
      start = end + 1;
    }
  }
  if (lines.empty()) fail(ErrorKind::parse, "'" + path + "' is empty (no data rows)");

  Table t;
  std::vector<std::vector<std::string>> rows;
  rows.reserve(lines.size());
  for (auto& [n, line] : lines) rows.push_back(split_line(line, separator));

  auto numeric_cell = [&](const std::string& c) {
    double d;
    if (parse_number(c, d)) return true;
    return std::find(opt.missing_tokens.begin(), opt.missing_tokens.end(), c) != opt.missing_tokens.end();
  };
  bool header = false;
  if (opt.header == "yes") header = true;
  else if (opt.header == "auto") {
    // A header row is one with a cell that is not a number.
    for (const auto& c : rows[0])
      if (!numeric_cell(c)) header = true;
  } else if (opt.header != "no") {
    fail(ErrorKind::argument, "option \"header\" must be \"auto\", \"yes\" or \"no\", got \"" + opt.header + "\"");
  }
  std::size_t first = header ? 1 : 0;
  if (header) t.column_names = rows[0];
  if (header) t.header_line = lines[0].first;
  if (rows.size() <= first) fail(ErrorKind::parse, "'" + path + "' has a header row but no data rows");

  bool row_names = false;
  if (opt.allow_row_names) {
    for (std::size_t r = first; r < rows.size() && !row_names; ++r)
      if (!rows[r].empty() && !numeric_cell(rows[r][0])) row_names = true;
  }
  const std::size_t offset = row_names ? 1 : 0;
  const std::size_t width = rows[first].size();
  if (width <= offset) fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(lines[first].first) + ": no values");
  const std::size_t columns = width - offset;
  if (header) {
    // A header may carry a label above the row-name column; drop it.
    if (t.column_names.size() == columns + 1 && row_names) t.column_names.erase(t.column_names.begin());
    else if (t.column_names.size() == columns + 1 && !row_names && opt.allow_row_names)
      t.column_names.erase(t.column_names.begin());
    if (t.column_names.size() != columns)
      fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(lines[0].first) + ": header has " +
                                 std::to_string(t.column_names.size()) + " names but line " +
                                 std::to_string(lines[first].first) + " has " + std::to_string(columns) + " values");
  }

  t.values.resize(static_cast<Eigen::Index>(rows.size() - first), static_cast<Eigen::Index>(columns));
  t.first_data_line = lines[first].first;
  for (std::size_t r = first; r < rows.size(); ++r) {
    const auto& cells = rows[r];
    const std::size_t line_no = lines[r].first;
    if (cells.size() != width)
      fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ": expected " + std::to_string(width) +
                                 " cells, found " + std::to_string(cells.size()) + " (ragged row)");
    if (row_names) t.row_names.push_back(cells[0]);
    t.row_lines.push_back(line_no);
    for (std::size_t c = 0; c < columns; ++c) {
      const std::string& cell = cells[c + offset];
      double d;
      if (!parse_number(cell, d)) {
        if (std::find(opt.missing_tokens.begin(), opt.missing_tokens.end(), cell) != opt.missing_tokens.end())
          d = std::numeric_limits<double>::quiet_NaN();
        else
          fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ", " +
                                     column_label(c, t.column_names) + ": " + excerpt(cell) + " is not a number");
      } else if (!std::isfinite(d)) {
        fail(ErrorKind::data, "'" + path + "', line " + std::to_string(line_no) + ", " +
                                  column_label(c, t.column_names) + ": value " + excerpt(cell) + " is not finite");
      }
      t.values(static_cast<Eigen::Index>(r - first), static_cast<Eigen::Index>(c)) = d;
    }
  }
  return t;
}

// ----------------------------------------------------------------------------- npy

Table read_npy_table(const std::string& path, const std::string& bytes) {
  auto bad = [&](const std::string& why) -> void { fail(ErrorKind::parse, "'" + path + "': " + why); };
  if (bytes.empty()) bad("file is empty");
  if (bytes.size() < 10 || bytes.compare(0, 6, "\x93NUMPY") != 0) bad("not an NPY file (bad magic string)");
  const int major = static_cast<unsigned char>(bytes[6]);
  std::size_t header_len = 0, header_start = 0;
  if (major == 1) {
    header_len = static_cast<unsigned char>(bytes[8]) | (static_cast<std::size_t>(static_cast<unsigned char>(bytes[9])) << 8);
    header_start = 10;
  } else if (major == 2 || major == 3) {
    if (bytes.size() < 12) bad("truncated NPY header");
    header_len = 0;
    for (int i = 0; i < 4; ++i) header_len |= static_cast<std::size_t>(static_cast<unsigned char>(bytes[8 + i])) << (8 * i);
    header_start = 12;
  } else {
    bad("unsupported NPY format version " + std::to_string(major));
  }
  if (header_start + header_len > bytes.size()) bad("truncated NPY header");
  const std::string header = bytes.substr(header_start, header_len);
  auto field = [&](const std::string& key) -> std::string {
    auto k = header.find("'" + key + "'");
    if (k == std::string::npos) bad("NPY header lacks '" + key + "'");
    auto colon = header.find(':', k);
    if (colon == std::string::npos) bad("malformed NPY header");
    return header.substr(colon + 1);
  };
  std::string descr = field("descr");
  auto q1 = descr.find('\'');
  auto q2 = descr.find('\'', q1 + 1);
  if (q1 == std::string::npos || q2 == std::string::npos) bad("malformed NPY header (descr)");
  descr = descr.substr(q1 + 1, q2 - q1 - 1);
  std::size_t item = 0;
  if (descr == "<f8" || descr == "=f8") item = 8;
  else if (descr == "<f4" || descr == "=f4") item = 4;
  else bad("unsupported NPY data type '" + descr + "' (expected little-endian float64 '<f8' or float32 '<f4')");
  std::string fortran = field("fortran_order");
  const auto fortran_start = fortran.find_first_not_of(' ');
  if (fortran_start == std::string::npos) bad("malformed NPY header (fortran_order)");
  fortran = fortran.substr(fortran_start);
  const bool fortran_order = fortran.rfind("True", 0) == 0;
  if (!fortran_order && fortran.rfind("False", 0) != 0) bad("malformed NPY header (fortran_order)");
  std::string shape = field("shape");
  auto p1 = shape.find('(');
  auto p2 = shape.find(')');
  if (p1 == std::string::npos || p2 == std::string::npos) bad("malformed NPY header (shape)");
  std::vector<std::size_t> dims;
  {
    std::string inner = shape.substr(p1 + 1, p2 - p1 - 1);
    std::stringstream ss(inner);
    std::string part;
    while (std::getline(ss, part, ',')) {
      auto b = part.find_first_not_of(' ');
      if (b == std::string::npos) continue;
      auto e = part.find_last_not_of(' ');
      dims.push_back(npy_dimension(part.substr(b, e - b + 1), path));
    }
  }
  if (dims.size() != 2) bad("expected a 2-D array (time points x regions), got " + std::to_string(dims.size()) + " dimensions");
  const std::size_t rows = dims[0], cols = dims[1];
  const std::size_t data_start = header_start + header_len;
  if (rows != 0 && cols > (bytes.size() / item) / rows) bad("truncated NPY data");
  if (bytes.size() - data_start < rows * cols * item)
    bad("truncated NPY data: expected " + std::to_string(rows * cols * item) + " bytes, found " +
        std::to_string(bytes.size() - data_start));
  if (rows == 0 || cols == 0) bad("array is empty");
  Table t;
  t.values.resize(static_cast<Eigen::Index>(rows), static_cast<Eigen::Index>(cols));
  const char* data = bytes.data() + data_start;
  for (std::size_t k = 0; k < rows * cols; ++k) {
    double v;
    if (item == 8) {
      std::memcpy(&v, data + 8 * k, 8);
    } else {
      float f;
      std::memcpy(&f, data + 4 * k, 4);
      v = f;
    }
    const std::size_t r = fortran_order ? k % rows : k / cols;
    const std::size_t c = fortran_order ? k / rows : k % cols;
    if (!std::isfinite(v))
      fail(ErrorKind::data, "'" + path + "': row " + std::to_string(r + 1) + ", column " + std::to_string(c + 1) +
                                " is not finite");
    t.values(static_cast<Eigen::Index>(r), static_cast<Eigen::Index>(c)) = v;
  }
  return t;
}

}  // namespace

Table read_table(const std::string& path, const TableOptions& options) {
  std::string format = options.format == "auto" ? detect_format(path) : options.format;
  if (format != "tsv" && format != "csv" && format != "text" && format != "npy")
    fail(ErrorKind::argument, "format must be \"auto\", \"tsv\", \"csv\", \"text\" or \"npy\", got \"" + format + "\"");
  const std::string bytes = read_file(path);
  if (bytes.empty()) fail(ErrorKind::parse, "'" + path + "' is empty");
  if (format == "npy") return read_npy_table(path, bytes);
  // A .txt file may still be tab-separated with a header; whitespace splitting covers both.
  char sep = format == "tsv" ? '\t' : format == "csv" ? ',' : ' ';
  return read_text_table(path, bytes, sep, options);
}

static TableOptions table_options(const nlohmann::json& options, const std::string& where) {
  OptionReader r(options, where);
  TableOptions t;
  t.format = r.choice("format", "auto", {"auto", "tsv", "csv", "text", "npy"});
  if (r.has("header")) {
    const Json* h = r.raw("header");
    if (h->is_boolean()) t.header = h->get<bool>() ? "yes" : "no";
    else if (h->is_string() && h->get<std::string>() == "auto") t.header = "auto";
    else fail(ErrorKind::argument, where + ": option \"header\" must be true, false or \"auto\"");
  }
  r.finish();
  return t;
}

series::Series read_series(const std::string& path, const nlohmann::json& options) {
  TableOptions opt = table_options(options, "time series options");
  Table t = read_table(path, opt);
  check_names(path, t.column_names, t.header_line, t.row_lines);
  series::Series s;
  s.source = path;
  s.values = std::move(t.values);
  s.names = t.column_names.empty() ? series::default_names(static_cast<std::size_t>(s.values.cols())) : t.column_names;
  for (std::size_t i = 0; i < s.names.size(); ++i)
    if (s.names[i].empty()) s.names[i] = "R" + std::to_string(i + 1);
  series::validate(s);
  return s;
}

connectivity::Matrix read_matrix(const std::string& path, const nlohmann::json& options) {
  TableOptions opt = table_options(options, "matrix options");
  opt.allow_row_names = true;
  Table t = read_table(path, opt);
  connectivity::Matrix m;
  if (t.values.rows() != t.values.cols())
    fail(ErrorKind::data, "'" + path + "': matrix is not square (" + std::to_string(t.values.rows()) + " rows, " +
                              std::to_string(t.values.cols()) + " columns)");
  if (t.values.rows() < 2) fail(ErrorKind::data, "'" + path + "': matrix needs at least 2 nodes");
  m.values = std::move(t.values);
  const auto n = static_cast<std::size_t>(m.values.rows());
  if (!t.column_names.empty()) check_names(path, t.column_names, t.header_line, t.row_lines);
  else if (!t.row_names.empty()) check_names(path, t.row_names, 0, t.row_lines);
  m.names = !t.column_names.empty() ? t.column_names : !t.row_names.empty() ? t.row_names : series::default_names(n);
  // Symmetry is checked here so the message can name the file.
  double scale = m.values.cwiseAbs().maxCoeff();
  for (Eigen::Index i = 0; i < m.values.rows(); ++i)
    for (Eigen::Index j = i + 1; j < m.values.cols(); ++j)
      if (std::fabs(m.values(i, j) - m.values(j, i)) > 1e-9 * std::max(scale, 1e-300))
        fail(ErrorKind::data, "'" + path + "': matrix is not symmetric: row " + std::to_string(i + 1) + ", column " +
                                  std::to_string(j + 1) + " holds " + format_double(m.values(i, j)) + " but row " +
                                  std::to_string(j + 1) + ", column " + std::to_string(i + 1) + " holds " +
                                  format_double(m.values(j, i)));
  m.info = {{"source", path}};
  return m;
}

// -------------------------------------------------------------------------- writing

std::string format_double(double x) {
  if (std::isnan(x)) return "NaN";
  if (std::isinf(x)) return x > 0 ? "Infinity" : "-Infinity";
  char buf[64];
  auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, x);
  (void)ec;
  return std::string(buf, ptr);
}

std::string encode_npy(const Eigen::MatrixXd& values) {
  std::string header = "{'descr': '<f8', 'fortran_order': False, 'shape': (" + std::to_string(values.rows()) + ", " +
                       std::to_string(values.cols()) + "), }";
  // Magic (6) + version (2) + length (2) + header + newline, padded to a multiple of 64.
  std::size_t total = 10 + header.size() + 1;
  header.append((64 - total % 64) % 64, ' ');
  header.push_back('\n');
  std::string out("\x93NUMPY\x01\x00", 8);
  out.push_back(static_cast<char>(header.size() & 0xff));
  out.push_back(static_cast<char>((header.size() >> 8) & 0xff));
  out += header;
  Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> rm = values;
  out.append(reinterpret_cast<const char*>(rm.data()), sizeof(double) * static_cast<std::size_t>(rm.size()));
  return out;
}

std::string format_matrix(const connectivity::Matrix& m, const std::string& format) {
  const Eigen::Index n = m.values.rows();
  if (format == "tsv") {
    std::string s = "name";
    for (const auto& name : m.names) s += "\t" + name;
    s += "\n";
    for (Eigen::Index i = 0; i < n; ++i) {
      s += m.names[static_cast<std::size_t>(i)];
      for (Eigen::Index j = 0; j < n; ++j) s += "\t" + format_double(m.values(i, j));
      s += "\n";
    }
    return s;
  }
  if (format == "json") {
    nlohmann::json j;
    j["names"] = m.names;
    nlohmann::json rows = nlohmann::json::array();
    for (Eigen::Index i = 0; i < n; ++i) {
      nlohmann::json row = nlohmann::json::array();
      for (Eigen::Index k = 0; k < n; ++k) row.push_back(m.values(i, k));
      rows.push_back(std::move(row));
    }
    j["values"] = std::move(rows);
    j["info"] = m.info;
    return j.dump(1) + "\n";
  }
  if (format == "npy") return encode_npy(m.values);
  fail(ErrorKind::argument, "matrix format must be \"tsv\", \"json\" or \"npy\", got \"" + format + "\"");
}

void write_matrix(const connectivity::Matrix& m, const std::string& path, const std::string& format) {
  write_file_atomically(path, format_matrix(m, format));
}

}  // namespace critplex::io
