#include "output/subject.hpp"

#include <cctype>
#include <cmath>

#include "io/files.hpp"
#include "output/format.hpp"
#include "output/sweep.hpp"

namespace critplex::output {

std::string subject_prefix(const std::string& id, const std::string& session, const std::string& band) {
  std::string p = "sub-" + id;
  if (!session.empty()) p += "_ses-" + session;
  if (!band.empty()) {
    std::string safe;
    for (char c : band) safe.push_back(std::isalnum(static_cast<unsigned char>(c)) ? c : '-');
    p += "_band-" + safe;
  }
  return p;
}

Json null_json(const pipeline::NullResult& n) {
  Json j = {{"model", n.spec.model}, {"count", n.spec.count}, {"seed", n.spec.seed}};
  Json first;
  first["values"] = numbers_or_null(n.first_zeros);
  first["with_zero"] = n.with_zero();
  first["observed"] = number_or_null(n.observed_first);
  first["mean"] = number_or_null(n.mean());
  first["sd"] = number_or_null(n.sd());
  first["z"] = number_or_null(n.z());
  first["min_draws_for_z"] = n.spec.min_draws_for_z;
  first["percentile"] = number_or_null(n.percentile());
  first["percentile_resolution"] = number_or_null(n.percentile_resolution());
  first["warning"] = n.warning().empty() ? Json(nullptr) : Json(n.warning());
  j["first_chi_zero"] = std::move(first);
  j["mean_chi"] = numbers_or_null(n.mean_chi);
  Json details = Json::object();
  if (n.spec.model == "rewire" || n.spec.model == "rewire_nested") {
    details["swaps_per_edge"] = n.spec.rewire_swaps_per_edge;
    details["incomplete_rewirings"] = n.incomplete_rewirings;
  } else if (n.spec.model == "iaaft") {
    details["iaaft_iterations"] = n.spec.iaaft_iterations;
  }
  j["details"] = std::move(details);
  return j;
}

Json resolved_config_json(const pipeline::SubjectConfig& c) {
  Json j;
  j["sweep"] = sweep_options_json(c.sweep);
  j["null"] = Json{{"model", c.null.model}, {"count", c.null.count}, {"seed", c.null.seed},
                   {"iaaft_iterations", c.null.iaaft_iterations}, {"rewire_swaps_per_edge", c.null.rewire_swaps_per_edge},
                   {"min_draws_for_z", c.null.min_draws_for_z}};
  if (c.null.max_density) j["null"]["max_density"] = *c.null.max_density;
  return j;
}

Json subject_document(const pipeline::SubjectResult& r) {
  Json doc;
  doc["kind"] = "critplex subject result";
  doc["format_version"] = 1;
  doc["subject"] = r.config.id;
  if (!r.config.session.empty()) doc["session"] = r.config.session;
  doc["group"] = r.config.group;
  doc["covariates"] = r.config.covariates;
  doc["series"] = {{"frames", r.frames}, {"regions", r.regions}};
  doc["series"]["sampling_interval"] = number_or_null(r.sampling_interval);
  Json bands = Json::array();
  for (const auto& b : r.bands) {
    Json entry;
    entry["band"] = b.band;
    entry["connectivity"] = b.matrix.info;
    entry["sweep"] = sweep_json(b.sweep);
    entry["curves"] = curves_json(curve_columns(b.sweep));
    entry["null"] = b.null ? null_json(*b.null) : Json(nullptr);
    bands.push_back(std::move(entry));
  }
  doc["bands"] = std::move(bands);
  doc["provenance"] = {{"critplex_version", CRITPLEX_VERSION_STRING},
                       {"config", r.config.original},
                       {"connect_options", r.config.connect_given},
                       {"inputs", r.checksums},
                       {"fingerprint", r.fingerprint},
                       {"null_seed", r.config.null.seed}};
  doc["caution"] = "Research software, not a medical device: not for clinical decisions.";
  return doc;
}

std::vector<NamedText> subject_files(const pipeline::SubjectResult& r) {
  std::vector<NamedText> files;
  for (const auto& b : r.bands) {
    const std::string prefix = subject_prefix(r.config.id, r.config.session, b.band);
    files.push_back({prefix + "_connectivity.tsv", io::format_matrix(b.matrix, "tsv")});
    files.push_back({prefix + "_curves.tsv", curves_tsv(curve_columns(b.sweep))});
    if (b.sweep.transitions)
      files.push_back({prefix + "_transitions.tsv", transitions_tsv(*b.sweep.transitions, b.sweep.densities())});
  }
  files.push_back({subject_prefix(r.config.id, r.config.session, "") + "_topology.json", subject_document(r).dump(1) + "\n"});
  return files;
}

}  // namespace critplex::output
