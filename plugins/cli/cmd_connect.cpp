// critplex connect INPUT --out MATRIX.tsv: time series in, connectivity matrix out.
#include <nlohmann/json.hpp>

#include <memory>

#include "cli.hpp"

namespace critplex_cli {
namespace {

int run_connect(const Args& args) {
  const std::string input = args.positional[0];
  const auto out = args.value("out");
  if (!out) throw Failure("--out FILE is required", 2);
  const std::string format = output_format(args, *out, {"tsv", "json", "npy"});

  nlohmann::json read_options = nlohmann::json::object();
  if (auto f = args.value("input-format")) read_options["format"] = *f;
  if (args.has("no-header")) read_options["header"] = false;

  nlohmann::json connect_options = nlohmann::json::object();
  if (auto opts = args.value("options")) {
    try {
      connect_options = nlohmann::json::parse(*opts);
    } catch (const std::exception& e) {
      throw Failure(std::string("--options: not valid JSON: ") + e.what(), 2);
    }
    if (!connect_options.is_object()) throw Failure("--options must be a JSON object", 2);
  }
  if (auto m = args.value("method")) connect_options["method"] = *m;
  if (args.has("fisher-z")) connect_options["fisher_z"] = true;

  cpx_series* raw_series = nullptr;
  check(cpx_series_read(input.c_str(), read_options.dump().c_str(), &raw_series));
  std::unique_ptr<cpx_series, decltype(&cpx_series_free)> series(raw_series, cpx_series_free);

  cpx_matrix* raw_matrix = nullptr;
  check(cpx_connect(series.get(), connect_options.dump().c_str(), &raw_matrix));
  std::unique_ptr<cpx_matrix, decltype(&cpx_matrix_free)> matrix(raw_matrix, cpx_matrix_free);

  const nlohmann::json write_options = {{"format", format}};
  check(cpx_matrix_write(matrix.get(), out->c_str(), write_options.dump().c_str()));
  return 0;
}

const Registration registration{Command{
    "connect",
    "critplex connect INPUT --out MATRIX [options]",
    "Estimate a connectivity matrix from regional time series.",
    "INPUT holds time points down the rows and regions across the columns: TSV or CSV\n"
    "with a header row of region names, whitespace-separated text without header, or\n"
    "NPY (float64/float32). The matrix is written atomically; on any error nothing is\n"
    "written and the exit status is non-zero.",
    {{"out", "FILE", "output matrix (required); .tsv, .json or .npy"},
     {"format", "FMT", "tsv, json or npy (default: from the --out extension)"},
     {"input-format", "FMT", "tsv, csv, text or npy (default: from the INPUT extension)"},
     {"no-header", "", "the input has no header row even though its first row is not numeric"},
     {"method", "NAME", "estimator (default pearson; see README for the list)"},
     {"fisher-z", "", "apply Fisher's z = atanh(r) to the result"},
     {"options", "JSON", "estimator options as a JSON object (README: connect options)"}},
    1,
    1,
    run_connect}};

}  // namespace
}  // namespace critplex_cli
