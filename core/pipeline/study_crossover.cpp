// The crossover form of the invented sleep laboratory: the same volunteers scanned twice,
// once rested and once after a night without sleep, with a sleepiness rating per session.
#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "base/random.hpp"
#include "io/files.hpp"
#include "pipeline/study.hpp"

namespace critplex::pipeline {

namespace {

// One session of a volunteer: its own seed (fresh signals, same person), the volunteer's
// trait global strength shifted by the session's effect plus a small day-to-day change.
struct Session {
  std::string name;
  simulate::SimulatedSubject subject;
  double sleepiness = 0.0;
};

std::vector<Session> sessions_of(const simulate::CohortModel& m, const simulate::SimulatedSubject& volunteer,
                                 std::uint64_t stream) {
  const double shift = m.groups[1].global_mean - m.groups[0].global_mean;
  Random random(derived_seed(m.seed ^ 0x5c7a11e7ULL, stream));
  std::vector<Session> out;
  for (int k = 0; k < 2; ++k) {
    Session s;
    s.name = k == 0 ? m.groups[0].name : m.groups[1].name;
    s.subject = volunteer;
    s.subject.seed = derived_seed(volunteer.seed, static_cast<std::uint64_t>(k + 1));
    const double day_to_day = 0.5 * m.groups[0].global_sd * random.normal();
    s.subject.global_strength = std::max(0.0, volunteer.global_strength + (k == 1 ? shift : 0.0) + day_to_day);
    // An invented 1-9 rating: higher after the night without sleep and with a stronger
    // global signal, plus rating noise.
    const double rating = 3.0 + (k == 1 ? 3.5 : 0.0) +
                          6.0 * (s.subject.global_strength - m.groups[0].global_mean) + 0.8 * random.normal();
    s.sleepiness = std::clamp(std::round(rating), 1.0, 9.0);
    out.push_back(std::move(s));
  }
  return out;
}

}  // namespace

Json write_crossover_study(const simulate::CohortModel& model, Json config, const std::string& dir) {
  if (model.groups.size() != 2)
    fail(ErrorKind::argument, "simulate options: the crossover design needs exactly 2 groups (the two sessions), got " +
                                  std::to_string(model.groups.size()));
  // Volunteers are the first group's subjects; the second group only sets the session shift.
  simulate::CohortModel volunteers_model = model;
  volunteers_model.groups = {model.groups[0]};
  simulate::CohortPlan plan = simulate::plan_cohort(volunteers_model);
  if (config.is_object() && config.contains("connect") && config["connect"].is_object() &&
      !config["connect"].contains("sampling_interval"))
    config["connect"]["sampling_interval"] = model.sampling_interval;
  io::make_folders(dir);
  io::make_folders(dir + "/timeseries");
  std::string manifest = "subject\tsession\tgroup\ttimeseries\tage\tsleepiness\n";
  Json rows = Json::array();
  const auto volunteers = plan.subjects;
  for (std::size_t i = 0; i < volunteers.size(); ++i) {
    const std::string id = "v" + std::string(i + 1 < 10 ? "0" : "") + std::to_string(i + 1);
    for (const auto& s : sessions_of(model, volunteers[i], i)) {
      plan.subjects[i] = s.subject;
      const std::string rel = "timeseries/sub-" + id + "_ses-" + s.name + "_timeseries.tsv";
      io::write_file_atomically(dir + "/" + rel, series_tsv(simulate::simulate_subject(volunteers_model, plan, i)));
      manifest += id + "\t" + s.name + "\tvolunteers\t" + rel + "\t" + io::format_double(volunteers[i].age) + "\t" +
                  io::format_double(s.sleepiness) + "\n";
      rows.push_back({{"subject", id}, {"session", s.name}, {"global_strength", s.subject.global_strength},
                      {"age", volunteers[i].age}, {"sleepiness", s.sleepiness}});
    }
  }
  io::write_file_atomically(dir + "/manifest.tsv", manifest);
  io::write_file_atomically(dir + "/cohort_config.json", config.dump(1) + "\n");
  const Json model_doc{{"model", simulate::to_json(model)}, {"design", "crossover"}, {"sessions", rows},
                       {"note", "Invented data from critplex's demo cohort model (crossover: the same invented "
                                "volunteers rested and after a night without sleep); no real person is described."}};
  io::write_file_atomically(dir + "/model.json", model_doc.dump(1) + "\n");
  return {{"layout", "tsv"}, {"design", "crossover"}, {"subjects", volunteers.size()}, {"sessions", 2},
          {"regions", model.regions}, {"frames", model.frames}, {"manifest", dir + "/manifest.tsv"},
          {"config", dir + "/cohort_config.json"}};
}

}  // namespace critplex::pipeline
