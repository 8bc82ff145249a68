#include "output/design.hpp"

#include <cmath>
#include <limits>

#include "base/error.hpp"
#include "output/format.hpp"

namespace critplex::output {

namespace {

std::string join(const std::vector<std::string>& items, const char* separator) {
  std::string text;
  for (const auto& item : items) text += (text.empty() ? "" : separator) + item;
  return text;
}

Json test_json(const cohort::DesignTest& t) {
  Json j{{"measure", t.measure}, {"term", t.term}, {"tested", t.tested}, {"n", t.n}, {"missing", t.missing}};
  if (!t.tested) {
    j["note"] = t.note;
    return j;
  }
  j["levels"] = t.levels;
  j["level_means"] = numbers_or_null(t.level_means);
  j["statistic"] = t.statistic_name;
  j["value"] = number_or_null(t.statistic);
  j["df1"] = t.df1;
  j["df2"] = t.df2;
  j["p_value"] = t.p_value;
  j["p_adjusted"] = number_or_null(t.p_adjusted);
  j["p_parametric"] = number_or_null(t.p_parametric);
  j["exact"] = t.exact;
  j["null_size"] = t.null_size;
  j["estimate"] = number_or_null(t.estimate);
  j["estimate_interval"] = {number_or_null(t.estimate_lower), number_or_null(t.estimate_upper)};
  j["effect"] = t.effect_name;
  j["effect_value"] = number_or_null(t.effect);
  j["effect_interval"] = {number_or_null(t.effect_lower), number_or_null(t.effect_upper)};
  j["spearman_rho"] = number_or_null(t.spearman);
  j["spearman_p"] = number_or_null(t.spearman_p);
  return j;
}

std::vector<double> numbers_of(const Json& list, const std::string& where, const std::string& name, std::size_t rows) {
  if (!list.is_array()) fail(ErrorKind::argument, where + ": \"" + name + "\" must be a list of numbers");
  if (list.size() != rows)
    fail(ErrorKind::argument, where + ": \"" + name + "\" has " + std::to_string(list.size()) + " values for " +
                                  std::to_string(rows) + " subjects");
  std::vector<double> v;
  for (std::size_t i = 0; i < list.size(); ++i) {
    if (list[i].is_null()) v.push_back(std::numeric_limits<double>::quiet_NaN());
    else if (list[i].is_number()) v.push_back(list[i].get<double>());
    else fail(ErrorKind::argument, where + ": \"" + name + "\"[" + std::to_string(i) + "] is not a number or null");
  }
  return v;
}

std::vector<std::string> texts_of(const Json& data, const std::string& where, const std::string& name, std::size_t rows) {
  if (!data.contains(name)) return std::vector<std::string>(rows);
  const Json& list = data.at(name);
  if (!list.is_array() || list.size() != rows)
    fail(ErrorKind::argument, where + ": \"" + name + "\" must be a list of " + std::to_string(rows) + " texts");
  std::vector<std::string> v;
  for (const auto& item : list) {
    if (!item.is_string()) fail(ErrorKind::argument, where + ": \"" + name + "\" holds a value that is not text");
    v.push_back(item.get<std::string>());
  }
  return v;
}


Json curve_test_json(const cohort::DesignCurveTest& t) {
  Json j{{"curve", t.curve}, {"n", t.n}};
  if (!t.result) {
    j["note"] = t.note;
    return j;
  }
  j["statistic"] = t.statistic_name;
  j["density"] = t.density;
  j["values"] = numbers_or_null(t.result->statistic);
  j["threshold"] = t.result->threshold;
  j["exact"] = t.result->exact;
  j["null_size"] = t.result->null_size;
  Json list = Json::array();
  for (const auto& c : t.result->clusters)
    list.push_back({{"first_density", t.density[c.first]}, {"last_density", t.density[c.last]}, {"first", c.first},
                    {"last", c.last}, {"sign", c.sign}, {"mass", c.mass}, {"p_value", c.p_value}});
  j["clusters"] = std::move(list);
  if (!t.result->tfce.empty()) {
    j["tfce"] = numbers_or_null(t.result->tfce);
    j["tfce_p"] = numbers_or_null(t.result->tfce_p);
  }
  return j;
}

}  // namespace


Json design_spec_json(const cohort::DesignSpec& s) {
  return {{"design", cohort::design_name(s.kind)}, {"within", s.within},       {"between", s.between},
          {"levels", s.levels},                    {"score", s.score},         {"covariates", s.covariates},
          {"blocks", s.blocks},                    {"permutations", s.permutations}, {"seed", s.seed},
          {"confidence", s.confidence},            {"curves", s.curves},
          {"curve_statistic", s.tfce ? "tfce" : "cluster_mass"}};
}

Json design_result_json(const cohort::DesignResult& r) {
  Json doc{{"kind", "critplex design tests"}, {"format_version", 1}, {"design", design_spec_json(r.spec)},
           {"levels", r.levels}, {"notes", r.notes}};
  Json tests = Json::array();
  for (const auto& t : r.tests) tests.push_back(test_json(t));
  doc["tests"] = std::move(tests);
  Json curves = Json::array();
  for (const auto& t : r.curve_tests) curves.push_back(curve_test_json(t));
  doc["curve_tests"] = std::move(curves);
  doc["curve_method"] = "cluster mass along the density axis (Maris & Oostenveld 2007) with the design's statistic and "
                        "rearrangements (Freedman-Lane)";
  if (r.spec.record_permutations) doc["permutations_used"] = r.recorded;
  return doc;
}

cohort::DesignResult design_result_from_json(const Json& doc, const cohort::DesignSpec& spec) {
  const double none = std::numeric_limits<double>::quiet_NaN();
  auto number = [&](const Json& j, const char* key) {
    return j.contains(key) && j[key].is_number() ? j[key].get<double>() : none;
  };
  auto pair = [&](const Json& j, const char* key, double& lo, double& hi) {
    lo = hi = none;
    if (j.contains(key) && j[key].is_array() && j[key].size() == 2) {
      if (j[key][0].is_number()) lo = j[key][0].get<double>();
      if (j[key][1].is_number()) hi = j[key][1].get<double>();
    }
  };
  cohort::DesignResult r;
  r.spec = spec;
  r.levels = doc.value("levels", std::vector<std::string>{});
  r.notes = doc.value("notes", std::vector<std::string>{});
  for (const auto& j : doc.at("tests")) {
    cohort::DesignTest t;
    t.measure = j.at("measure").get<std::string>();
    t.term = j.value("term", "");
    t.tested = j.value("tested", false);
    t.n = j.value("n", std::size_t{0});
    t.missing = j.value("missing", std::size_t{0});
    t.note = j.value("note", "");
    if (t.tested) {
      t.levels = j.value("levels", std::vector<std::string>{});
      t.statistic_name = j.value("statistic", "");
      t.statistic = number(j, "value");
      t.df1 = number(j, "df1");
      t.df2 = number(j, "df2");
      t.p_value = number(j, "p_value");
      t.p_adjusted = number(j, "p_adjusted");
      t.p_parametric = number(j, "p_parametric");
      t.exact = j.value("exact", false);
      t.null_size = j.value("null_size", std::uint64_t{0});
      t.estimate = number(j, "estimate");
      pair(j, "estimate_interval", t.estimate_lower, t.estimate_upper);
      t.effect_name = j.value("effect", "");
      t.effect = number(j, "effect_value");
      pair(j, "effect_interval", t.effect_lower, t.effect_upper);
    }
    r.tests.push_back(std::move(t));
  }
  return r;
}

std::string design_tests_tsv(const cohort::DesignResult& r) {
  Tsv table({"measure", "design", "term", "levels", "n", "missing", "statistic", "value", "df1", "df2", "p_value", "p_adjusted",
             "p_parametric", "exact", "null_size", "estimate", "estimate_lower", "estimate_upper", "effect",
             "effect_value", "effect_lower", "effect_upper", "spearman_rho", "spearman_p", "note"});
  const double none = std::numeric_limits<double>::quiet_NaN();
  for (const auto& t : r.tests) {
    const std::string levels = t.levels.empty() ? missing : join(t.levels, ",");
    if (!t.tested) {
      table.add({t.measure, cohort::design_name(r.spec.kind), t.term.empty() ? missing : t.term, levels, cell(t.n), cell(t.missing), missing, cell(none),
                 cell(none), cell(none), cell(none), cell(none), cell(none), missing, missing, cell(none), cell(none),
                 cell(none), missing, cell(none), cell(none), cell(none), cell(none), cell(none), t.note});
      continue;
    }
    table.add({t.measure, cohort::design_name(r.spec.kind), t.term, levels, cell(t.n), cell(t.missing), t.statistic_name,
               cell(t.statistic), cell(t.df1), cell(t.df2), cell(t.p_value), cell(t.p_adjusted), cell(t.p_parametric),
               cell(t.exact), cell(static_cast<std::size_t>(t.null_size)), cell(t.estimate), cell(t.estimate_lower),
               cell(t.estimate_upper), t.effect_name.empty() ? missing : t.effect_name, cell(t.effect),
               cell(t.effect_lower), cell(t.effect_upper), cell(t.spearman), cell(t.spearman_p), missing});
  }
  return table.text();
}

cohort::DesignData design_data_from_json(const Json& data, const std::string& where) {
  if (!data.is_object() || !data.contains("subject") || !data["subject"].is_array())
    fail(ErrorKind::argument, where + ": an object with a \"subject\" list is required");
  cohort::DesignData d;
  const std::size_t rows = data["subject"].size();
  d.subject = texts_of(data, where, "subject", rows);
  d.session = texts_of(data, where, "session", rows);
  d.group = texts_of(data, where, "group", rows);
  for (const auto& [key, value] : data.items())
    if (key != "subject" && key != "session" && key != "group" && key != "columns" && key != "measures" &&
        key != "density" && key != "curves")
      fail(ErrorKind::argument, where + ": unknown key \"" + key + "\"");
  if (data.contains("columns")) {
    if (!data["columns"].is_object()) fail(ErrorKind::argument, where + ": \"columns\" must be an object of lists");
    for (const auto& [name, list] : data["columns"].items())
      d.columns[name] = numbers_of(list, where, "columns." + name, rows);
  }
  if (data.contains("curves")) {
    if (!data.contains("density")) fail(ErrorKind::argument, where + ": \"curves\" need a \"density\" grid");
    d.density = numbers_of(data["density"], where, "density", data["density"].size());
    if (!data["curves"].is_object()) fail(ErrorKind::argument, where + ": \"curves\" must be an object of lists");
    for (const auto& [name, list] : data["curves"].items()) {
      if (!list.is_array() || list.size() != rows)
        fail(ErrorKind::argument, where + ": \"curves." + name + "\" must hold one curve per subject (" +
                                      std::to_string(rows) + ")");
      auto& curves = d.curves[name];
      for (const auto& c : list) curves.push_back(numbers_of(c, where, "curves." + name, d.density.size()));
    }
  }
  if (!data.contains("measures") || !data["measures"].is_array() || data["measures"].empty())
    fail(ErrorKind::argument, where + ": \"measures\" must be a non-empty list of {\"name\", \"values\"}");
  for (const auto& m : data["measures"]) {
    if (!m.is_object() || !m.contains("name") || !m["name"].is_string() || !m.contains("values"))
      fail(ErrorKind::argument, where + ": every measure needs \"name\" and \"values\"");
    d.measure_names.push_back(m["name"].get<std::string>());
    d.measures.push_back(numbers_of(m["values"], where, "measures." + d.measure_names.back(), rows));
  }
  return d;
}

cohort::DesignData design_data(const std::vector<SubjectRecord>& subjects, const std::vector<std::string>& summaries) {
  cohort::DesignData d;
  for (const auto& s : subjects)
    for (const auto& [name, value] : s.covariates) d.columns[name];
  for (auto& [name, values] : d.columns)
    for (const auto& s : subjects) {
      const auto it = s.covariates.find(name);
      values.push_back(it == s.covariates.end() ? std::numeric_limits<double>::quiet_NaN() : it->second);
    }
  for (const auto& s : subjects) {
    d.subject.push_back(s.id);
    d.session.push_back(s.session);
    d.group.push_back(s.group);
  }
  if (!subjects.empty()) d.density = subjects.front().requested;
  for (const auto& s : subjects)
    for (const auto& [name, values] : s.curves)
      if (name != "density") d.curves[name];
  for (auto& [name, rows] : d.curves)
    for (const auto& s : subjects) {
      const auto it = s.curves.find(name);
      rows.push_back(it == s.curves.end() ? std::vector<double>{} : it->second);
    }
  for (const auto& name : summaries) {
    d.measure_names.push_back(name);
    std::vector<double> values;
    for (const auto& s : subjects) values.push_back(s.summary(name));
    d.measures.push_back(std::move(values));
  }
  return d;
}

std::vector<NamedText> design_files(const cohort::DesignResult& result) {
  return {{"design_tests.tsv", design_tests_tsv(result)}, {"design_tests.json", design_result_json(result).dump(1) + "\n"}};
}

}  // namespace critplex::output
