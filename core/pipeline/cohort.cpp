#include "pipeline/cohort.hpp"

#include <sys/stat.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <filesystem>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <chrono>
#include <condition_variable>
#include <mutex>
#include <thread>

#include "base/error.hpp"
#include "io/files.hpp"
#include "output/subject.hpp"

namespace critplex::pipeline {

namespace {

std::string folder_of(const std::string& path) {
  auto slash = path.rfind('/');
  return slash == std::string::npos ? std::string(".") : path.substr(0, slash);
}

std::vector<std::string> split_tabs(const std::string& line) {
  std::vector<std::string> cells;
  std::size_t start = 0;
  while (true) {
    auto pos = line.find('\t', start);
    std::string cell = line.substr(start, pos == std::string::npos ? std::string::npos : pos - start);
    while (!cell.empty() && (cell.back() == '\r' || cell.back() == ' ')) cell.pop_back();
    cells.push_back(cell);
    if (pos == std::string::npos) break;
    start = pos + 1;
  }
  return cells;
}

// The fingerprint stored in a finished subject's document, or "" when there is none.
std::string finished_fingerprint(const std::string& path) {
  struct stat st;
  if (::stat(path.c_str(), &st) != 0) return "";
  try {
    Json doc = parse_json_text(io::read_file(path), path, ErrorKind::parse);
    return doc.at("provenance").at("fingerprint").get<std::string>();
  } catch (const std::exception&) {
    return "";  // unreadable or foreign: recompute
  }
}

// At most `budget` threads for every engine of a sweep (0, "every core", becomes the budget).
void limit_threads(SweepOptions& sweep, int budget) {
  auto limit = [budget](int& threads) { threads = threads == 0 ? budget : std::min(threads, budget); };
  if (sweep.cliques) limit(sweep.cliques->threads);
  if (sweep.homology) limit(sweep.homology->threads);
}

}  // namespace

std::vector<ManifestRow> read_manifest(const std::string& path) {
  std::string text = io::read_file(path);
  if (text.rfind("\xEF\xBB\xBF", 0) == 0) text.erase(0, 3);  // a UTF-8 byte-order mark (spreadsheet exports)
  const std::string base = folder_of(path);
  std::vector<ManifestRow> rows;
  std::vector<std::string> header;
  std::size_t line_no = 0, start = 0;
  std::vector<std::string> ids;  // subject + session, each once
  while (start < text.size()) {
    std::size_t end = text.find('\n', start);
    if (end == std::string::npos) end = text.size();
    std::string line = text.substr(start, end - start);
    start = end + 1;
    ++line_no;
    if (line.find_first_not_of(" \t\r") == std::string::npos || line[0] == '#') continue;
    auto cells = split_tabs(line);
    if (header.empty()) {
      header = cells;
      for (std::size_t c = 0; c < header.size(); ++c)
        for (std::size_t d = 0; d < c; ++d)
          if (header[c] == header[d])
            fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ": column \"" + header[c] +
                                       "\" appears twice (columns " + std::to_string(d + 1) + " and " + std::to_string(c + 1) + ")");
      auto has = [&](const char* name) { return std::find(header.begin(), header.end(), name) != header.end(); };
      if (!has("subject") || !has("group"))
        fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) +
                                   ": the header needs columns \"subject\" and \"group\" (tab-separated)");
      if (!has("timeseries") && !(has("image") && has("labels")))
        fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) +
                                   ": the header needs a \"timeseries\" column (or \"image\" and \"labels\")");
      continue;
    }
    if (cells.size() != header.size())
      fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ": expected " +
                                 std::to_string(header.size()) + " cells, found " + std::to_string(cells.size()));
    ManifestRow row;
    row.line = line_no;
    for (std::size_t c = 0; c < header.size(); ++c) {
      const std::string& key = header[c];
      const std::string& value = cells[c];
      auto as_path = [&](const std::string& p) { return p.empty() || p[0] == '/' ? p : base + "/" + p; };
      if (key == "subject") row.subject = value;
      else if (key == "session") row.session = value == "n/a" ? "" : value;
      else if (key == "group") row.group = value;
      else if (key == "timeseries") row.timeseries = as_path(value);
      else if (key == "confounds") row.confounds = value == "n/a" ? "" : as_path(value);
      else if (key == "image") row.image = as_path(value);
      else if (key == "labels") row.labels = as_path(value);
      else if (key == "label_names") row.label_names = value == "n/a" ? "" : as_path(value);
      else {
        if (value == "n/a" || value.empty()) {
          row.covariates[key] = nullptr;
          continue;
        }
        char* stop = nullptr;
        double v = std::strtod(value.c_str(), &stop);
        if (stop == value.c_str() || *stop != '\0' || !std::isfinite(v))
          fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ", column \"" + key +
                                     "\": covariate '" + value + "' is not a number (use n/a for missing)");
        row.covariates[key] = v;
      }
    }
    if (row.subject.empty()) fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ": empty subject id");
    if (row.group.empty()) fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ": empty group");
    const std::string key = row.subject + "\t" + row.session;
    if (std::find(ids.begin(), ids.end(), key) != ids.end())
      fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(line_no) + ": subject '" + row.subject + "'" +
                                 (row.session.empty() ? "" : " session '" + row.session + "'") + " appears twice");
    ids.push_back(key);
    rows.push_back(std::move(row));
  }
  if (header.empty()) fail(ErrorKind::parse, "'" + path + "' is empty");
  if (rows.empty()) fail(ErrorKind::parse, "'" + path + "' lists no subjects");
  return rows;
}

const OptionSection& cohort_option_section() {
  static const OptionSection section{
      "cohort",
      "cohort options",
      "cpx_cohort_run, critplex cohort --workers/--force",
      "How a cohort run uses the machine and what it redoes.",
      {{.key = "workers", .type = "integer", .default_value = 0, .default_note = "0 = one per core", .min = 0, .max = 256,
        .meaning = "subjects run at once; each engine of a subject then gets at most cores / workers threads"},
       {.key = "force", .type = "boolean", .default_value = false,
        .meaning = "recompute subjects whose inputs, options and version are unchanged since their last run"}}};
  return section;
}

CohortOptions parse_cohort_options(const Json& options) {
  SchemaReader r(options, cohort_option_section());
  CohortOptions o;
  o.workers = static_cast<int>(r.integer("workers"));
  o.force = r.boolean("force");
  r.finish();
  return o;
}

CohortSummary run_cohort(const std::string& manifest_path, const Json& config, const std::string& out_dir,
                         const CohortOptions& options, const ProgressFn& progress) {
  const auto started = std::chrono::steady_clock::now();
  const auto rows = read_manifest(manifest_path);
  if (!config.is_object()) fail(ErrorKind::argument, "cohort config must be a JSON object");
  for (const char* key : {"id", "session", "group", "timeseries", "image", "labels", "confounds", "covariates"})
    if (config.contains(key))
      fail(ErrorKind::argument, std::string("cohort config: \"") + key + "\" comes from the manifest, not the config");

  // Every subject's config is checked before anything runs, so a typo fails fast.
  std::vector<SubjectConfig> configs;
  for (const auto& row : rows) {
    Json c = config;
    c["id"] = row.subject;
    if (!row.session.empty()) c["session"] = row.session;
    c["group"] = row.group;
    if (!row.timeseries.empty()) c["timeseries"] = row.timeseries;
    if (!row.image.empty()) c["image"] = row.image;
    if (!row.labels.empty()) c["labels"] = row.labels;
    if (!row.label_names.empty()) {
      if (config.contains("label_names"))
        fail(ErrorKind::argument, "cohort config: \"label_names\" is given both in the config and in the manifest's column");
      c["label_names"] = row.label_names;
    }
    if (!row.confounds.empty()) c["confounds"] = row.confounds;
    c["covariates"] = row.covariates;
    // Input files named by the manifest must be readable files before any subject runs.
    for (const std::string* file : {&row.timeseries, &row.image, &row.labels, &row.label_names, &row.confounds}) {
      struct stat st;
      if (file->empty()) continue;
      if (::stat(file->c_str(), &st) != 0)
        fail(ErrorKind::io, "'" + manifest_path + "', line " + std::to_string(row.line) + " (subject " + row.subject +
                                "): cannot open '" + *file + "': " + system_error_text(errno));
      if (S_ISDIR(st.st_mode))
        fail(ErrorKind::io, "'" + manifest_path + "', line " + std::to_string(row.line) + " (subject " + row.subject +
                                "): '" + *file + "' is a folder, not a file");
    }
    try {
      configs.push_back(parse_subject_config(c, ""));
    } catch (const Error& e) {
      fail(e.kind(), "'" + manifest_path + "', line " + std::to_string(row.line) + " (subject " + row.subject +
                         "): " + e.what());
    }
  }
  io::make_folders(out_dir);
  io::write_file_atomically(out_dir + "/cohort_config.json", config.dump(1) + "\n");
  io::write_file_atomically(out_dir + "/manifest.tsv", io::read_file(manifest_path));

  const unsigned cores = std::max(1u, std::thread::hardware_concurrency());
  const std::size_t workers =
      std::min<std::size_t>(configs.size(), options.workers > 0 ? static_cast<std::size_t>(options.workers) : cores);

  CohortSummary summary;
  summary.outcomes.resize(configs.size());
  std::atomic<std::size_t> next{0}, finished{0};
  std::atomic<bool> cancelled{false};
  std::mutex mutex;
  std::condition_variable changed;

  // Threads are decided once for the whole run: W subjects side by side, each engine of a
  // subject with at most cores / W threads, so the process never runs more than the cores.
  const int engine_threads = static_cast<int>(std::max<std::size_t>(1, cores / std::max<std::size_t>(workers, 1)));
  for (auto& c : configs) limit_threads(c.sweep, engine_threads);

  auto work = [&]() {
    while (!cancelled) {
      const std::size_t i = next++;
      if (i >= configs.size()) return;
      const SubjectConfig& c = configs[i];
      SubjectOutcome& out = summary.outcomes[i];
      out.subject = c.id;
      out.group = c.group;
      const auto t0 = std::chrono::steady_clock::now();
      try {
        const std::string doc_path = out_dir + "/" + output::subject_prefix(c.id, c.session, "") + "_topology.json";
        const std::string fingerprint = subject_fingerprint(c, input_checksums(c));
        if (!options.force && finished_fingerprint(doc_path) == fingerprint) {
          out.status = "skipped";
        } else {
          auto result = run_subject(c, [&](double) { return cancelled.load(); });
          write_subject_outputs(result, out_dir);
          out.status = "done";
        }
      } catch (const Error& e) {
        if (e.kind() == ErrorKind::cancelled) cancelled = true;
        out.status = "failed";
        out.message = e.what();
      } catch (const std::bad_alloc&) {
        out.status = "failed";
        out.message = "out of memory";
      } catch (const std::exception& e) {
        out.status = "failed";
        out.message = std::string("internal error: ") + e.what();
      }
      out.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      ++finished;
      changed.notify_all();
    }
  };

  std::vector<std::thread> pool;
  for (std::size_t w = 0; w < workers; ++w) pool.emplace_back(work);
  // The calling thread reports progress, so hosts that cannot take callbacks from other
  // threads (R, MATLAB) are safe.
  {
    std::unique_lock<std::mutex> lock(mutex);
    while (finished < configs.size() && !cancelled) {
      changed.wait_for(lock, std::chrono::milliseconds(200));
      if (progress && progress(static_cast<double>(finished) / static_cast<double>(configs.size()))) cancelled = true;
    }
  }
  for (auto& t : pool) t.join();
  if (cancelled) fail(ErrorKind::cancelled, "cohort run cancelled; finished subjects are kept and will be skipped next time");

  for (const auto& o : summary.outcomes) {
    if (o.status == "done") ++summary.done;
    else if (o.status == "skipped") ++summary.skipped;
    else ++summary.failed;
  }
  summary.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  io::write_file_atomically(out_dir + "/cohort_summary.json", cohort_summary_json(summary).dump(1) + "\n");
  return summary;
}

Json cohort_summary_json(const CohortSummary& s) {
  Json subjects = Json::array();
  for (const auto& o : s.outcomes) {
    Json j = {{"subject", o.subject}, {"group", o.group}, {"status", o.status}, {"seconds", o.seconds}};
    if (!o.message.empty()) j["message"] = o.message;
    subjects.push_back(std::move(j));
  }
  return {{"done", s.done}, {"skipped", s.skipped}, {"failed", s.failed}, {"seconds", s.seconds}, {"subjects", subjects}};
}

}  // namespace critplex::pipeline
