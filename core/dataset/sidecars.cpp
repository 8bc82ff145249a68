#include "dataset/sidecars.hpp"

#include <filesystem>

#include "io/files.hpp"
#include "output/subject.hpp"
#include "output/sweep.hpp"

namespace critplex::dataset {

namespace fs = std::filesystem;

namespace {

bool starts(const std::string& s, const std::string& prefix) { return s.rfind(prefix, 0) == 0; }

Json column(const std::string& description, const std::string& units = "") {
  Json j = {{"Description", description}};
  if (!units.empty()) j["Units"] = units;
  return j;
}

Json provenance(const pipeline::SubjectResult& r, const std::string& image, const std::string& derivatives_dir) {
  Json sources = Json::array();
  sources.push_back(fs::relative(image, derivatives_dir).generic_string());
  for (const auto& path : {r.config.labels, r.config.label_names, r.config.connect.clean.regressor_table})
    if (!path.empty()) sources.push_back(path);
  return {{"Sources", sources},
          {"GeneratedBy", {{"Name", "critplex"}, {"Version", CRITPLEX_VERSION_STRING}}},
          {"RepetitionTime", r.sampling_interval},
          {"Caution", "Research software, not a medical device: not for clinical decisions."}};
}

Json connectivity_sidecar(const pipeline::BandResult& band, Json doc) {
  doc["Description"] = "Connectivity matrix between regions (symmetric, unit diagonal): one row and one column per region.";
  doc["name"] = column("Region of the row (atlas label name)");
  for (const auto& region : band.matrix.names) doc[region] = column("Connectivity of the row's region with region " + region, "arbitrary");
  doc["Estimator"] = band.matrix.info;
  doc["Band"] = band.band;
  return doc;
}

Json curves_sidecar(const std::vector<output::CurveColumn>& columns, Json doc) {
  doc["Description"] = "Topology of the network as edges enter in order of decreasing weight, one row per grid density. "
                       "Integer columns are exact; n/a where an engine stopped before that density.";
  for (const auto& c : columns) doc[c.name] = curve_column_description(c.name);
  return doc;
}

Json transitions_sidecar(Json doc) {
  doc["Description"] = "Transitions located on the density grid: one row per zero or touch of chi, Betti crossing, "
                       "Betti peak and zero of chi's Erdos-Renyi expectation.";
  doc["kind"] = {{"Description", "Kind of record"},
                 {"Levels", {{"chi_zero", "chi changes sign between two grid points"},
                             {"chi_touch", "chi reaches zero without changing sign"},
                             {"betti_crossing", "beta_k and beta_(k+1) cross"},
                             {"betti_peak", "maximum of beta_k"},
                             {"random_chi_zero", "zero of the expected chi of an Erdos-Renyi graph of the same density"}}}};
  doc["k"] = column("Betti dimension of the record (crossings: the lower one)");
  doc["density"] = column("Density of the transition (linear interpolation between grid points)", "fraction of region pairs");
  doc["direction"] = column("Direction of the sign change or crossing");
  doc["left_density"] = column("Grid density just before the transition", "fraction of region pairs");
  doc["right_density"] = column("Grid density just after the transition", "fraction of region pairs");
  doc["left_value"] = column("Value (chi or Betti difference) at left_density");
  doc["right_value"] = column("Value at right_density");
  doc["value"] = column("Peak value (betti_peak)");
  for (const char* m : {"kappa_mean", "kappa_sd", "kappa_skewness", "kappa_kurtosis", "forman_mean"})
    doc[m] = curve_column_description(m);
  doc["random_graph_nearest_zero"] = column("Nearest zero of the Erdos-Renyi expected chi", "fraction of region pairs");
  return doc;
}

}  // namespace

Json curve_column_description(const std::string& name) {
  const std::string pairs = "fraction of region pairs";
  if (name == "density") return column("Edge density: edges present / (N choose 2)", pairs);
  if (name == "threshold") return column("Weight of the last edge entered (edges of at least this weight are present)");
  if (name == "edges") return column("Number of edges present");
  if (name == "chi") return column("Euler characteristic of the clique complex: sum over k of (-1)^k times the k-cliques counted from single nodes (exact)");
  if (starts(name, "cliques_")) return column("Number of cliques with " + std::to_string(std::stoi(name.substr(8)) + 1) + " nodes (exact)");
  if (starts(name, "betti_")) return column("Betti number of dimension " + name.substr(6) + " of the clique complex over Z/2");
  if (name == "log_abs_chi") return column("Natural logarithm of |chi|; -inf where chi = 0");
  if (name == "gauss_bonnet_error") return column("Relative difference between the sum of node curvatures and chi (a check; 0 when exact)");
  const std::string what = starts(name, "kappa_") ? "node curvature (Gauss-Bonnet, from node clique counts)"
                          : starts(name, "forman_") ? "Forman-Ricci curvature of the edges present" : "";
  if (!what.empty()) {
    const std::string stat = name.substr(name.find('_') + 1);
    return column((stat == "sd" ? "Standard deviation" : stat == "q50" ? "Median" : stat) + std::string(" of the ") + what +
                  " over " + (starts(name, "kappa_") ? "nodes" : "edges"));
  }
  return column(name);
}

std::vector<Product> product_files(const pipeline::SubjectResult& r, const pipeline::BandResult& band,
                                   const std::string& image, const std::string& derivatives_dir) {
  const Json base = provenance(r, image, derivatives_dir);
  std::vector<Product> files;
  files.push_back({"connectivity", ".tsv", io::format_matrix(band.matrix, "tsv")});
  files.push_back({"connectivity", ".json", connectivity_sidecar(band, base).dump(2) + "\n"});
  const auto columns = output::curve_columns(band.sweep);
  files.push_back({"curves", ".tsv", output::curves_tsv(columns)});
  files.push_back({"curves", ".json", curves_sidecar(columns, base).dump(2) + "\n"});
  if (band.sweep.transitions) {
    files.push_back({"transitions", ".tsv", output::transitions_tsv(*band.sweep.transitions, band.sweep.densities())});
    files.push_back({"transitions", ".json", transitions_sidecar(base).dump(2) + "\n"});
  }
  return files;
}

Json dataset_description(const std::string& derivatives_dir, const ParticipantOptions& o) {
  Json options = {{"atlas", o.atlas}, {"atlas_labels", o.atlas_labels}, {"atlas_label", o.atlas_label}, {"config", o.config}};
  fs::path source = fs::absolute(derivatives_dir).lexically_normal();
  if (!source.has_filename()) source = source.parent_path();  // "D/derivatives/x/" -> ".../x"
  return {{"Name", "critplex network topology of " + source.filename().string()},
          {"BIDSVersion", bids_version},
          {"DatasetType", "derivative"},
          {"GeneratedBy", Json::array({{{"Name", "critplex"},
                                        {"Version", CRITPLEX_VERSION_STRING},
                                        {"Description", "Connectivity, clique counts, Euler characteristic, Betti curves, "
                                                        "curvature and transitions of each run's functional network"},
                                        {"Configuration", options}}})},
          {"SourceDatasets", Json::array({{{"URL", "file://" + source.string()}}})},
          {"Caution", "Research software, not a medical device: not for clinical decisions."}};
}

}  // namespace critplex::dataset
