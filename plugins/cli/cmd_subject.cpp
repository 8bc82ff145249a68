// critplex subject CONFIG.json --out DIR: one subject from time series to topology.
#include <nlohmann/json.hpp>

#include <fstream>
#include <sstream>

#include "cli.hpp"

namespace critplex_cli {
namespace {

std::string read_text(const std::string& path) {
  std::ifstream in(path);
  if (!in) throw Failure("cannot open '" + path + "'");
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

nlohmann::json parse_json_arg(const std::string& text, const std::string& what) {
  auto j = parse_json_input(text, what);
  if (!j.is_object()) throw Failure(what + " must be a JSON object", 2);
  return j;
}

int run_subject(const Args& args) {
  const auto out = args.value("out");
  if (!out) throw Failure("--out DIR is required", 2);
  nlohmann::json config = nlohmann::json::object();
  if (!args.positional.empty()) {
    const std::string path = args.positional[0];
    config = parse_json_arg(read_text(path), "'" + path + "'");
    // Relative paths in a config file are relative to the file's folder.
    if (!config.contains("base_dir")) {
      auto slash = path.rfind('/');
      config["base_dir"] = slash == std::string::npos ? "." : path.substr(0, slash);
    }
  }
  if (auto v = args.value("id")) config["id"] = *v;
  if (auto v = args.value("group")) config["group"] = *v;
  if (auto v = args.value("timeseries")) config["timeseries"] = *v;
  if (auto v = args.value("confounds")) config["confounds"] = *v;
  if (auto v = args.value("connect")) config["connect"] = parse_json_arg(*v, "--connect");
  if (auto v = args.value("sweep")) config["sweep"] = parse_json_arg(*v, "--sweep");
  if (auto v = args.value("null")) config["null"] = nlohmann::json{{"model", *v}};

  void* bar = progress_state("subject");
  char* doc = nullptr;
  cpx_status status = cpx_subject_run(config.dump().c_str(), out->c_str(), progress_bar_if_terminal(), bar, &doc);
  progress_done(bar);
  check(status);
  auto parsed = nlohmann::json::parse(doc);
  cpx_string_free(doc);
  std::printf("subject %s: %zu band(s) written to %s\n", parsed["subject"].get<std::string>().c_str(),
              parsed["bands"].size(), out->c_str());
  return 0;
}

const Registration registration{Command{
    "subject",
    "critplex subject [CONFIG.json] --out DIR [options]",
    "Run one subject from time series to curves, curvature, transitions and null model.",
    "CONFIG.json holds the subject config (docs/options.md: subject); flags override its\n"
    "keys. Writes sub-<id>_topology.json (everything, with provenance) and TSV twins\n"
    "(connectivity, curves, transitions) into DIR, each file atomically.",
    {{"out", "DIR", "output folder (required; created when missing)"},
     {"id", "ID", "subject id (letters, digits, '-', '.')"},
     {"group", "NAME", "group label carried into the outputs"},
     {"timeseries", "FILE", "regional time series (TSV, CSV, text or NPY)"},
     {"confounds", "FILE", "confounds table (TSV with header)"},
     {"connect", "JSON", "connect options (docs/options.md: connect)"},
     {"sweep", "JSON", "sweep options (docs/options.md: sweep)"},
     {"null", "MODEL", "none, phase_multivariate, phase_independent, iaaft or rewire"}},
    0,
    1,
    run_subject}};

}  // namespace
}  // namespace critplex_cli
