#include "io/confounds.hpp"

#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::io {

bool matches_pattern(const std::string& pattern, const std::string& name) {
  // Iterative glob matching with backtracking to the last '*'.
  std::size_t p = 0, n = 0, star = std::string::npos, mark = 0;
  while (n < name.size()) {
    if (p < pattern.size() && (pattern[p] == '?' || pattern[p] == name[n])) {
      ++p;
      ++n;
    } else if (p < pattern.size() && pattern[p] == '*') {
      star = p++;
      mark = n;
    } else if (star != std::string::npos) {
      p = star + 1;
      n = ++mark;
    } else {
      return false;
    }
  }
  while (p < pattern.size() && pattern[p] == '*') ++p;
  return p == pattern.size();
}

namespace {

Table read_confounds_table(const std::string& path) {
  TableOptions t;
  t.format = "tsv";
  t.header = "yes";
  t.missing_tokens = {"n/a"};
  return read_table(path, t);
}

std::size_t column_index(const Table& table, const std::string& name, const std::string& path) {
  auto it = std::find(table.column_names.begin(), table.column_names.end(), name);
  if (it == table.column_names.end())
    fail(ErrorKind::data, "'" + path + "' has no column named '" + name + "'");
  return static_cast<std::size_t>(it - table.column_names.begin());
}

}  // namespace

series::CleanInputs load_clean_inputs(const series::CleanOptions& options) {
  series::CleanInputs in;
  const std::string& path = options.regressor_table;
  if (path.empty() && (!options.regressor_columns.empty() || !options.motion_column.empty()))
    fail(ErrorKind::argument, "\"regressor_columns\" and \"motion_column\" need a \"regressor_table\"");
  if (!path.empty()) {
    const Table table = read_confounds_table(path);
    std::vector<std::size_t> chosen;
    for (const auto& selector : options.regressor_columns) {
      bool any = false;
      for (std::size_t c = 0; c < table.column_names.size(); ++c)
        if (matches_pattern(selector, table.column_names[c])) {
          any = true;
          if (std::find(chosen.begin(), chosen.end(), c) == chosen.end()) chosen.push_back(c);
        }
      if (!any) fail(ErrorKind::data, "'" + path + "': no column matches '" + selector + "'");
    }
    const Eigen::Index T = table.values.rows();
    in.confounds.resize(T, static_cast<Eigen::Index>(chosen.size()));
    for (std::size_t k = 0; k < chosen.size(); ++k) {
      const auto c = static_cast<Eigen::Index>(chosen[k]);
      const std::string& name = table.column_names[chosen[k]];
      Eigen::VectorXd col = table.values.col(c);
      double sum = 0.0;
      Eigen::Index defined = 0;
      for (Eigen::Index t = 0; t < T; ++t)
        if (!std::isnan(col(t))) {
          sum += col(t);
          ++defined;
        }
      for (Eigen::Index t = 0; t < T; ++t) {
        if (!std::isnan(col(t))) continue;
        if (options.regressor_missing == "error")
          fail(ErrorKind::data, "'" + path + "', line " + std::to_string(table.first_data_line + static_cast<std::size_t>(t)) +
                                    ", column '" + name + "': n/a (set \"regressor_missing\" to \"zero\" or \"column_mean\")");
        if (options.regressor_missing == "column_mean") {
          if (defined == 0) fail(ErrorKind::data, "'" + path + "', column '" + name + "' has no defined values");
          col(t) = sum / static_cast<double>(defined);
        } else {
          col(t) = 0.0;
        }
      }
      in.confounds.col(static_cast<Eigen::Index>(k)) = col;
      in.confound_names.push_back(name);
    }
    if (!options.motion_column.empty())
      in.motion = table.values.col(static_cast<Eigen::Index>(column_index(table, options.motion_column, path)));
  }
  if (!options.frame_mask.empty()) {
    TableOptions t;
    t.header = "auto";
    const Table mask = read_table(options.frame_mask, t);
    if (mask.values.cols() != 1)
      fail(ErrorKind::parse, "'" + options.frame_mask + "': a frame mask has one column of 0 (drop) and 1 (keep), found " +
                                 std::to_string(mask.values.cols()) + " columns");
    in.mask = mask.values.col(0);
  }
  return in;
}

}  // namespace critplex::io
