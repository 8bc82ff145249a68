#include "pipeline/subject.hpp"

#include <cmath>

#include "base/error.hpp"
#include "connectivity/connect.hpp"
#include "io/checksum.hpp"
#include "io/confounds.hpp"
#include "io/files.hpp"
#include "io/nifti.hpp"
#include "pipeline/nulls.hpp"
#include "transitions/report.hpp"

namespace critplex::pipeline {

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

}  // namespace

SubjectConfig parse_subject_config(const Json& config, const std::string& base_dir) {
  OptionReader r(config, "subject config");
  SubjectConfig c;
  c.original = config;
  // "base_dir" (e.g. the folder of a config file) anchors relative paths.
  std::string base = base_dir;
  if (r.has("base_dir")) base = resolve(r.text("base_dir", ""), base_dir);
  c.id = r.text("id", "");
  check_id(c.id);
  c.group = r.text("group", "");
  c.timeseries = resolve(r.text("timeseries", ""), base);
  c.image = resolve(r.text("image", ""), base);
  c.labels = resolve(r.text("labels", ""), base);
  c.label_names = resolve(r.text("label_names", ""), base);
  c.confounds = resolve(r.text("confounds", ""), base);
  if (c.timeseries.empty() == c.image.empty())
    fail(ErrorKind::argument, "subject config: give either \"timeseries\" or \"image\" (with \"labels\")");
  if (!c.image.empty() && c.labels.empty())
    fail(ErrorKind::argument, "subject config: \"image\" needs \"labels\" (a label image on the same grid)");
  auto object = [&](const char* key) {
    const Json* v = r.raw(key);
    if (v == nullptr || v->is_null()) return Json::object();
    if (!v->is_object()) fail(ErrorKind::argument, std::string("subject config: \"") + key + "\" must be an object");
    return *v;
  };
  c.covariates = object("covariates");
  c.read_options = object("read");
  c.connect_options = object("connect");
  c.sweep_options = object("sweep");
  const Json null_section = object("null");
  OptionReader nr(null_section, "subject config: null");
  c.null.model = nr.choice("model", "none", {"none", "phase_multivariate", "phase_independent", "iaaft", "rewire"});
  c.null.count = static_cast<int>(nr.integer("count", 19));
  if (c.null.count < 2 || c.null.count > 10000)
    fail(ErrorKind::argument, "subject config: null \"count\" must be in [2, 10000], got " + std::to_string(c.null.count));
  const long long seed = nr.integer("seed", 1);
  if (seed < 0) fail(ErrorKind::argument, "subject config: null \"seed\" must be non-negative");
  c.null.seed = static_cast<std::uint64_t>(seed);
  c.null.iaaft_iterations = static_cast<int>(nr.integer("iaaft_iterations", 100));
  c.null.rewire_swaps_per_edge = nr.number("rewire_swaps_per_edge", 10.0);
  nr.finish();
  r.finish();
  if (!c.confounds.empty()) {
    Json& clean = c.connect_options["clean"];
    if (clean.is_null()) clean = Json::object();
    if (clean.contains("regressor_table"))
      fail(ErrorKind::argument, "subject config: give the confounds table either as \"confounds\" or in connect.clean, not both");
    clean["regressor_table"] = c.confounds;
  }
  // Resolve relative file names inside the connect options too.
  if (c.connect_options.contains("clean") && c.connect_options["clean"].is_object()) {
    Json& clean = c.connect_options["clean"];
    if (clean.contains("regressor_table") && clean["regressor_table"].is_string())
      clean["regressor_table"] = resolve(clean["regressor_table"].get<std::string>(), base);
    if (clean.contains("censor") && clean["censor"].is_object() && clean["censor"].contains("frame_mask") &&
        clean["censor"]["frame_mask"].is_string())
      clean["censor"]["frame_mask"] = resolve(clean["censor"]["frame_mask"].get<std::string>(), base);
  }
  // Check the options now, so a typo fails before any work (engine sections are checked
  // when the sweep runs).
  (void)connectivity::parse_connect_options(c.connect_options, "subject config: connect");
  (void)parse_sweep_options(c.sweep_options);
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
  if (c.connect_options.contains("clean") && c.connect_options["clean"].is_object()) {
    const Json& clean = c.connect_options["clean"];
    if (clean.contains("regressor_table") && clean["regressor_table"].is_string())
      add("confounds", clean["regressor_table"].get<std::string>());
    if (clean.contains("censor") && clean["censor"].is_object() && clean["censor"].contains("frame_mask") &&
        clean["censor"]["frame_mask"].is_string())
      add("frame_mask", clean["censor"]["frame_mask"].get<std::string>());
  }
  return inputs;
}

std::string subject_fingerprint(const SubjectConfig& c, const Json& checksums) {
  Json basis = {{"version", CRITPLEX_VERSION_STRING}, {"config", c.original}, {"connect", c.connect_options}};
  Json sums = Json::object();
  for (auto it = checksums.begin(); it != checksums.end(); ++it) sums[it.key()] = it.value()["sha256"];
  basis["inputs"] = sums;
  return io::sha256_hex(basis.dump());
}

SubjectResult run_subject(const SubjectConfig& config, const ProgressFn& progress) {
  SubjectResult result;
  result.config = config;
  const Json checksums = input_checksums(config);

  series::Series s;
  if (!config.timeseries.empty()) {
    s = io::read_series(config.timeseries, config.read_options);
  } else {
    OptionReader rr(config.read_options, "subject config: read");
    io::ImageOptions image_options;
    image_options.label_names = config.label_names;
    if (auto dt = rr.number("sampling_interval")) image_options.sampling_interval = *dt;
    rr.finish();
    s = io::read_image_series(config.image, config.labels, image_options);
  }
  result.frames = static_cast<std::size_t>(s.frames());
  result.regions = static_cast<std::size_t>(s.regions());
  result.sampling_interval = s.sampling_interval;

  const auto connect_options = connectivity::parse_connect_options(config.connect_options, "subject config: connect");
  const auto inputs = io::load_clean_inputs(connect_options.clean);
  auto matrices = connectivity::connect(s, connect_options, inputs);
  const SweepOptions sweep_options = parse_sweep_options(config.sweep_options);

  const double share = 1.0 / static_cast<double>(matrices.size());
  for (std::size_t b = 0; b < matrices.size(); ++b) {
    const double base = share * static_cast<double>(b);
    // Without a null model the sweep is the whole work; with one, a tenth of it.
    const double sweep_share = config.null.model == "none" ? share : share * 0.1;
    BandResult band;
    band.band = matrices[b].band;
    band.matrix = std::move(matrices[b].matrix);
    band.sweep = run_sweep(band.matrix, sweep_options,
                           [&](double f) { return progress && progress(base + sweep_share * f); });
    if (config.null.model != "none")
      band.null = run_null_model(config.null, s, connect_options, inputs, b, sweep_options, band.sweep,
                                 [&](double f) { return progress && progress(base + sweep_share + (share - sweep_share) * f); });
    result.bands.push_back(std::move(band));
  }
  result.provenance = {{"critplex_version", CRITPLEX_VERSION_STRING},
                       {"config", config.original},
                       {"connect_options", config.connect_options},
                       {"inputs", checksums},
                       {"fingerprint", subject_fingerprint(config, checksums)},
                       {"null_seed", config.null.seed}};
  if (progress && progress(1.0)) fail(ErrorKind::cancelled, "subject run cancelled by the progress callback");
  return result;
}

Json subject_document(const SubjectResult& r) {
  Json doc;
  doc["kind"] = "critplex subject result";
  doc["format_version"] = 1;
  doc["subject"] = r.config.id;
  doc["group"] = r.config.group;
  doc["covariates"] = r.config.covariates;
  doc["series"] = {{"frames", r.frames}, {"regions", r.regions}};
  doc["series"]["sampling_interval"] = std::isfinite(r.sampling_interval) ? Json(r.sampling_interval) : Json(nullptr);
  Json bands = Json::array();
  for (const auto& b : r.bands) {
    Json entry;
    entry["band"] = b.band;
    entry["connectivity"] = b.matrix.info;
    entry["sweep"] = sweep_to_json(b.sweep);
    entry["curves"] = sweep_curves_json(b.sweep);
    entry["null"] = b.null;
    bands.push_back(std::move(entry));
  }
  doc["bands"] = std::move(bands);
  doc["provenance"] = r.provenance;
  doc["caution"] = "Research software, not a medical device: not for clinical decisions.";
  return doc;
}

std::string subject_prefix(const std::string& id, const std::string& band) {
  std::string p = "sub-" + id;
  if (!band.empty()) {
    std::string safe;
    for (char c : band) safe.push_back(std::isalnum(static_cast<unsigned char>(c)) ? c : '-');
    p += "_band-" + safe;
  }
  return p;
}

std::vector<std::string> write_subject_outputs(const SubjectResult& r, const std::string& out_dir) {
  std::vector<std::string> written;
  auto put = [&](const std::string& name, const std::string& bytes) {
    io::write_file_atomically(out_dir + "/" + name, bytes);
    written.push_back(name);
  };
  // The TSV twins first, the JSON document last: its presence marks a finished subject.
  for (const auto& b : r.bands) {
    const std::string prefix = subject_prefix(r.config.id, b.band);
    put(prefix + "_connectivity.tsv", io::format_matrix(b.matrix, "tsv"));
    put(prefix + "_curves.tsv", sweep_curves_tsv(b.sweep));
    if (b.sweep.sections.contains("transitions"))
      put(prefix + "_transitions.tsv", transitions::summary_tsv(b.sweep.sections.at("transitions")));
  }
  put(subject_prefix(r.config.id, "") + "_topology.json", subject_document(r).dump(1) + "\n");
  return written;
}

}  // namespace critplex::pipeline
