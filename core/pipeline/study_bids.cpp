// The "bids" layout of a simulated study (pipeline/study.hpp): the demo subjects as a
// preprocessing pipeline's derivatives, with file names built by the BIDS 1.9 rules.
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <filesystem>

#include "base/error.hpp"
#include "base/random.hpp"
#include "io/files.hpp"
#include "io/nifti_write.hpp"
#include "pipeline/study.hpp"

namespace critplex::pipeline {

namespace {

namespace fs = std::filesystem;

// Names of our own for the invented dataset: pipeline folder, template space, atlas, task.
constexpr const char* kPipeline = "critplex-simulate";
constexpr const char* kSpace = "sleeplab";
constexpr const char* kAtlas = "demoatlas";  // a desc- label: BIDS 1.9 has no atlas entity
constexpr const char* kTask = "rest";
constexpr const char* kBidsVersion = "1.9.0";
constexpr double kVoxelMm = 4.0;
constexpr double kAmplitude = 10.0;   // image units per unit of the model's series (about 1 % of the baseline)
constexpr double kVoxelNoise = 8.0;   // standard deviation of each voxel's own noise, image units
constexpr const char* kInvented = "Invented data from critplex's demo cohort model; no real person is described.";

using Entities = std::vector<std::pair<std::string, std::string>>;

// A BIDS file name: key-label pairs joined by '_' in the order given (callers list them in
// the specification's entity order), then _<suffix><extension>. Labels are letters and
// digits only, as the specification requires.
std::string bids_name(const Entities& entities, const std::string& suffix, const std::string& extension) {
  std::string name;
  for (const auto& [key, label] : entities) {
    if (label.empty() || !std::all_of(label.begin(), label.end(), [](unsigned char c) { return std::isalnum(c) != 0; }))
      fail(ErrorKind::argument, "BIDS label '" + label + "' of entity '" + key + "' must be letters and digits only");
    name += key + "-" + label + "_";
  }
  return name + suffix + extension;
}

// The atlas and its lookup table at the derivatives' root: space-<space>_desc-<atlas>_dseg.
std::string atlas_name(const std::string& extension) {
  return bids_name({{"space", kSpace}, {"desc", kAtlas}}, "dseg", extension);
}

std::string two_digits(std::size_t i) {
  char buffer[24];
  std::snprintf(buffer, sizeof buffer, "%02zu", i);
  return buffer;
}

std::string number_text(double x) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.7g", x);
  return buffer;
}

// A seed for one stream of one run, decorrelated from its neighbours.
std::uint64_t stream_seed(std::uint64_t seed, std::uint64_t stream) { return derived_seed(seed, stream + 1); }

// Regions as cubes of block^3 voxels in a box of near-equal sides, one background voxel
// around it.
struct Grid {
  std::array<std::int64_t, 3> dims{};
  std::vector<std::vector<std::size_t>> region_voxels;
  std::size_t voxels() const { return static_cast<std::size_t>(dims[0] * dims[1] * dims[2]); }
};

Grid make_grid(std::size_t regions, int block) {
  std::size_t nx = 1, ny = 1;
  while (nx * nx * nx < regions) ++nx;
  while (nx * ny * ny < regions) ++ny;
  const std::size_t nz = (regions + nx * ny - 1) / (nx * ny);
  Grid g;
  const std::array<std::size_t, 3> blocks{nx, ny, nz};
  for (int k = 0; k < 3; ++k) g.dims[k] = static_cast<std::int64_t>(blocks[k]) * block + 2;
  g.region_voxels.resize(regions);
  for (std::size_t r = 0; r < regions; ++r) {
    const std::size_t bx = r % nx, by = (r / nx) % ny, bz = r / (nx * ny);
    for (int z = 0; z < block; ++z)
      for (int y = 0; y < block; ++y)
        for (int x = 0; x < block; ++x) {
          const auto vx = static_cast<std::int64_t>(1 + bx * block + x), vy = static_cast<std::int64_t>(1 + by * block + y),
                     vz = static_cast<std::int64_t>(1 + bz * block + z);
          g.region_voxels[r].push_back(static_cast<std::size_t>(vx + g.dims[0] * (vy + g.dims[1] * vz)));
        }
  }
  return g;
}

io::NiftiImage image_on(const Grid& g) {
  io::NiftiImage image;
  for (int k = 0; k < 3; ++k) {
    image.dims[k] = g.dims[k];
    image.voxel_mm[k] = kVoxelMm;
    image.origin_mm[k] = -0.5 * static_cast<double>(g.dims[k] - 1) * kVoxelMm;  // grid centred on 0
  }
  return image;
}

// Invented nuisance signals of one run: tissue signals, head motion as small random walks,
// their backward differences (n/a in the first row) and framewise displacement
// (Power et al. 2012: sum of absolute differences, rotations as arcs on a 50 mm sphere).
struct Confounds {
  std::vector<std::string> names;
  std::vector<std::vector<double>> columns;  // NaN = n/a
};

Confounds make_confounds(const std::vector<double>& global_signal, std::size_t frames, std::uint64_t seed) {
  Random random(seed);
  Confounds c;
  auto ar1 = [&](double mean, double sd, double phi) {
    std::vector<double> x(frames);
    double v = random.normal();
    for (auto& value : x) {
      value = mean + sd * v;
      v = phi * v + std::sqrt(1.0 - phi * phi) * random.normal();
    }
    return x;
  };
  auto walk = [&](double step) {
    std::vector<double> x(frames);
    double v = 0.0;
    for (auto& value : x) {
      value = v;
      v += step * random.normal();
    }
    return x;
  };
  c.names = {"global_signal", "white_matter", "csf", "motion_x", "motion_y", "motion_z",
             "motion_pitch", "motion_roll", "motion_yaw"};
  c.columns = {global_signal, ar1(700.0, 3.0, 0.5), ar1(1500.0, 6.0, 0.5)};
  for (int k = 0; k < 3; ++k) c.columns.push_back(walk(0.02));     // mm
  for (int k = 0; k < 3; ++k) c.columns.push_back(walk(0.0003));   // radians
  const std::size_t signals = c.columns.size();
  const double nan = std::numeric_limits<double>::quiet_NaN();
  for (std::size_t j = 0; j < signals; ++j) {
    std::vector<double> d(frames, nan);
    for (std::size_t t = 1; t < frames; ++t) d[t] = c.columns[j][t] - c.columns[j][t - 1];
    c.names.push_back(c.names[j] + "_derivative");
    c.columns.push_back(d);
  }
  std::vector<double> fd(frames, nan);
  for (std::size_t t = 1; t < frames; ++t) {
    double sum = 0.0;
    for (std::size_t j = 3; j < 6; ++j) sum += std::fabs(c.columns[j][t] - c.columns[j][t - 1]);
    for (std::size_t j = 6; j < 9; ++j) sum += 50.0 * std::fabs(c.columns[j][t] - c.columns[j][t - 1]);
    fd[t] = sum;
  }
  c.names.push_back("framewise_displacement");
  c.columns.push_back(fd);
  return c;
}

std::string confounds_tsv(const Confounds& c) {
  std::string out;
  for (std::size_t j = 0; j < c.names.size(); ++j) out += (j ? "\t" : "") + c.names[j];
  out += "\n";
  for (std::size_t t = 0; t < c.columns[0].size(); ++t) {
    for (std::size_t j = 0; j < c.columns.size(); ++j) {
      const double v = c.columns[j][t];
      out += (j ? "\t" : "") + (std::isnan(v) ? std::string("n/a") : number_text(v));
    }
    out += "\n";
  }
  return out;
}

Json confounds_sidecar(const Confounds& c) {
  Json doc = Json::object();
  auto unit_of = [](const std::string& name) {
    if (name.rfind("motion_x", 0) == 0 || name.rfind("motion_y", 0) == 0 || name.rfind("motion_z", 0) == 0 ||
        name == "framewise_displacement")
      return "mm";
    if (name.rfind("motion_", 0) == 0) return "rad";
    return "arbitrary";
  };
  for (const auto& name : c.names) {
    std::string what;
    if (name == "global_signal") what = "Mean of the image over all atlas voxels";
    else if (name == "white_matter") what = "Invented white-matter signal";
    else if (name == "csf") what = "Invented cerebrospinal-fluid signal";
    else if (name == "framewise_displacement")
      what = "Sum of absolute frame-to-frame changes of the six motion parameters, rotations as arcs on a 50 mm sphere "
             "(Power et al. 2012); n/a in the first frame";
    else if (name.size() > 11 && name.compare(name.size() - 11, 11, "_derivative") == 0)
      what = "Backward difference of " + name.substr(0, name.size() - 11) + "; n/a in the first frame";
    else what = "Invented head motion (random walk)";
    doc[name] = {{"Description", what}, {"Units", unit_of(name)}};
  }
  return doc;
}

struct Writer {
  fs::path root;  // the temporary folder
  std::uintmax_t bytes = 0;
  void text(const fs::path& relative, const std::string& content) {
    const fs::path path = root / relative;
    io::make_folders(path.parent_path().string());
    io::write_file_atomically(path.string(), content);
    bytes += content.size();
  }
  void json(const fs::path& relative, const Json& doc) { text(relative, doc.dump(2) + "\n"); }
  void image(const fs::path& relative, const io::NiftiImage& img) {
    const fs::path path = root / relative;
    io::make_folders(path.parent_path().string());
    io::write_nifti1(path.string(), img);
    bytes += fs::file_size(path);
  }
};

// Where the atlas and its lookup table live, relative to the study root.
struct AtlasFiles {
  fs::path image, labels;
};

// The atlas and its lookup table (BIDS "dseg": index, name).
AtlasFiles write_atlas(Writer& w, const fs::path& deriv, const Grid& grid, const simulate::CohortModel& model,
                       const simulate::CohortPlan& plan) {
  const AtlasFiles files{deriv / atlas_name(".nii.gz"), deriv / atlas_name(".tsv")};
  io::NiftiImage labels = image_on(grid);
  labels.storage = io::NiftiStorage::int16;
  labels.description = "critplex demo atlas (invented)";
  labels.values.assign(grid.voxels(), 0.0);
  std::string table = "index\tname\n";
  for (std::size_t r = 0; r < model.regions; ++r) {
    for (auto v : grid.region_voxels[r]) labels.values[v] = static_cast<double>(r + 1);
    table += std::to_string(r + 1) + "\t" + plan.region_names[r] + "\n";
  }
  w.image(files.image, labels);
  w.text(files.labels, table);
  return files;
}

// Voxel values of one run: baseline + amplitude x series + noise summing to zero over
// the region. `global` receives the mean level over the regions per frame.
io::NiftiImage run_image(const Grid& grid, const simulate::CohortModel& model, const std::vector<double>& baseline,
                         const series::Series& series, std::uint64_t noise_seed, std::vector<double>& global) {
  const std::size_t frames = model.frames;
  io::NiftiImage bold = image_on(grid);
  bold.dims[3] = static_cast<std::int64_t>(frames);
  bold.repetition_time = model.sampling_interval;
  bold.storage = io::NiftiStorage::int16_scaled;
  bold.description = "critplex demo run (invented)";
  const std::size_t V = grid.voxels();
  bold.values.assign(V * frames, 0.0);
  Random noise(noise_seed);
  global.assign(frames, 0.0);
  std::vector<double> draw;
  for (std::size_t t = 0; t < frames; ++t) {
    for (std::size_t r = 0; r < model.regions; ++r) {
      const auto& voxels = grid.region_voxels[r];
      const double level = baseline[r] + kAmplitude * series.values(static_cast<Eigen::Index>(t), static_cast<Eigen::Index>(r));
      draw.resize(voxels.size());
      double mean = 0.0;
      for (auto& d : draw) mean += (d = kVoxelNoise * noise.normal());
      mean /= static_cast<double>(draw.size());
      for (std::size_t k = 0; k < voxels.size(); ++k) bold.values[voxels[k] + V * t] = level + (draw[k] - mean);
      global[t] += level / static_cast<double>(model.regions);
    }
  }
  return bold;
}

// One run of subject i in session s (0-based): image, sidecar and confounds. Returns
// the run's manifest line.
std::string write_run(Writer& w, const fs::path& deriv, const Grid& grid, const AtlasFiles& atlas,
                      const simulate::CohortModel& model, const simulate::CohortPlan& plan,
                      const BidsStudyOptions& layout, const std::vector<double>& baseline, std::size_t i,
                      std::size_t s) {
  const auto& subject = plan.subjects[i];
  // Session 01 is the tsv layout's series; later sessions redraw the signals of the
  // same person (same loadings' mean, global strength and age).
  simulate::CohortPlan run_plan = plan;
  if (s > 0) run_plan.subjects[i].seed = stream_seed(subject.seed, 100 + s);
  const series::Series series = simulate::simulate_subject(model, run_plan, i);

  Entities run{{"sub", subject.id}};
  fs::path folder = deriv / ("sub-" + subject.id);
  if (layout.sessions > 0) {
    run.emplace_back("ses", two_digits(s + 1));
    folder /= "ses-" + two_digits(s + 1);
  }
  folder /= "func";
  run.emplace_back("task", kTask);
  Entities bold_entities = run;
  bold_entities.emplace_back("space", kSpace);
  bold_entities.emplace_back("desc", "preproc");
  Entities confound_entities = run;
  confound_entities.emplace_back("desc", "confounds");

  std::vector<double> global;
  const io::NiftiImage bold = run_image(grid, model, baseline, series, stream_seed(run_plan.subjects[i].seed, 1), global);
  const fs::path image = folder / bids_name(bold_entities, "bold", ".nii.gz");
  w.image(image, bold);
  w.json(folder / bids_name(bold_entities, "bold", ".json"),
         {{"RepetitionTime", model.sampling_interval}, {"TaskName", kTask},
          {"Description", std::string("Preprocessed resting-state run. ") + kInvented}});
  const Confounds conf = make_confounds(global, model.frames, stream_seed(run_plan.subjects[i].seed, 2));
  const fs::path confounds = folder / bids_name(confound_entities, "timeseries", ".tsv");
  w.text(confounds, confounds_tsv(conf));
  w.json(folder / bids_name(confound_entities, "timeseries", ".json"), confounds_sidecar(conf));
  return subject.id + "\t" + subject.group + "\t" + image.generic_string() + "\t" + atlas.image.generic_string() +
         "\t" + atlas.labels.generic_string() + "\t" + confounds.generic_string() + "\t" +
         io::format_double(subject.age) + "\n";
}

// Dataset-level files: the raw root holds no images (only its description and the
// participants), the derivatives say what generated them; manifests, config and model.
void write_dataset_files(Writer& w, const fs::path& deriv, const Grid& grid, const simulate::CohortModel& model,
                         const simulate::CohortPlan& plan, const BidsStudyOptions& layout, const Json& config,
                         const std::string& participants, const std::vector<std::string>& manifests) {
  Json groups = Json::object();
  for (const auto& g : model.groups) groups[g.name] = "Invented group '" + g.name + "' of the demo study";
  const Json participants_sidecar = {
      {"group", {{"Description", "Group of the demo study (invented)"}, {"Levels", groups}}},
      {"age", {{"Description", "Age (invented, unrelated to the signals)"}, {"Units", "year"}}}};
  for (const fs::path& base : {fs::path(), deriv}) {
    w.text(base / "participants.tsv", participants);
    w.json(base / "participants.json", participants_sidecar);
  }
  w.json("dataset_description.json", {{"Name", "critplex demo study (invented data)"},
                                      {"BIDSVersion", kBidsVersion},
                                      {"DatasetType", "raw"}});
  w.json(deriv / "dataset_description.json",
         {{"Name", "critplex demo study, preprocessed (invented data)"},
          {"BIDSVersion", kBidsVersion},
          {"DatasetType", "derivative"},
          {"GeneratedBy", Json::array({{{"Name", kPipeline}, {"Version", CRITPLEX_VERSION_STRING}, {"Description", kInvented}}})}});
  w.text("README", std::string("critplex demo study\n\n") + kInvented +
                       "\nThe images under derivatives/ are written by `critplex simulate --layout bids`.\n"
                       "Research software, not a medical device: not for clinical decisions.\n");
  std::string ignore = "model.json\ncohort_config.json\n";
  for (std::size_t s = 0; s < manifests.size(); ++s) {
    const std::string name = layout.sessions > 0 ? "manifest_ses-" + two_digits(s + 1) + ".tsv" : "manifest.tsv";
    w.text(name, manifests[s]);
    ignore += name + "\n";
  }
  w.text(".bidsignore", ignore);
  w.json("cohort_config.json", config);
  Json model_doc = model_document(model, plan);
  model_doc["layout"] = {{"layout", "bids"}, {"sessions", layout.sessions}, {"block", layout.block},
                         {"voxel_mm", kVoxelMm}, {"amplitude", kAmplitude}, {"voxel_noise_sd", kVoxelNoise},
                         {"grid", grid.dims}};
  w.json("model.json", model_doc);
}

void write_layout(Writer& w, const simulate::CohortModel& model, const simulate::CohortPlan& plan,
                  const BidsStudyOptions& layout, const Json& config) {
  const fs::path deriv = fs::path("derivatives") / kPipeline;
  const Grid grid = make_grid(model.regions, layout.block);
  const AtlasFiles atlas = write_atlas(w, deriv, grid, model, plan);

  // Baselines per region, shared by every subject (drawn from the study seed).
  std::vector<double> baseline(model.regions);
  {
    Random random(stream_seed(model.seed, 0));
    for (auto& b : baseline) b = 600.0 + 600.0 * random.uniform();
  }

  const std::size_t sessions = std::max<std::size_t>(layout.sessions, 1);
  std::vector<std::string> manifests(sessions, "subject\tgroup\timage\tlabels\tlabel_names\tconfounds\tage\n");
  std::string participants = "participant_id\tgroup\tage\n";
  for (std::size_t i = 0; i < plan.subjects.size(); ++i) {
    const auto& subject = plan.subjects[i];
    participants += "sub-" + subject.id + "\t" + subject.group + "\t" + io::format_double(subject.age) + "\n";
    for (std::size_t s = 0; s < sessions; ++s)
      manifests[s] += write_run(w, deriv, grid, atlas, model, plan, layout, baseline, i, s);
  }
  write_dataset_files(w, deriv, grid, model, plan, layout, config, participants, manifests);
}

}  // namespace

Json write_bids_study(const simulate::CohortModel& model, const BidsStudyOptions& layout, Json config,
                      const std::string& dir) {
  if (dir.empty()) fail(ErrorKind::argument, "simulate: the output folder is empty");
  const simulate::CohortPlan plan = simulate::plan_cohort(model);
  fs::path target = fs::path(dir).lexically_normal();
  if (!target.has_filename()) target = target.parent_path();  // "D/" -> "D"
  std::error_code ec;
  if (fs::exists(target, ec) && !(fs::is_directory(target, ec) && fs::is_empty(target, ec)))
    fail(ErrorKind::io, "'" + dir + "' exists and is not an empty folder (the bids layout writes a new dataset)");
  if (!target.parent_path().empty()) io::make_folders(target.parent_path().string());
  Writer w;
  w.root = target;
  w.root += ".partial-" + std::to_string(::getpid());
  fs::remove_all(w.root, ec);
  try {
    io::make_folders(w.root.string());
    write_layout(w, model, plan, layout, config);
    if (fs::exists(target, ec)) fs::remove(target);
    fs::rename(w.root, target);
  } catch (const fs::filesystem_error& e) {
    fs::remove_all(w.root, ec);
    fail(ErrorKind::io, "simulate: cannot write '" + dir + "': " + e.what());
  } catch (...) {
    fs::remove_all(w.root, ec);
    throw;
  }
  const std::string root = target.string();
  const std::string deriv = root + "/derivatives/" + kPipeline;
  Json manifests = Json::array();
  if (layout.sessions == 0) manifests.push_back(root + "/manifest.tsv");
  for (std::size_t s = 0; s < layout.sessions; ++s) manifests.push_back(root + "/manifest_ses-" + two_digits(s + 1) + ".tsv");
  return {{"layout", "bids"},
          {"subjects", plan.subjects.size()},
          {"sessions", layout.sessions},
          {"regions", model.regions},
          {"frames", model.frames},
          {"dataset", root},
          {"derivatives", deriv},
          {"atlas", deriv + "/" + atlas_name(".nii.gz")},
          {"atlas_labels", deriv + "/" + atlas_name(".tsv")},
          {"manifest", manifests[0]},
          {"manifests", manifests},
          {"config", root + "/cohort_config.json"},
          {"bytes", w.bytes}};
}

}  // namespace critplex::pipeline
