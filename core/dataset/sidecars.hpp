// The texts of the dataset mode's outputs besides the engines' own tables: per band the
// products (connectivity, curves, transitions TSVs) each with a JSON sidecar describing
// its columns (BIDS tabular sidecars: one key per column with Description and Units) and
// its provenance, and the derivatives' dataset_description.json.
#pragma once

#include <string>
#include <vector>

#include "base/options.hpp"
#include "dataset/participant.hpp"
#include "pipeline/subject.hpp"

namespace critplex::dataset {

struct Product {
  std::string suffix;     // "connectivity", "curves", "transitions"
  std::string extension;  // ".tsv" or ".json"
  std::string text;
};

// The band's TSVs and their sidecars (the transitions table only when the sweep located
// transitions). `image` is the run's image (named in the sidecars relative to the
// derivatives folder).
std::vector<Product> product_files(const pipeline::SubjectResult& result, const pipeline::BandResult& band,
                                   const std::string& image, const std::string& derivatives_dir);

// Description of a curves column by its name (density, chi, cliques_k, betti_k, kappa_*,
// forman_*, ...): {"Description", optionally "Units"}.
Json curve_column_description(const std::string& name);

// OUT/dataset_description.json: Name, BIDSVersion, DatasetType derivative, GeneratedBy
// (critplex with its version and the options it ran with), SourceDatasets.
Json dataset_description(const std::string& derivatives_dir, const ParticipantOptions& options);

// The BIDS version whose naming rules the outputs follow (the atlas- entity is in the
// specification from 1.10).
inline constexpr const char* bids_version = "1.10.0";

}  // namespace critplex::dataset
