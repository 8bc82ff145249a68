#include "dataset/layout.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <sstream>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::dataset {

namespace fs = std::filesystem;

namespace {

bool is_cifti_extension(const std::string& ext) { return ext == ".dtseries.nii" || ext == ".ptseries.nii"; }

bool is_image_extension(const std::string& ext) { return ext == ".nii" || ext == ".nii.gz" || is_cifti_extension(ext); }

// The JSON sidecar: the image's name with .json (BIDS); for CIFTI also .dtseries.json /
// .ptseries.json, which some pipelines write. The first that exists, else the BIDS name.
std::string sidecar_of(const fs::path& func, const BidsName& image) {
  const std::string bids = (func / format_bids_name(image.entities, image.suffix, ".json")).string();
  if (is_cifti_extension(image.extension) && !fs::exists(bids)) {
    const std::string kind = image.extension.substr(0, image.extension.size() - 4);  // ".dtseries"
    const std::string other = (func / format_bids_name(image.entities, image.suffix, kind + ".json")).string();
    if (fs::exists(other)) return other;
  }
  return bids;
}

std::string without_prefix(const std::string& label, const std::string& prefix) {
  return label.rfind(prefix, 0) == 0 ? label.substr(prefix.size()) : label;
}

bool wanted(const std::vector<std::string>& labels, const std::string& label) {
  return labels.empty() || std::find(labels.begin(), labels.end(), label) != labels.end();
}

// The confounds table beside a run: its entities up to the run (not space, res, den or
// desc, which describe the image's resampling and processing), then desc-confounds.
std::string confounds_name(const BidsName& image) {
  Entities kept;
  for (const auto& [key, label] : image.entities)
    if (key != "space" && key != "res" && key != "den" && key != "desc" && key != "hemi") kept.emplace_back(key, label);
  kept.emplace_back("desc", "confounds");
  return format_bids_name(kept, "timeseries", ".tsv");
}

std::string describe(const RunFilter& f) {
  std::string text;
  auto list = [&](const char* what, const std::vector<std::string>& v) {
    if (v.empty()) return;
    text += std::string(text.empty() ? "" : ", ") + what;
    for (const auto& x : v) text += " " + x;
  };
  list("participant", f.participants);
  list("session", f.sessions);
  if (!f.task.empty()) text += std::string(text.empty() ? "" : ", ") + "task " + f.task;
  if (!f.space.empty()) text += std::string(text.empty() ? "" : ", ") + "space " + f.space;
  return text.empty() ? "no filter" : text;
}

}  // namespace

std::vector<Run> find_runs(const std::string& derivatives_dir, RunFilter filter) {
  std::error_code ec;
  if (!fs::is_directory(derivatives_dir, ec)) fail(ErrorKind::io, "'" + derivatives_dir + "' is not a folder");
  for (auto& p : filter.participants) p = without_prefix(p, "sub-");
  for (auto& s : filter.sessions) s = without_prefix(s, "ses-");
  for (const auto& label : filter.participants)
    if (!is_bids_label(label)) fail(ErrorKind::argument, "participant label '" + label + "' must be letters and digits only");
  for (const auto& label : filter.sessions)
    if (!is_bids_label(label)) fail(ErrorKind::argument, "session label '" + label + "' must be letters and digits only");
  std::vector<Run> runs;
  for (const auto& top : fs::directory_iterator(derivatives_dir)) {
    const std::string sub = top.path().filename().string();
    if (!top.is_directory() || sub.rfind("sub-", 0) != 0 || !wanted(filter.participants, sub.substr(4))) continue;
    // sub-<l>/func and sub-<l>/ses-<l>/func
    std::vector<fs::path> func_dirs{top.path() / "func"};
    for (const auto& ses : fs::directory_iterator(top.path()))
      if (ses.is_directory() && ses.path().filename().string().rfind("ses-", 0) == 0) func_dirs.push_back(ses.path() / "func");
    for (const auto& func : func_dirs) {
      if (!fs::is_directory(func, ec)) continue;
      for (const auto& file : fs::directory_iterator(func)) {
        const auto name = parse_bids_name(file.path().filename().string());
        if (!name || name->suffix != "bold" || !is_image_extension(name->extension)) continue;
        // Volumes must say desc-preproc; CIFTI series of preprocessing pipelines often carry no desc.
        const bool cifti = is_cifti_extension(name->extension);
        if (!(name->get("desc") == "preproc" || (cifti && name->get("desc").empty()))) continue;
        if (name->get("sub") != sub.substr(4)) continue;  // a file of another subject in the wrong folder
        if (!filter.sessions.empty() && !wanted(filter.sessions, name->get("ses"))) continue;
        if (!filter.task.empty() && name->get("task") != filter.task) continue;
        if (!filter.space.empty() && name->get("space") != filter.space) continue;
        Run run;
        run.name = *name;
        run.image = file.path().string();
        run.sidecar = sidecar_of(func, *name);
        run.confounds = (func / confounds_name(*name)).string();
        run.folder = fs::relative(func, derivatives_dir).generic_string();
        runs.push_back(std::move(run));
      }
    }
  }
  std::sort(runs.begin(), runs.end(), [](const Run& a, const Run& b) { return a.image < b.image; });
  if (runs.empty())
    fail(ErrorKind::data, "'" + derivatives_dir + "' holds no preprocessed runs (sub-*/[ses-*/]func/*_desc-preproc_bold.nii[.gz], "
                          ".dtseries.nii or .ptseries.nii) matching " + describe(filter));
  return runs;
}

double sidecar_repetition_time(const Run& run) {
  std::error_code ec;
  if (!fs::exists(run.sidecar, ec))
    fail(ErrorKind::io, "'" + run.image + "': its JSON sidecar '" + run.sidecar + "' is missing (it holds RepetitionTime)");
  Json doc;
  try {
    doc = Json::parse(io::read_file(run.sidecar));
  } catch (const Json::parse_error& e) {
    fail(ErrorKind::parse, "'" + run.sidecar + "': not valid JSON (" + e.what() + ")");
  }
  if (!doc.is_object() || !doc.contains("RepetitionTime"))
    fail(ErrorKind::data, "'" + run.sidecar + "': no \"RepetitionTime\"");
  const Json& tr = doc["RepetitionTime"];
  if (!tr.is_number() || !std::isfinite(tr.get<double>()) || tr.get<double>() <= 0)
    fail(ErrorKind::data, "'" + run.sidecar + "': \"RepetitionTime\" must be a positive number of seconds, got " + tr.dump());
  return tr.get<double>();
}

Participants read_participants(const std::string& derivatives_dir) {
  Participants p;
  for (const fs::path& candidate : {fs::path(derivatives_dir) / "participants.tsv",
                                    fs::path(derivatives_dir) / ".." / ".." / "participants.tsv"}) {
    std::error_code ec;
    if (!fs::exists(candidate, ec)) continue;
    p.path = candidate.lexically_normal().string();
    break;
  }
  if (p.path.empty()) return p;
  std::istringstream in(io::read_file(p.path));
  std::string line;
  std::vector<std::string> header;
  std::size_t number = 0;
  auto split = [](const std::string& text) {
    std::vector<std::string> cells;
    std::size_t start = 0;
    while (true) {
      const auto tab = text.find('\t', start);
      cells.push_back(text.substr(start, tab == std::string::npos ? std::string::npos : tab - start));
      if (tab == std::string::npos) return cells;
      start = tab + 1;
    }
  };
  while (std::getline(in, line)) {
    ++number;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty()) continue;
    const auto cells = split(line);
    if (header.empty()) {
      header = cells;
      if (header[0] != "participant_id")
        fail(ErrorKind::parse, "'" + p.path + "' line 1: the first column must be participant_id");
      p.columns.assign(header.begin() + 1, header.end());
      continue;
    }
    if (cells.size() != header.size())
      fail(ErrorKind::parse, "'" + p.path + "' line " + std::to_string(number) + ": " + std::to_string(cells.size()) +
                                 " cells, the header has " + std::to_string(header.size()));
    auto& row = p.rows[without_prefix(cells[0], "sub-")];
    for (std::size_t j = 1; j < cells.size(); ++j) row[header[j]] = cells[j];
  }
  return p;
}

}  // namespace critplex::dataset
