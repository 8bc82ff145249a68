// critplex report DIR: the self-contained HTML report of a cohort comparison.
#include <nlohmann/json.hpp>

#include <ctime>

#include "cli.hpp"

namespace critplex_cli {
namespace {

int run_report(const Args& args) {
  const std::string dir = args.positional[0];
  if (!path_exists(dir + "/group_comparison.json")) {
    // No comparison yet: make one with the defaults first.
    char* text = nullptr;
    check(cpx_cohort_compare(dir.c_str(), nullptr, &text));
    cpx_string_free(text);
  }
  char stamp[32];
  std::time_t now = std::time(nullptr);
  std::tm utc{};
  ::gmtime_r(&now, &utc);  // reentrant form
  std::strftime(stamp, sizeof stamp, "%Y-%m-%d %H:%M UTC", &utc);
  nlohmann::json options = {{"created", stamp}};
  if (auto out = args.value("out")) options["out"] = *out;
  char* path = nullptr;
  check(cpx_cohort_report(dir.c_str(), options.dump().c_str(), &path));
  std::printf("report: %s\n", path);
  cpx_string_free(path);
  return 0;
}

const Registration registration{Command{
    "report",
    "critplex report DIR [--out FILE]",
    "Write the HTML report (inline SVG figures, opens offline) of a cohort comparison.",
    "Uses DIR/group_comparison.json, running 'critplex compare DIR' with default options\n"
    "first when it is missing. Writes DIR/report.html unless --out is given.",
    {{"out", "FILE", "where to write the report (default DIR/report.html)"}},
    1,
    1,
    run_report}};

}  // namespace
}  // namespace critplex_cli
