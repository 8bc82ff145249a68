#include "dataset/group.hpp"

#include <algorithm>
#include <filesystem>
#include <map>
#include <set>
#include <sstream>

#include "base/error.hpp"
#include "dataset/layout.hpp"
#include "dataset/sidecars.hpp"
#include "io/files.hpp"
#include "output/comparison.hpp"
#include "output/format.hpp"
#include "output/subject_record.hpp"
#include "pipeline/compare.hpp"

namespace critplex::dataset {

namespace fs = std::filesystem;

const OptionSection& group_option_section() {
  static const OptionSection section{
      "dataset.group",
      "dataset group options",
      "cpx_dataset_run (level group), critplex dataset DERIVATIVES OUT group",
      "The tidy tables and the group comparison of a dataset's finished runs.",
      {{.key = "compare", .type = "object", .meaning = "options of the group comparison (section compare)"},
       {.key = "compare_session", .type = "string", .default_value = "",
        .meaning = "compare the runs of this session only (needed when participants have several sessions)"}}};
  return section;
}

namespace {

struct RunDocument {
  std::string path, folder;
  Json doc;
  std::string subject, session, task, run, group;
};

std::string cell_or_na(const std::string& s) { return s.empty() ? output::missing : s; }

std::vector<std::string> split_tabs(const std::string& line) {
  std::vector<std::string> cells;
  std::size_t start = 0;
  while (true) {
    const auto tab = line.find('\t', start);
    cells.push_back(line.substr(start, tab == std::string::npos ? std::string::npos : tab - start));
    if (tab == std::string::npos) return cells;
    start = tab + 1;
  }
}

std::vector<RunDocument> find_documents(const std::string& out_dir, const Participants& participants) {
  std::error_code ec;
  if (!fs::is_directory(out_dir, ec)) fail(ErrorKind::io, "'" + out_dir + "' is not a folder");
  std::vector<RunDocument> runs;
  for (const auto& e : fs::recursive_directory_iterator(out_dir)) {
    const std::string name = e.path().filename().string();
    if (!e.is_regular_file() || name.rfind("sub-", 0) != 0 || name.size() < 14 ||
        name.compare(name.size() - 14, 14, "_topology.json") != 0)
      continue;
    RunDocument r;
    r.path = e.path().string();
    r.folder = e.path().parent_path().string();
    try {
      r.doc = Json::parse(io::read_file(r.path));
    } catch (const Json::parse_error& err) {
      fail(ErrorKind::parse, "'" + r.path + "': not valid JSON (" + err.what() + ")");
    }
    if (!r.doc.contains("bids") || !r.doc["bids"].is_object())
      fail(ErrorKind::parse, "'" + r.path + "': not written by the dataset mode (no \"bids\" member)");
    const Json& entities = r.doc["bids"]["entities"];
    r.subject = entities.value("sub", "");
    r.session = entities.value("ses", "");
    r.task = entities.value("task", "");
    r.run = entities.value("run", "");
    r.group = r.doc.value("group", "");
    if (const auto row = participants.rows.find(r.subject); row != participants.rows.end() && row->second.count("group"))
      r.group = row->second.at("group");
    runs.push_back(std::move(r));
  }
  std::sort(runs.begin(), runs.end(), [](const RunDocument& a, const RunDocument& b) { return a.path < b.path; });
  if (runs.empty()) fail(ErrorKind::data, "'" + out_dir + "' holds no finished runs (sub-*/.../*_topology.json); run the participant level first");
  return runs;
}

// Bands of a run in document order: (band name, file label, curves file).
std::vector<std::array<std::string, 3>> bands_of(const RunDocument& r) {
  std::vector<std::array<std::string, 3>> bands;
  const Json& bids = r.doc["bids"];
  for (const auto& b : r.doc.at("bands")) {
    const std::string band = b.value("band", "");
    const std::string label = bids.at("band_labels").at(band);
    const std::string key = band.empty() ? label : band;
    bands.push_back({band, label, r.folder + "/" + bids.at("files").at(key).at("curves.tsv").get<std::string>()});
  }
  return bands;
}

std::string curves_long(const std::vector<RunDocument>& runs) {
  output::Tsv tsv({"subject", "session", "task", "run", "group", "band", "density", "measure", "value"});
  for (const auto& r : runs)
    for (const auto& [band, label, curves] : bands_of(r)) {
      std::istringstream in(io::read_file(curves));
      std::string line;
      std::getline(in, line);
      const auto header = split_tabs(line);
      if (header.empty() || header[0] != "density") fail(ErrorKind::parse, "'" + curves + "': the first column is not density");
      std::size_t number = 1;
      while (std::getline(in, line)) {
        ++number;
        if (line.empty()) continue;
        const auto cells = split_tabs(line);
        if (cells.size() != header.size())
          fail(ErrorKind::parse, "'" + curves + "' line " + std::to_string(number) + ": the row's width differs from the header's");
        for (std::size_t j = 1; j < cells.size(); ++j)  // cells copied as written: exact integers stay exact
          tsv.add({r.subject, cell_or_na(r.session), cell_or_na(r.task), cell_or_na(r.run), cell_or_na(r.group), label,
                   cells[0], header[j], cells[j]});
      }
    }
  return tsv.text();
}

Json curves_long_sidecar(const std::vector<RunDocument>& runs) {
  Json measures = Json::object();
  for (const auto& r : runs)
    for (const auto& c : r.doc.at("bands").at(0).at("curves").items())
      if (c.key() != "density") measures[c.key()] = curve_column_description(c.key())["Description"];
  return {{"Description", "Every run's curves in long form: one row per subject, session, task, run, band, density and measure."},
          {"subject", {{"Description", "Participant label (without sub-)"}}},
          {"session", {{"Description", "Session label (without ses-); n/a when the dataset has no sessions"}}},
          {"task", {{"Description", "Task label"}}},
          {"run", {{"Description", "Run index; n/a when the run has none"}}},
          {"group", {{"Description", "Group from participants.tsv; n/a when none"}}},
          {"band", {{"Description", "Band label, as in the desc- entity of the run's files"}}},
          {"density", curve_column_description("density")},
          {"measure", {{"Description", "Name of the curve (the column of the run's _curves.tsv)"}, {"Levels", measures}}},
          {"value", {{"Description", "Value of the measure at the density; exact integers for counts, chi and Betti numbers; "
                                     "n/a where the engine stopped before that density"}}}};
}

struct Summaries {
  std::string tsv;
  Json sidecar;
  std::map<std::string, std::vector<output::SubjectRecord>> records;  // by band label
};

Summaries summaries(const std::vector<RunDocument>& runs) {
  Summaries s;
  std::vector<std::pair<const RunDocument*, std::string>> rows;  // run, band label
  std::set<std::string> names;
  for (const auto& r : runs)
    for (const auto& [band, label, curves] : bands_of(r)) {
      output::SubjectRecord record = output::read_subject_record(r.path, band);
      record.group = r.group;
      for (const auto& [name, value] : record.summaries) names.insert(name);
      s.records[label].push_back(std::move(record));
      rows.emplace_back(&r, label);
    }
  std::vector<std::string> ordered(names.begin(), names.end());
  std::stable_sort(ordered.begin(), ordered.end(), [](const std::string& a, const std::string& b) {
    return output::summary_rank(a) < output::summary_rank(b);
  });
  std::vector<std::string> header{"subject", "session", "task", "run", "group", "band"};
  header.insert(header.end(), ordered.begin(), ordered.end());
  output::Tsv tsv(header);
  std::map<std::string, std::size_t> seen;
  for (const auto& [r, label] : rows) {
    const output::SubjectRecord& record = s.records[label][seen[label]++];
    std::vector<std::string> row{r->subject, cell_or_na(r->session), cell_or_na(r->task), cell_or_na(r->run),
                                 cell_or_na(r->group), label};
    for (const auto& name : ordered) row.push_back(output::cell(record.summary(name)));
    tsv.add(std::move(row));
  }
  s.tsv = tsv.text();
  s.sidecar = {{"Description", "Per-run summaries of the topology: one row per subject, session, task, run and band. "
                               "n/a where a run has no such value (e.g. chi never reaches zero)."}};
  for (const char* key : {"subject", "session", "task", "run", "group", "band"})
    s.sidecar[key] = {{"Description", std::string("As in curves_long.tsv: ") + key}};
  for (const auto& name : ordered) {
    Json entry = {{"Description", output::summary_label(name)}};
    if (name.find("zero") != std::string::npos && name.find("kappa") == std::string::npos &&
        name.find("forman") == std::string::npos && name.find("null_z") == std::string::npos)
      entry["Units"] = "fraction of region pairs";
    if (name.rfind("beta_", 0) == 0) entry["Units"] = "fraction of region pairs";
    s.sidecar[name] = entry;
  }
  return s;
}

}  // namespace

Json run_group_level(const std::string& derivatives_dir, const std::string& out_dir, const Json& options) {
  SchemaReader r(options, group_option_section());
  Json compare_given = Json::object();
  if (const Json* c = r.raw("compare"); c != nullptr && !c->is_null()) {
    if (!c->is_object()) r.bad("compare", "an object");
    compare_given = *c;
  }
  const std::string compare_session = r.text("compare_session");
  r.finish();
  const pipeline::CompareOptions compare_options = pipeline::parse_compare_options(compare_given);
  const Participants participants = read_participants(derivatives_dir);
  const std::vector<RunDocument> runs = find_documents(out_dir, participants);

  // Every text first, then the files: a failure leaves none of them.
  std::vector<std::pair<std::string, std::string>> files;
  files.emplace_back("curves_long.tsv", curves_long(runs));
  files.emplace_back("curves_long.json", curves_long_sidecar(runs).dump(2) + "\n");
  Summaries s = summaries(runs);
  files.emplace_back("summaries.tsv", s.tsv);
  files.emplace_back("summaries.json", s.sidecar.dump(2) + "\n");

  Json summary = {{"level", "group"}, {"runs", runs.size()}, {"compared", false}};
  const bool has_group = std::find(participants.columns.begin(), participants.columns.end(), "group") != participants.columns.end();
  // The comparison treats runs as independent participants: one run each, so a
  // participant with several sessions or runs would count several times.
  std::map<std::string, std::size_t> runs_of;
  for (const auto& run : runs)
    if (compare_session.empty() || run.session == compare_session) ++runs_of[run.subject];
  std::string repeated;
  for (const auto& [subject, n] : runs_of)
    if (n > 1 && repeated.empty()) repeated = subject + " has " + std::to_string(n) + " runs";
  if (has_group && !repeated.empty()) {
    summary["note"] = "no group comparison: participant " + repeated +
                      " (the comparison takes one run per participant; choose a session with \"compare_session\")";
  } else if (has_group) {
    // The comparison takes one band: the one named in the options, else the first.
    const std::string wanted = compare_options.band;
    std::vector<output::SubjectRecord> records;
    for (const auto& run : runs)
      if (compare_session.empty() || run.session == compare_session)
        records.push_back(output::read_subject_record(run.path, wanted));
    for (auto& rec : records)
      if (const auto row = participants.rows.find(rec.id); row != participants.rows.end()) rec.group = row->second.at("group");
    std::string ungrouped;
    for (const auto& rec : records)
      if ((rec.group.empty() || rec.group == "n/a") && ungrouped.empty()) ungrouped = rec.id;
    // Too few runs for a comparison (e.g. one participant so far) still gives the tables.
    try {
      if (!ungrouped.empty())
        fail(ErrorKind::data, "participant " + ungrouped + " has no group in '" + participants.path + "'");
      const pipeline::Comparison c = pipeline::compare(records, compare_options);
      files.emplace_back("group_tests.tsv", output::group_tests_tsv(c));
      files.emplace_back("group_comparison.json", output::comparison_json(c).dump(1) + "\n");
      summary["compared"] = true;
    } catch (const Error& e) {
      if (e.kind() != ErrorKind::data) throw;
      summary["note"] = std::string("no group comparison: ") + e.what();
    }
  } else if (!has_group) {
    summary["note"] = participants.path.empty() ? "no participants.tsv found: no group comparison"
                                                : "'" + participants.path + "' has no group column: no group comparison";
  }
  const std::string group_dir = out_dir + "/group";
  io::make_folders(group_dir);
  Json written = Json::array();
  for (const auto& [name, text] : files) {
    io::write_file_atomically(group_dir + "/" + name, text);
    written.push_back("group/" + name);
  }
  // A comparison left by an earlier group run would no longer match the tables.
  if (!summary["compared"].get<bool>())
    for (const char* stale : {"group_comparison.json", "group_tests.tsv", "report.html"}) {
      std::error_code ec;
      fs::remove(group_dir + "/" + stale, ec);
    }
  summary["files"] = written;
  return summary;
}

}  // namespace critplex::dataset
