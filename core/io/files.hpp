// Reading and writing files. Stages never touch files; io and pipeline do.
#pragma once

#include <Eigen/Dense>
#include <nlohmann/json.hpp>

#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "connectivity/matrix.hpp"
#include "series/series.hpp"

namespace critplex::io {

// Whole file as bytes; ErrorKind::io naming the path when it cannot be read or is a folder.
std::string read_file(const std::string& path);
// Writes through a temporary file "<path>.tmp-<pid>-<n>" in the same folder, renamed into
// place, so a reader never sees a half-written file and a failure leaves nothing behind.
// Rules: missing folders are created; a symbolic link is followed (the file it points to
// is replaced, the link stays); a folder, FIFO, device or socket is refused (only regular
// files are written); temporaries of processes that no longer run are removed first.
void write_file_atomically(const std::string& path, const std::string& bytes);
// Creates a folder and its parents (nothing if it exists); ErrorKind::io naming it, and
// naming a part of the path that is a file.
void make_folders(const std::string& dir);
// Unlinks every temporary file being written at this moment. Async-signal-safe (a fixed
// table of C strings, unlink only): for SIGINT/SIGTERM handlers.
void remove_temporaries_now() noexcept;

// A numeric table from TSV, CSV, whitespace-separated text or NPY.
struct Table {
  Eigen::MatrixXd values;                 // rows x columns
  std::vector<std::string> column_names;  // empty when the file had no header row
  std::vector<std::string> row_names;     // empty unless the first column held names
  std::size_t first_data_line = 1;        // 1-based line of the first data row (text files)
  std::size_t header_line = 0;            // 1-based line of the header row (0: none)
  std::vector<std::size_t> row_lines;     // 1-based line of each data row (text files)
};

struct TableOptions {
  std::string format = "auto";   // auto (from extension), tsv, csv, text, npy
  std::string header = "auto";   // auto, yes, no
  bool allow_row_names = false;  // a first column of names (matrices written by connect)
  std::vector<std::string> missing_tokens;  // cells read as NaN instead of an error (e.g. "n/a")
};

Table read_table(const std::string& path, const TableOptions& options);
std::string detect_format(const std::string& path);  // by extension: tsv, csv, npy or text

// Time series: frames down the rows, regions across the columns. Options JSON keys:
// "format", "header" (see docs/options.md). Validated (series::validate) before returning.
series::Series read_series(const std::string& path, const nlohmann::json& options);
// Square symmetric matrix with optional names. Options JSON keys: "format", "header".
connectivity::Matrix read_matrix(const std::string& path, const nlohmann::json& options);

// Matrix as TSV (header row "name" + names, then one row per region), JSON
// ({"names", "values", "info"}) or NPY (float64, C order).
std::string format_matrix(const connectivity::Matrix& m, const std::string& format);
void write_matrix(const connectivity::Matrix& m, const std::string& path, const std::string& format);
// The writing options ({"format"}; default from the extension of `path`) and their table.
const OptionSection& matrix_write_option_section();
std::string parse_matrix_write_format(const nlohmann::json& options, const std::string& path, const std::string& where);

// NPY encoding of a row-major float64 2-D array (NumPy format version 1.0).
std::string encode_npy(const Eigen::MatrixXd& values);
// Shortest text that reads back to the same double.
std::string format_double(double x);

}  // namespace critplex::io
