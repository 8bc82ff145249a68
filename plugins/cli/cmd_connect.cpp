// critplex connect INPUT --out MATRIX: time series (table, NIfTI image + labels, CIFTI series) in,
// one connectivity matrix per band out.
#include <nlohmann/json.hpp>

#include <cstdio>
#include <fstream>
#include <memory>
#include <sstream>
#include <sys/stat.h>

#include "cli.hpp"

namespace critplex_cli {
namespace {

bool ends_with(const std::string& s, const std::string& tail) {
  return s.size() >= tail.size() && s.compare(s.size() - tail.size(), tail.size(), tail) == 0;
}

bool is_directory(const std::string& path) {
  struct stat st;
  return ::stat(path.c_str(), &st) == 0 && S_ISDIR(st.st_mode);
}

// "sub-01_task-rest_bold.nii.gz" -> "sub-01_task-rest": extension and a trailing data
// suffix go, the BIDS entities stay.
std::string input_stem(const std::string& input) {
  std::string name = input.substr(input.find_last_of('/') == std::string::npos ? 0 : input.find_last_of('/') + 1);
  for (const char* ext : {".dtseries.nii", ".ptseries.nii", ".nii.gz", ".nii", ".tsv.gz", ".tsv", ".csv", ".npy", ".txt"})
    if (ends_with(name, ext)) {
      name.resize(name.size() - std::string(ext).size());
      break;
    }
  for (const char* suffix : {"_timeseries", "_bold", "_meg", "_eeg"})
    if (ends_with(name, suffix)) {
      name.resize(name.size() - std::string(suffix).size());
      break;
    }
  return name.empty() ? std::string("series") : name;
}

nlohmann::json parse_json_flag(const std::string& flag, const std::string& text) {
  std::string body = text;
  if (!text.empty() && text[0] == '@') {  // @FILE reads the JSON from a file
    std::ifstream in(text.substr(1), std::ios::binary);
    if (!in) throw Failure("--" + flag + ": cannot read '" + text.substr(1) + "'", 2);
    std::stringstream ss;
    ss << in.rdbuf();
    body = ss.str();
  }
  nlohmann::json j = parse_json_input(body, "--" + flag);
  if (!j.is_object()) throw Failure("--" + flag + " must be a JSON object", 2);
  return j;
}

int run_connect(const Args& args) {
  const std::string input = args.positional[0];
  const auto out = args.value("out");
  if (!out) throw Failure("--out FILE is required", 2);

  nlohmann::json connect_options = nlohmann::json::object();
  if (auto opts = args.value("options")) connect_options = parse_json_flag("options", *opts);
  if (auto m = args.value("method")) connect_options["method"] = *m;
  if (args.has("fisher-z")) connect_options["fisher_z"] = true;
  if (args.has("sampling-interval")) connect_options["sampling_interval"] = args.number("sampling-interval", 0.0);

  cpx_series* raw_series = nullptr;
  const bool image = ends_with(input, ".nii") || ends_with(input, ".nii.gz");
  if (args.has("labels") || image) {
    // The library tells a parcellated CIFTI series (no labels) from images that need them.
    const auto labels = args.value("labels");
    nlohmann::json image_options = nlohmann::json::object();
    if (auto names = args.value("label-names")) image_options["label_names"] = *names;
    if (auto map = args.value("label-map")) image_options["label_map"] = *map;
    check(cpx_series_read_image(input.c_str(), labels ? labels->c_str() : nullptr, image_options.dump().c_str(), &raw_series));
  } else {
    if (args.has("label-names")) throw Failure("--label-names goes with --labels and a NIfTI or CIFTI image", 2);
    if (args.has("label-map")) throw Failure("--label-map goes with a CIFTI label file in --labels", 2);
    nlohmann::json read_options = nlohmann::json::object();
    if (auto f = args.value("input-format")) read_options["format"] = *f;
    if (args.has("no-header")) read_options["header"] = false;
    check(cpx_series_read(input.c_str(), read_options.dump().c_str(), &raw_series));
  }
  std::unique_ptr<cpx_series, decltype(&cpx_series_free)> series(raw_series, cpx_series_free);

  // Everything is computed before anything is written, so a failure leaves no file.
  cpx_matrix_set* raw_set = nullptr;
  check(cpx_connect_bands(series.get(), connect_options.dump().c_str(), &raw_set));
  std::unique_ptr<cpx_matrix_set, decltype(&cpx_matrix_set_free)> set(raw_set, cpx_matrix_set_free);
  size_t count = 0;
  check(cpx_matrix_set_count(set.get(), &count));

  std::vector<std::string> paths;
  std::vector<std::string> formats;
  for (size_t k = 0; k < count; ++k) {
    char* raw_name = nullptr;
    check(cpx_matrix_set_band(set.get(), k, &raw_name));
    const std::string band = raw_name;
    cpx_string_free(raw_name);
    std::string path = *out;
    const auto brace = path.find("{band}");
    if (brace != std::string::npos) {
      path.replace(brace, 6, band.empty() ? "all" : band);
    } else if (count > 1 || is_directory(path) || ends_with(path, "/")) {
      // A name ending in "/" is a folder, created when missing.
      if (!is_directory(path) && !ends_with(path, "/"))
        throw Failure("--out: several bands need a folder (an existing one, or a name ending in /) or a name "
                      "with {band}, e.g. sub-01_band-{band}_connectivity.tsv; got '" + path + "'", 2);
      const std::string ext = args.value_or("format", "tsv");
      path += (ends_with(path, "/") ? "" : "/") + input_stem(input) +
              (band.empty() ? "" : "_band-" + band) + "_connectivity." + ext;
    }
    for (const auto& p : paths)
      if (p == path) throw Failure("--out: two bands would write the same file '" + path + "'", 2);
    paths.push_back(path);
    formats.push_back(output_format(args, path, {"tsv", "json", "npy"}));
  }

  std::vector<std::string> inputs{input};
  for (const char* flag : {"labels", "label-names"})
    if (auto v = args.value(flag)) inputs.push_back(*v);
  if (auto v = args.value("options"); v && !v->empty() && (*v)[0] == '@') inputs.push_back(v->substr(1));
  refuse_overwriting_inputs(inputs, paths);

  for (size_t k = 0; k < count; ++k) {
    cpx_matrix* raw_matrix = nullptr;
    check(cpx_matrix_set_get(set.get(), k, &raw_matrix));
    std::unique_ptr<cpx_matrix, decltype(&cpx_matrix_free)> matrix(raw_matrix, cpx_matrix_free);
    const nlohmann::json write_options = {{"format", formats[k]}};
    if (cpx_matrix_write(matrix.get(), paths[k].c_str(), write_options.dump().c_str()) != CPX_OK) {
      const std::string message = cpx_last_error();
      for (size_t done = 0; done < k; ++done) std::remove(paths[done].c_str());
      throw Failure(message);
    }
  }
  return 0;
}

const Registration registration{Command{
    "connect",
    "critplex connect INPUT --out MATRIX [options]",
    "Estimate connectivity matrices from regional time series.",
    "INPUT holds time points down the rows and regions across the columns: TSV or CSV\n"
    "with a header row of region names, whitespace-separated text without header, or\n"
    "NPY (float64/float32). Or INPUT is an image: a 4-D NIfTI-1 or NIfTI-2 image\n"
    "(.nii, .nii.gz) with --labels, a 3-D label image on the same grid; a CIFTI-2 dense\n"
    "series (.dtseries.nii) with --labels, a .dlabel.nii (or a dense file of integer\n"
    "labels); or a CIFTI-2 parcellated series (.ptseries.nii), whose parcels are the\n"
    "regions (no --labels). The series are the mean over each label's voxels or\n"
    "brainordinates.\n"
    "Cleaning, band limiting and the estimator come from --options (docs/options.md:\n"
    "connect). With several bands, --out is a name containing {band} or a folder; each\n"
    "band gets its own file (<input>_band-<name>_connectivity.<ext> in a folder).\n"
    "Files are written atomically; on any error nothing is written and the exit status\n"
    "is non-zero. Research software: not for clinical decisions.",
    {{"out", "FILE", "output matrix (required): .tsv, .json or .npy; a name with {band}, or a folder"},
     {"format", "FMT", "tsv, json or npy (default: from the --out extension)"},
     {"input-format", "FMT", "tsv, csv, text or npy (default: from the INPUT extension)"},
     {"no-header", "", "the input has no header row even though its first row is not numeric"},
     {"labels", "IMAGE", "labels for an image INPUT: 3-D label image (NIfTI) or .dlabel.nii (CIFTI dense series)"},
     {"label-names", "TSV", "label index and name per line, for --labels"},
     {"label-map", "MAP", "map of a CIFTI label file with several maps: name or number from 1"},
     {"sampling-interval", "SECONDS", "time between frames (default: from the NIfTI or CIFTI header)"},
     {"method", "NAME", "estimator (default pearson; docs/cli.md lists them)"},
     {"fisher-z", "", "apply Fisher's z = atanh(r) to the result"},
     {"options", "JSON", "connect options as a JSON object, or @FILE to read them from a file"}},
    1,
    1,
    run_connect}};

}  // namespace
}  // namespace critplex_cli
