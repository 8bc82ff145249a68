#include "dataset/layout.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>
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

// JSON files of a folder with BIDS names, listed once per folder (the dataset's root may
// hold thousands of entries and every run looks there).
class SidecarIndex {
 public:
  const std::vector<std::pair<BidsName, std::string>>& in(const fs::path& folder) {
    auto [it, added] = cache_.try_emplace(folder.string());
    std::error_code ec;
    if (added && fs::is_directory(folder, ec))
      for (const auto& e : fs::directory_iterator(folder)) {
        const auto name = parse_bids_name(e.path().filename().string());
        if (name && e.is_regular_file() && name->extension == ".json") it->second.emplace_back(*name, e.path().string());
      }
    return it->second;
  }

 private:
  std::map<std::string, std::vector<std::pair<BidsName, std::string>>> cache_;
};

// BIDS "The Inheritance Principle": a sidecar applies to a data file when it sits in the
// file's folder or above it, has the same suffix and its entities are a subset of the
// file's. Returned top level first and, within a level, fewer entities first, so that
// later files override earlier ones; the sidecar beside the file (`own`) is left out.
std::vector<std::string> inherited_sidecars(SidecarIndex& index, const std::vector<fs::path>& levels,
                                            const BidsName& image, const std::string& own) {
  std::vector<std::string> found;
  for (const auto& level : levels) {
    std::vector<std::pair<std::size_t, std::string>> here;
    for (const auto& [name, path] : index.in(level)) {
      if (name.suffix != image.suffix || path == own) continue;
      const bool subset = std::all_of(name.entities.begin(), name.entities.end(), [&](const auto& e) {
        return image.get(e.first) == e.second;
      });
      if (subset) here.emplace_back(name.entities.size(), path);
    }
    std::sort(here.begin(), here.end());
    for (auto& h : here) found.push_back(std::move(h.second));
  }
  return found;
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
  SidecarIndex sidecars;
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
        std::vector<fs::path> levels{fs::path(derivatives_dir), top.path()};
        if (func.parent_path() != top.path()) levels.push_back(func.parent_path());  // ses-<l>
        levels.push_back(func);
        run.inherited = inherited_sidecars(sidecars, levels, *name, run.sidecar);
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

RepetitionTime sidecar_repetition_time(const Run& run) {
  std::vector<std::string> files = run.inherited;
  if (fs::exists(run.sidecar)) files.push_back(run.sidecar);
  if (files.empty())
    fail(ErrorKind::io, "'" + run.image + "': its JSON sidecar '" + run.sidecar +
                            "' is missing (it holds RepetitionTime), and no sidecar higher in the dataset applies");
  RepetitionTime tr;
  const Json* value = nullptr;
  Json doc;
  for (const auto& file : files) {  // the last file naming RepetitionTime wins
    Json d;
    try {
      d = Json::parse(io::read_file(file));
    } catch (const Json::parse_error& e) {
      fail(ErrorKind::parse, "'" + file + "': not valid JSON (" + e.what() + ")");
    }
    if (d.is_object() && d.contains("RepetitionTime")) {
      doc = std::move(d);
      value = &doc["RepetitionTime"];
      tr.source = file;
    }
  }
  if (value == nullptr) fail(ErrorKind::data, "'" + files.back() + "': no \"RepetitionTime\" (nor in a sidecar it inherits from)");
  if (!value->is_number() || !std::isfinite(value->get<double>()) || value->get<double>() <= 0)
    fail(ErrorKind::data, "'" + tr.source + "': \"RepetitionTime\" must be a positive number of seconds, got " + value->dump());
  tr.seconds = value->get<double>();
  return tr;
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
