#include "base/option_schema.hpp"
#include "io/files.hpp"

namespace critplex::io {

const OptionSection& matrix_write_option_section() {
  static const OptionSection section{
      "matrix_write",
      "matrix writing options",
      "cpx_matrix_write, critplex connect --format",
      "How a connectivity matrix is written.",
      {{.key = "format", .type = "choice", .default_note = "from the file extension, else tsv",
        .choices = {"tsv", "json", "npy"},
        .meaning = "TSV (header row \"name\" + region names, one row per region), JSON {names, values, info}, or NPY "
                   "(float64, C order)"}}};
  return section;
}

std::string parse_matrix_write_format(const Json& options, const std::string& path, const std::string& where) {
  SchemaReader r(options, matrix_write_option_section(), where);
  std::string format = r.has("format") ? r.choice("format") : detect_format(path);
  if (format == "text" || format == "csv") format = "tsv";
  r.finish();
  return format;
}

}  // namespace critplex::io
