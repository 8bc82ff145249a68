// Dataset mode: a BIDS derivatives folder, participant or group level.
#include <cstring>

#include "dataset/group.hpp"
#include "dataset/participant.hpp"
#include "guard.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_dataset_run(const char* derivatives_dir, const char* out_dir, const char* level, const char* options_json,
                           cpx_progress_fn progress, void* user, char** summary_json) {
  return guard("cpx_dataset_run", [&] {
    require_pointer(derivatives_dir, "derivatives_dir");
    require_pointer(out_dir, "out_dir");
    require_pointer(level, "level");
    require_pointer(summary_json, "summary_json");
    *summary_json = nullptr;
    const Json options = parse_options(options_json, "options of cpx_dataset_run");
    Json summary;
    if (std::strcmp(level, "participant") == 0) {
      const auto parsed = dataset::parse_participant_options(options);
      Progress p{progress, user};
      summary = dataset::run_participant_level(derivatives_dir, out_dir, parsed, [p](double f) { return p(f); });
    } else if (std::strcmp(level, "group") == 0) {
      summary = dataset::run_group_level(derivatives_dir, out_dir, options);
    } else {
      fail(ErrorKind::argument, std::string("level must be \"participant\" or \"group\", got \"") + level + "\"");
    }
    *summary_json = copy_string(summary.dump());
  });
}

}  // extern "C"
