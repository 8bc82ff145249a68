// A subject's typed result as files: the subject document (JSON) and, per band, the
// connectivity matrix, the curves and the transitions records as TSV.
#pragma once

#include <string>
#include <vector>

#include "base/options.hpp"
#include "pipeline/subject.hpp"

namespace critplex::output {

struct NamedText {
  std::string name;  // file name, without folder
  std::string text;
};

// File name prefix of a subject's outputs: "sub-<id>" (+ "_ses-<session>") (+ "_band-<name>").
std::string subject_prefix(const std::string& id, const std::string& session, const std::string& band);

// The subject document: subject, group, covariates, series, bands (connectivity,
// sweep, curves, null), provenance (version, config as given and as resolved, inputs
// with checksums, fingerprint), caution.
Json subject_document(const pipeline::SubjectResult& result);
Json null_json(const pipeline::NullResult& null);
// The subject config as resolved: every option with its default filled in.
Json resolved_config_json(const pipeline::SubjectConfig& config);

// Every file of a subject, serialised, in the order they are written: per band the
// TSVs, then the document last.
std::vector<NamedText> subject_files(const pipeline::SubjectResult& result);

}  // namespace critplex::output
