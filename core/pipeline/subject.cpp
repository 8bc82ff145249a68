#include "pipeline/subject.hpp"

#include <sys/stat.h>

#include <cmath>

#include "base/error.hpp"
#include "io/checksum.hpp"
#include "io/confounds.hpp"
#include "io/files.hpp"
#include "io/nifti.hpp"
#include "output/subject.hpp"

namespace critplex::pipeline {

const OptionSection& subject_option_section() {
  static const OptionSection section{
      "subject",
      "subject config",
      "cpx_subject_run, critplex subject CONFIG.json; the cohort config (without id, group and input paths)",
      "One subject end to end: inputs, connectivity, sweep and null model.",
      {{.key = "id", .type = "string", .meaning = "subject id (letters, digits, '-', '.'); outputs are named sub-<id>_..."},
       {.key = "session", .type = "string", .default_value = "",
        .meaning = "session label (letters and digits) of a study with repeated sessions; outputs are named "
                   "sub-<id>_ses-<session>_..."},
       {.key = "group", .type = "string", .default_value = "", .meaning = "carried into the outputs"},
       {.key = "covariates", .type = "object", .meaning = "numbers carried into the outputs, e.g. {\"age\": 31}"},
       {.key = "timeseries", .type = "string", .meaning = "TSV/CSV/text/NPY time series (frames down, regions across)"},
       {.key = "image", .type = "string", .meaning = "a 4-D NIfTI image (instead of timeseries), with labels"},
       {.key = "labels", .type = "string", .meaning = "the label atlas of image (integer labels on the same grid)"},
       {.key = "label_names", .type = "string", .meaning = "a TSV of label index and name"},
       {.key = "confounds", .type = "string", .meaning = "confounds table (sets connect.clean.regressor_table)"},
       {.key = "read", .type = "object", .meaning = "time-series reading options (format, header; for images sampling_interval)"},
       {.key = "connect", .type = "object", .meaning = "connect options (section connect)"},
       {.key = "sweep", .type = "object", .meaning = "sweep options (section sweep and the engine sections)"},
       {.key = "null", .type = "object", .meaning = "the null model (section subject.null)"},
       {.key = "base_dir", .type = "string", .meaning = "folder relative paths are taken from (the CLI sets it to the config file's folder)"}}};
  return section;
}

namespace {

std::string resolve(const std::string& path, const std::string& base_dir) {
  if (path.empty() || path[0] == '/' || base_dir.empty()) return path;
  return base_dir + "/" + path;
}

// Subject ids become file names: letters, digits and a few safe marks only.
void check_id(const std::string& id) {
  if (id.empty()) fail(ErrorKind::argument, "subject config: \"id\" is required");
  for (char c : id)
    if (!(std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '.'))
      fail(ErrorKind::argument, "subject config: \"id\" may hold letters, digits, '-' and '.' only, got \"" + id + "\"");
}

// Paths named inside the connect options (confounds table, frame mask) are taken from
// the same folder as the config's own.
void resolve_connect_paths(Json& connect, const std::string& base) {
  if (!connect.contains("clean") || !connect["clean"].is_object()) return;
  Json& clean = connect["clean"];
  if (clean.contains("regressor_table") && clean["regressor_table"].is_string())
    clean["regressor_table"] = resolve(clean["regressor_table"].get<std::string>(), base);
  if (clean.contains("censor") && clean["censor"].is_object() && clean["censor"].contains("frame_mask") &&
      clean["censor"]["frame_mask"].is_string())
    clean["censor"]["frame_mask"] = resolve(clean["censor"]["frame_mask"].get<std::string>(), base);
}

}  // namespace

SubjectConfig parse_subject_config(const Json& config, const std::string& base_dir) {
  SchemaReader r(config, subject_option_section());
  SubjectConfig c;
  c.original = config;
  // "base_dir" (e.g. the folder of a config file) anchors relative paths.
  std::string base = base_dir;
  if (r.has("base_dir")) base = resolve(r.text("base_dir"), base_dir);
  c.id = r.text("id");
  check_id(c.id);
  c.session = r.text("session");
  for (char ch : c.session)
    if (!std::isalnum(static_cast<unsigned char>(ch)))
      fail(ErrorKind::argument, "subject config: \"session\" may hold letters and digits only, got \"" + c.session + "\"");
  c.group = r.text("group");
  c.timeseries = resolve(r.text("timeseries"), base);
  c.image = resolve(r.text("image"), base);
  c.labels = resolve(r.text("labels"), base);
  c.label_names = resolve(r.text("label_names"), base);
  const std::string confounds = resolve(r.text("confounds"), base);
  if (c.timeseries.empty() == c.image.empty())
    fail(ErrorKind::argument, "subject config: give either \"timeseries\" or \"image\" (with \"labels\")");
  // A CIFTI parcellated series holds its regions; every other image needs a label image.
  const std::string parcellated = ".ptseries.nii";
  const bool has_regions = c.image.size() > parcellated.size() &&
                           c.image.compare(c.image.size() - parcellated.size(), parcellated.size(), parcellated) == 0;
  if (!c.image.empty() && c.labels.empty() && !has_regions)
    fail(ErrorKind::argument, "subject config: \"image\" needs \"labels\" (a label image on the same grid)");
  auto object = [&](const char* key) {
    const Json* v = r.raw(key);
    if (v == nullptr || v->is_null()) return Json::object();
    if (!v->is_object()) fail(ErrorKind::argument, std::string("subject config: \"") + key + "\" must be an object");
    return *v;
  };
  c.covariates = object("covariates");
  for (auto it = c.covariates.begin(); it != c.covariates.end(); ++it)
    if (!it.value().is_number() && !it.value().is_null())
      fail(ErrorKind::argument, "subject config: covariate \"" + it.key() + "\" must be a number or null");
  c.read_options = object("read");
  c.connect_given = object("connect");
  const Json sweep = object("sweep");
  c.null = parse_null_spec(object("null"), "subject config: null");
  r.finish();
  if (!confounds.empty()) {
    Json& clean = c.connect_given["clean"];
    if (clean.is_null()) clean = Json::object();
    if (clean.contains("regressor_table"))
      fail(ErrorKind::argument, "subject config: give the confounds table either as \"confounds\" or in connect.clean, not both");
    clean["regressor_table"] = confounds;
  }
  resolve_connect_paths(c.connect_given, base);
  c.connect = connectivity::parse_connect_options(c.connect_given, "subject config: connect");
  c.sweep = parse_sweep_options(sweep);
  return c;
}

Json input_checksums(const SubjectConfig& c) {
  Json inputs = Json::object();
  auto add = [&](const char* role, const std::string& path) {
    if (!path.empty()) inputs[role] = {{"path", path}, {"sha256", io::sha256_file(path)}};
  };
  add("timeseries", c.timeseries);
  add("image", c.image);
  add("labels", c.labels);
  add("label_names", c.label_names);
  add("confounds", c.connect.clean.regressor_table);
  add("frame_mask", c.connect.clean.frame_mask);
  return inputs;
}

std::string subject_fingerprint(const SubjectConfig& c, const Json& checksums) {
  Json basis = {{"version", CRITPLEX_VERSION_STRING}, {"config", c.original}, {"connect", c.connect_given}};
  Json sums = Json::object();
  for (auto it = checksums.begin(); it != checksums.end(); ++it) sums[it.key()] = it.value()["sha256"];
  basis["inputs"] = sums;
  return io::sha256_hex(basis.dump());
}

namespace {
series::Series read_input_series(const SubjectConfig& config) {
  if (!config.timeseries.empty()) return io::read_series(config.timeseries, config.read_options);
  io::ImageOptions image_options = io::parse_image_options(config.read_options, "subject config: read");
  if (!config.label_names.empty()) image_options.label_names = config.label_names;
  return io::read_image_series(config.image, config.labels, image_options);
}
}  // namespace

SubjectResult run_subject(const SubjectConfig& config, const ProgressFn& progress) {
  SubjectResult result;
  result.config = config;
  result.checksums = input_checksums(config);
  result.fingerprint = subject_fingerprint(config, result.checksums);

  const series::Series s = read_input_series(config);
  result.frames = static_cast<std::size_t>(s.frames());
  result.regions = static_cast<std::size_t>(s.regions());
  result.sampling_interval = s.sampling_interval;

  const auto inputs = io::load_clean_inputs(config.connect.clean);
  auto matrices = connectivity::connect(s, config.connect, inputs);

  const bool with_null = config.null.model != "none";
  const double share = 1.0 / static_cast<double>(matrices.size());
  for (std::size_t b = 0; b < matrices.size(); ++b) {
    const double base = share * static_cast<double>(b);
    // Without a null model the sweep is the whole work; with one, a tenth of it.
    const double sweep_share = with_null ? share * 0.1 : share;
    BandResult band;
    band.band = matrices[b].band;
    band.matrix = std::move(matrices[b].matrix);
    band.sweep = run_sweep(band.matrix, config.sweep,
                           [&](double f) { return progress && progress(base + sweep_share * f); });
    if (with_null)
      band.null = run_null_model(config.null, s, config.connect, inputs, b, band.sweep, [&](double f) {
        return progress && progress(base + sweep_share + (share - sweep_share) * f);
      });
    result.bands.push_back(std::move(band));
  }
  if (progress && progress(1.0)) fail(ErrorKind::cancelled, "subject run cancelled by the progress callback");
  return result;
}

std::vector<std::string> write_subject_outputs(const SubjectResult& r, const std::string& out_dir) {
  // Everything is serialised first: a value that cannot be written fails before any file
  // exists. The document goes last: its presence marks a finished subject.
  const std::vector<output::NamedText> files = output::subject_files(r);
  io::make_folders(out_dir);  // created when missing; a file of that name is refused
  // No output may replace one of the subject's inputs (same device and inode, so links
  // and other spellings of a path are caught).
  const SubjectConfig& c = r.config;
  for (const std::string* input : {&c.timeseries, &c.image, &c.labels, &c.label_names, &c.connect.clean.regressor_table,
                                   &c.connect.clean.frame_mask}) {
    struct stat in;
    if (input->empty() || ::stat(input->c_str(), &in) != 0) continue;
    for (const auto& f : files) {
      struct stat out;
      const std::string path = out_dir + "/" + f.name;
      if (::stat(path.c_str(), &out) == 0 && out.st_dev == in.st_dev && out.st_ino == in.st_ino)
        fail(ErrorKind::argument, "output '" + path + "' is the input '" + *input + "' of this subject; choose another output folder");
    }
  }
  std::vector<std::string> written;
  for (const auto& f : files) {
    io::write_file_atomically(out_dir + "/" + f.name, f.text);
    written.push_back(f.name);
  }
  return written;
}

}  // namespace critplex::pipeline
