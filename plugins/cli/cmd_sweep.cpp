// critplex sweep MATRIX: the density filtration and its curves.
#include <nlohmann/json.hpp>

#include <memory>

#include "cli.hpp"

namespace critplex_cli {
namespace {

int run_sweep(const Args& args) {
  const std::string input = args.positional[0];
  const auto out = args.value("out");
  if (!out) throw Failure("--out FILE is required", 2);
  const std::string format = output_format(args, *out, {"tsv", "json"});

  nlohmann::json options = nlohmann::json::object();
  if (auto opts = args.value("options")) {
    options = parse_json_input(*opts, "--options");
    if (!options.is_object()) throw Failure("--options must be a JSON object", 2);
  }
  if (args.has("max-density")) options["max_density"] = args.number("max-density", 1.0);
  if (auto w = args.value("weights")) options["weights"] = *w;
  if (auto g = args.value("grid")) {
    if (*g == "every") options["grid"] = "every";
    else options["grid"] = args.number("grid", 0.01);
  }

  // --betti K: persistence barcodes and Betti curves in dimensions 0..K (homology engine).
  if (args.has("betti")) {
    if (!options.contains("homology") || !options["homology"].is_object()) options["homology"] = nlohmann::json::object();
    options["homology"]["max_dimension"] = args.integer("betti", 2);
  }

  // --curvature: node and edge curvature on the grid (the transitions come with chi anyway).
  if (args.has("curvature") && !options.contains("curvature")) options["curvature"] = nlohmann::json::object();
  // Clique engine flags fill the "cliques" section (flags win over --options).
  if (args.has("max-dimension") || args.has("max-work") || args.has("max-seconds") || args.has("threads") || args.has("chi-only")) {
    if (!options.contains("cliques") || !options["cliques"].is_object()) options["cliques"] = nlohmann::json::object();
    auto& c = options["cliques"];
    if (args.has("max-dimension")) c["max_dimension"] = args.integer("max-dimension", -1);
    if (args.has("max-work")) c["max_work"] = args.number("max-work", 0);
    if (args.has("max-seconds")) c["max_seconds"] = args.number("max-seconds", 0);
    if (args.has("threads")) c["threads"] = args.integer("threads", 0);
    if (args.has("chi-only")) c["chi_only"] = true;
  }
  const auto transitions_out = args.value("transitions-out");

  nlohmann::json read_options = nlohmann::json::object();
  if (auto f = args.value("input-format")) read_options["format"] = *f;

  cpx_matrix* raw_matrix = nullptr;
  check(cpx_matrix_read(input.c_str(), read_options.dump().c_str(), &raw_matrix));
  std::unique_ptr<cpx_matrix, decltype(&cpx_matrix_free)> matrix(raw_matrix, cpx_matrix_free);

  void* bar = progress_state("sweep");
  cpx_sweep* raw_sweep = nullptr;
  cpx_status status = cpx_sweep_run(matrix.get(), options.dump().c_str(), progress_bar_if_terminal(), bar, &raw_sweep);
  progress_done(bar);
  check(status);
  std::unique_ptr<cpx_sweep, decltype(&cpx_sweep_free)> sweep(raw_sweep, cpx_sweep_free);

  char* text = nullptr;
  check(format == "json" ? cpx_sweep_json(sweep.get(), &text) : cpx_sweep_curves_tsv(sweep.get(), &text));
  std::string body(text);
  cpx_string_free(text);
  if (format == "json") body += "\n";
  std::string transitions_tsv;
  if (transitions_out) {
    char* summary = nullptr;
    check(cpx_sweep_transitions_tsv(sweep.get(), &summary));
    transitions_tsv = summary;
    cpx_string_free(summary);
  }
  std::vector<std::string> outputs{*out};
  if (transitions_out) outputs.push_back(*transitions_out);
  refuse_overwriting_inputs({input}, outputs);
  for (const auto& o : outputs) output_target(o);  // both refused or fine before either is written
  write_file_atomically(*out, body);
  if (transitions_out) write_file_atomically(*transitions_out, transitions_tsv);
  return 0;
}

const Registration registration{Command{
    "sweep",
    "critplex sweep MATRIX --out FILE [options]",
    "Run the density filtration of a connectivity matrix and write its curves.",
    "MATRIX is what 'critplex connect' writes, or any square symmetric matrix in TSV,\n"
    "CSV, whitespace text or NPY, with or without a header row (and first column) of\n"
    "names. Edges enter from the strongest down; curves are reported on the grid.\n"
    "Without --max-density a network of more than 100 regions gets each engine's default\n"
    "range (chi to 0.5, every clique size to 0.1, Betti curves to 0.3; docs/options.md);\n"
    "with it, every engine runs to that density.",
    {{"out", "FILE", "output file (required); .tsv (curves) or .json (everything)"},
     {"format", "FMT", "tsv or json (default: from the --out extension)"},
     {"max-density", "RHO", "stop the filtration at this edge density (default 1)"},
     {"weights", "MODE", "positive (default), absolute or negative"},
     {"grid", "STEP", "density step of the reporting grid (default 0.01), or 'every'"},
     {"input-format", "FMT", "tsv, csv, text or npy (default: from the MATRIX extension)"},
     {"betti", "K", "also barcodes and Betti curves betti_0..betti_K (K = 2 is usual)"},
     {"curvature", "", "also node (Gauss-Bonnet) and edge (Forman-Ricci) curvature on the grid"},
     {"transitions-out", "FILE", "also write the transitions summary (chi zeros, Betti crossings, ...) as TSV"},
     {"max-dimension", "K", "count cliques only up to dimension K (chi is then exact only until a larger clique forms)"},
     {"max-work", "W", "stop after about W pivoting-tree nodes; the result says up to which density it is complete"},
     {"max-seconds", "S", "stop the clique counts after S seconds of wall time; what is complete is kept and marked"},
     {"threads", "T", "threads for the clique counts (default: all cores; results do not depend on it)"},
     {"chi-only", "", "only the Euler characteristic (much faster; columns chi, cliques_0, cliques_1)"},
     {"options", "JSON", "sweep options as a JSON object (docs/options.md: sweep)"}},
    1,
    1,
    run_sweep}};

}  // namespace
}  // namespace critplex_cli
