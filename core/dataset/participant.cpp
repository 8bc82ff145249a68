#include "dataset/participant.hpp"

#include <chrono>
#include <cmath>
#include <filesystem>
#include <optional>
#include <set>

#include "base/error.hpp"
#include "dataset/sidecars.hpp"
#include "io/files.hpp"
#include "io/nifti.hpp"
#include "output/subject.hpp"
#include "pipeline/subject.hpp"

namespace critplex::dataset {

namespace fs = std::filesystem;

const OptionSection& participant_option_section() {
  static const OptionSection section{
      "dataset.participant",
      "dataset options",
      "cpx_dataset_run (level participant), critplex dataset DERIVATIVES OUT participant",
      "Which runs of a BIDS derivatives folder to analyse, with which atlas and subject config.",
      {{.key = "atlas", .type = "string", .default_value = "",
        .meaning = "label image on the runs' grid (NIfTI) or CIFTI dense label file; not needed for .ptseries.nii runs"},
       {.key = "atlas_labels", .type = "string", .default_value = "", .meaning = "TSV of label index and name"},
       {.key = "atlas_label", .type = "string", .default_value = "",
        .meaning = "label of the atlas- entity in output names (default: from the atlas file name)"},
       {.key = "participant_label", .type = "strings", .default_value = Json::array(),
        .meaning = "participants to run (with or without sub-; default all)"},
       {.key = "session", .type = "strings", .default_value = Json::array(), .meaning = "sessions to run (default all)"},
       {.key = "task", .type = "string", .default_value = "", .meaning = "task label to run (default any)"},
       {.key = "space", .type = "string", .default_value = "", .meaning = "space label to run (default any)"},
       {.key = "config", .type = "object", .meaning = "the shared subject config (connect, sweep, null, read; section subject)"},
       {.key = "dry_run", .type = "boolean", .default_value = false, .meaning = "list the runs and outputs, write nothing"},
       {.key = "force", .type = "boolean", .default_value = false, .meaning = "recompute runs whose inputs and options are unchanged"}}};
  return section;
}

ParticipantOptions parse_participant_options(const Json& options) {
  SchemaReader r(options, participant_option_section());
  ParticipantOptions o;
  o.atlas = r.text("atlas");
  o.atlas_labels = r.text("atlas_labels");
  o.atlas_label = r.text("atlas_label");
  o.filter.participants = r.texts("participant_label");
  o.filter.sessions = r.texts("session");
  o.filter.task = r.text("task");
  o.filter.space = r.text("space");
  if (const Json* c = r.raw("config"); c != nullptr && !c->is_null()) {
    if (!c->is_object()) r.bad("config", "an object");
    o.config = *c;
  }
  o.dry_run = r.boolean("dry_run");
  o.force = r.boolean("force");
  r.finish();
  for (const char* key : {"id", "session", "group", "timeseries", "image", "labels", "label_names", "confounds"})
    if (o.config.contains(key))
      fail(ErrorKind::argument, std::string("dataset options: \"config.") + key +
                                    "\" is set by the dataset mode from the runs it finds; leave it out of the config");
  if (!o.atlas_label.empty() && !is_bids_label(o.atlas_label))
    fail(ErrorKind::argument, "dataset options: \"atlas_label\" must be letters and digits only, got \"" + o.atlas_label + "\"");
  return o;
}

std::string atlas_label_of(const std::string& atlas_path) {
  const std::string file = fs::path(atlas_path).filename().string();
  if (const auto name = parse_bids_name(file)) {
    if (!name->get("atlas").empty()) return name->get("atlas");
    if (!name->get("desc").empty()) return name->get("desc");
  }
  std::string label = label_from(file.substr(0, file.find('.')));
  if (label.empty()) fail(ErrorKind::argument, "dataset options: cannot make an atlas label from '" + file + "'; give \"atlas_label\"");
  return label;
}

namespace {

// Does the config take columns from a confounds table?
bool uses_confounds(const Json& config) {
  if (!config.contains("connect") || !config["connect"].is_object()) return false;
  const Json& connect = config["connect"];
  if (!connect.contains("clean") || !connect["clean"].is_object()) return false;
  const Json& clean = connect["clean"];
  if (clean.contains("regressor_table"))
    fail(ErrorKind::argument, "dataset options: \"config.connect.clean.regressor_table\" is set from each run's confounds table; leave it out");
  const bool motion = clean.contains("censor") && clean["censor"].is_object() && clean["censor"].contains("motion_column");
  return clean.contains("regressor_columns") || motion;
}

// Numeric participants.tsv columns (n/a allowed) become covariates; "group" the group.
void add_participant_fields(Json& config, const Participants& table, const std::string& subject) {
  const auto row = table.rows.find(subject);
  if (row == table.rows.end()) return;
  Json covariates = Json::object();
  for (const auto& column : table.columns) {
    if (column == "group") {
      if (row->second.at(column) != "n/a") config["group"] = row->second.at(column);
      continue;
    }
    bool numeric = true;
    for (const auto& [id, cells] : table.rows) {
      const std::string& cell = cells.at(column);
      if (cell == "n/a") continue;
      char* end = nullptr;
      const double value = std::strtod(cell.c_str(), &end);
      if (cell.empty() || *end != '\0' || !std::isfinite(value)) numeric = false;
    }
    if (!numeric) continue;
    const std::string& cell = row->second.at(column);
    covariates[column] = cell == "n/a" ? Json(nullptr) : Json(std::strtod(cell.c_str(), nullptr));
  }
  if (!covariates.empty()) config["covariates"] = covariates;
}

std::string grid_text(const std::array<std::int64_t, 3>& g) {
  return std::to_string(g[0]) + "x" + std::to_string(g[1]) + "x" + std::to_string(g[2]);
}

struct PlannedRun {
  Run run;
  pipeline::SubjectConfig config;
  double repetition_time = 0.0;
  std::string repetition_time_source;  // the sidecar it came from
  Entities base;  // output entities without desc
};

std::string band_label(const std::string& band, const pipeline::SubjectConfig& config) {
  if (band.empty()) return config.connect_given.contains("filter") ? "filtered" : "unfiltered";
  const std::string label = label_from(band);
  if (label.empty()) fail(ErrorKind::argument, "dataset: band \"" + band + "\" has no letters or digits to name its files by");
  return label;
}

std::vector<PlannedRun> plan_runs(const std::string& derivatives_dir, const ParticipantOptions& o, Json& warnings) {
  const std::vector<Run> runs = find_runs(derivatives_dir, o.filter);
  const Participants participants = read_participants(derivatives_dir);
  const bool confounds = uses_confounds(o.config);
  const std::string atlas_label = o.atlas.empty() ? (o.atlas_label.empty() ? "parcels" : o.atlas_label)
                                                  : (o.atlas_label.empty() ? atlas_label_of(o.atlas) : o.atlas_label);
  for (const auto& path : {o.atlas, o.atlas_labels})
    if (!path.empty() && !fs::exists(path)) fail(ErrorKind::io, "dataset: '" + path + "' does not exist");
  std::optional<io::ImageHeaderSummary> atlas;
  if (!o.atlas.empty()) atlas = io::read_image_header_summary(o.atlas);
  std::vector<PlannedRun> planned;
  for (const Run& run : runs) {
    PlannedRun p;
    p.run = run;
    const RepetitionTime tr = sidecar_repetition_time(run);
    p.repetition_time = tr.seconds;
    p.repetition_time_source = tr.source;
    // The sidecar wins over the header (BIDS: sidecar values take precedence); a
    // disagreement usually means one of them was edited, so say so.
    const io::ImageHeaderSummary image = io::read_image_header_summary(run.image);
    // A volume atlas on another grid fails every run: say so before any work.
    if (atlas && !atlas->cifti && !image.cifti && atlas->grid != image.grid)
      fail(ErrorKind::data, "grids differ: '" + run.image + "' is " + grid_text(image.grid) + " voxels but the atlas '" +
                                o.atlas + "' is " + grid_text(atlas->grid));
    const double header = image.sampling_interval;
    if (std::isfinite(header) && std::fabs(header - p.repetition_time) > 1e-6 * p.repetition_time)
      warnings.push_back("'" + run.image + "': the header says a repetition time of " + io::format_double(header) +
                         " s, the sidecar '" + tr.source + "' says " + io::format_double(p.repetition_time) +
                         " s; using the sidecar's");
    if (confounds && !fs::exists(run.confounds))
      fail(ErrorKind::io, "'" + run.image + "': its confounds table '" + run.confounds +
                              "' is missing (the config selects confound columns)");
    Json config = o.config;
    config["id"] = run.subject();
    if (!run.session().empty()) config["session"] = run.session();
    config["image"] = run.image;
    if (!o.atlas.empty()) config["labels"] = o.atlas;
    if (!o.atlas_labels.empty()) config["label_names"] = o.atlas_labels;
    if (confounds) config["confounds"] = run.confounds;
    Json read = config.contains("read") && config["read"].is_object() ? config["read"] : Json::object();
    read["sampling_interval"] = p.repetition_time;
    config["read"] = read;
    add_participant_fields(config, participants, run.subject());
    try {
      p.config = pipeline::parse_subject_config(config, "");
    } catch (const Error& e) {
      fail(e.kind(), "'" + run.image + "': " + e.what());
    }
    for (const auto& [key, label] : run.name.entities)
      if (key != "desc") p.base.emplace_back(key, label);
    p.base.emplace_back("atlas", atlas_label);
    planned.push_back(std::move(p));
  }
  return planned;
}

// Output names of a planned run, before it ran: the topology document and, per band
// named by the connect options, the products.
Json planned_outputs(const PlannedRun& p) {
  Json names = Json::array();
  std::vector<std::string> bands;
  for (const auto& b : p.config.connect.bands) bands.push_back(b.name);
  if (bands.empty()) bands.push_back("");
  for (const auto& band : bands)
    for (const char* suffix : {"connectivity", "curves", "transitions"}) {
      const auto& sweep = p.config.sweep;  // the transitions engine runs when chi or Betti curves exist
      if (std::string(suffix) == "transitions" && !(sweep.transitions.enabled && (sweep.cliques || sweep.homology))) continue;
      Entities e = p.base;
      e.emplace_back("desc", band_label(band, p.config));
      for (const char* extension : {".tsv", ".json"}) names.push_back(p.run.folder + "/" + format_bids_name(e, suffix, extension));
    }
  names.push_back(p.run.folder + "/" + format_bids_name(p.base, "topology", ".json"));
  return names;
}

// An unchanged finished run: its document exists with the same fingerprint.
bool unchanged(const std::string& document, const std::string& fingerprint) {
  if (!fs::exists(document)) return false;
  try {
    const Json doc = Json::parse(io::read_file(document));
    return doc.at("provenance").at("fingerprint") == fingerprint;
  } catch (const std::exception&) {
    return false;
  }
}

Json run_one(const PlannedRun& p, const std::string& derivatives_dir, const std::string& out_dir, bool force,
             const pipeline::ProgressFn& progress) {
  Json entry = {{"image", p.run.image}, {"subject", p.run.subject()}, {"session", p.run.session()},
                {"repetition_time", p.repetition_time}};
  const std::string folder = out_dir + "/" + p.run.folder;
  const std::string document = folder + "/" + format_bids_name(p.base, "topology", ".json");
  const Json checksums = pipeline::input_checksums(p.config);
  if (!force && unchanged(document, pipeline::subject_fingerprint(p.config, checksums))) {
    entry["status"] = "skipped";
    return entry;
  }
  const pipeline::SubjectResult result = pipeline::run_subject(p.config, progress);
  std::vector<output::NamedText> files;
  Json products = Json::object();
  std::set<std::string> labels;
  for (const auto& band : result.bands) {
    const std::string label = band_label(band.band, p.config);
    if (!labels.insert(label).second)
      fail(ErrorKind::argument, "dataset: two bands give the file label desc-" + label + "; rename a band");
    Entities e = p.base;
    e.emplace_back("desc", label);
    Json names = Json::object();
    for (auto& product : product_files(result, band, p.run.image, derivatives_dir)) {
      const std::string name = format_bids_name(e, product.suffix, product.extension);
      names[product.suffix + product.extension] = name;
      files.push_back({name, std::move(product.text)});
    }
    products[band.band.empty() ? label : band.band] = names;
  }
  Json doc = output::subject_document(result);
  doc["bids"] = {{"entities", Json::object()}, {"source", fs::relative(p.run.image, derivatives_dir).generic_string()},
                 {"atlas", p.config.labels}, {"band_labels", Json::object()}, {"files", products}};
  for (const auto& [key, label] : p.base) doc["bids"]["entities"][key] = label;
  for (const auto& band : result.bands) doc["bids"]["band_labels"][band.band] = band_label(band.band, p.config);
  files.push_back({fs::path(document).filename().string(), doc.dump(1) + "\n"});
  // Every text is ready before the first file is written; the document goes last, so its
  // presence marks a finished run.
  io::make_folders(folder);
  Json written = Json::array();
  for (const auto& f : files) {
    io::write_file_atomically(folder + "/" + f.name, f.text);
    written.push_back(p.run.folder + "/" + f.name);
  }
  entry["status"] = "done";
  entry["outputs"] = written;
  return entry;
}

}  // namespace

Json run_participant_level(const std::string& derivatives_dir, const std::string& out_dir, const ParticipantOptions& o,
                           const pipeline::ProgressFn& progress) {
  if (out_dir.empty()) fail(ErrorKind::argument, "dataset: the output folder is empty");
  std::error_code ec;
  if (fs::exists(out_dir, ec) && fs::equivalent(out_dir, derivatives_dir, ec))
    fail(ErrorKind::argument, "dataset: the output folder '" + out_dir + "' is the derivatives folder; give another");
  Json warnings = Json::array();
  const std::vector<PlannedRun> planned = plan_runs(derivatives_dir, o, warnings);
  Json summary = {{"level", "participant"}, {"dry_run", o.dry_run}, {"runs", Json::array()}, {"warnings", warnings}};
  std::size_t done = 0, skipped = 0, failed = 0;
  if (o.dry_run) {
    for (const auto& p : planned)
      summary["runs"].push_back({{"image", p.run.image}, {"subject", p.run.subject()}, {"session", p.run.session()},
                                 {"repetition_time", p.repetition_time}, {"sidecar", p.repetition_time_source},
                                 {"confounds", p.config.connect.clean.regressor_table}, {"status", "planned"},
                                 {"outputs", planned_outputs(p)}});
    summary["done"] = 0;
    summary["skipped"] = 0;
    summary["failed"] = 0;
    return summary;
  }
  const double share = 1.0 / static_cast<double>(planned.size());
  for (std::size_t i = 0; i < planned.size(); ++i) {
    const auto start = std::chrono::steady_clock::now();
    Json entry;
    try {
      entry = run_one(planned[i], derivatives_dir, out_dir, o.force,
                      [&](double f) { return progress && progress(share * (static_cast<double>(i) + f)); });
    } catch (const Error& e) {
      if (e.kind() == ErrorKind::cancelled) throw;
      entry = {{"image", planned[i].run.image}, {"subject", planned[i].run.subject()},
               {"session", planned[i].run.session()}, {"status", "failed"}, {"message", e.what()}};
    }
    entry["seconds"] = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    const std::string status = entry["status"];
    (status == "done" ? done : status == "skipped" ? skipped : failed) += 1;
    summary["runs"].push_back(std::move(entry));
  }
  if (done + skipped > 0)
    io::write_file_atomically(out_dir + "/dataset_description.json", dataset_description(derivatives_dir, o).dump(2) + "\n");
  summary["done"] = done;
  summary["skipped"] = skipped;
  summary["failed"] = failed;
  return summary;
}

}  // namespace critplex::dataset
