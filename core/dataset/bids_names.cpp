#include "dataset/bids_names.hpp"

#include <algorithm>
#include <cctype>

#include "base/error.hpp"

namespace critplex::dataset {

std::string BidsName::get(const std::string& key) const {
  for (const auto& [k, v] : entities)
    if (k == key) return v;
  return "";
}

const std::vector<std::string>& entity_order() {
  // BIDS specification, schema rules/entities.yaml (the order file names use), by key:
  // subject, template, session, cohort, sample, task, tracksys, acquisition, nucleus,
  // volume, ceagent, tracer, stain, reconstruction, direction, run, modality, echo, flip,
  // inversion, mtransfer, part, processing, hemisphere, space, split, recording, chunk,
  // atlas, segmentation, scale, resolution, density, label, prov, description.
  static const std::vector<std::string> order{
      "sub",  "tpl",  "ses",  "cohort", "sample", "task", "tracksys", "acq",       "nuc",   "voi",   "ce",    "trc",
      "stain", "rec", "dir",  "run",    "mod",    "echo", "flip",     "inv",       "mt",    "part",  "proc",  "hemi",
      "space", "split", "recording", "chunk", "atlas", "seg", "scale", "res", "den", "label", "prov", "desc"};
  return order;
}

std::optional<std::size_t> entity_rank(const std::string& key) {
  const auto& order = entity_order();
  const auto it = std::find(order.begin(), order.end(), key);
  if (it == order.end()) return std::nullopt;
  return static_cast<std::size_t>(it - order.begin());
}

bool is_bids_label(const std::string& text) {
  return !text.empty() && std::all_of(text.begin(), text.end(), [](unsigned char c) { return std::isalnum(c) != 0; });
}

std::optional<BidsName> parse_bids_name(const std::string& file_name) {
  const auto dot = file_name.find('.');
  if (dot == std::string::npos || dot == 0) return std::nullopt;
  BidsName name;
  name.extension = file_name.substr(dot);
  const std::string stem = file_name.substr(0, dot);
  std::vector<std::string> parts;
  std::size_t start = 0;
  while (true) {
    const auto end = stem.find('_', start);
    parts.push_back(stem.substr(start, end == std::string::npos ? std::string::npos : end - start));
    if (end == std::string::npos) break;
    start = end + 1;
  }
  if (parts.size() < 2) return std::nullopt;
  name.suffix = parts.back();
  if (!is_bids_label(name.suffix)) return std::nullopt;
  std::optional<std::size_t> last;
  for (std::size_t i = 0; i + 1 < parts.size(); ++i) {
    const auto dash = parts[i].find('-');
    if (dash == std::string::npos) return std::nullopt;
    std::string key = parts[i].substr(0, dash), label = parts[i].substr(dash + 1);
    const auto rank = entity_rank(key);
    if (!rank || !is_bids_label(label) || (last && *rank <= *last)) return std::nullopt;
    last = rank;
    name.entities.emplace_back(std::move(key), std::move(label));
  }
  return name;
}

std::string format_bids_name(Entities entities, const std::string& suffix, const std::string& extension) {
  for (const auto& [key, label] : entities) {
    if (!entity_rank(key)) fail(ErrorKind::argument, "BIDS name: '" + key + "' is not a BIDS entity");
    if (!is_bids_label(label))
      fail(ErrorKind::argument, "BIDS name: the label '" + label + "' of entity '" + key + "' must be letters and digits only");
  }
  if (!is_bids_label(suffix)) fail(ErrorKind::argument, "BIDS name: the suffix '" + suffix + "' must be letters and digits only");
  std::stable_sort(entities.begin(), entities.end(),
                   [](const auto& a, const auto& b) { return *entity_rank(a.first) < *entity_rank(b.first); });
  std::string name;
  for (std::size_t i = 0; i < entities.size(); ++i) {
    if (i > 0 && entities[i].first == entities[i - 1].first)
      fail(ErrorKind::argument, "BIDS name: entity '" + entities[i].first + "' given twice");
    name += entities[i].first + "-" + entities[i].second + "_";
  }
  return name + suffix + extension;
}

std::string label_from(const std::string& text) {
  std::string label;
  for (char c : text)
    if (std::isalnum(static_cast<unsigned char>(c))) label.push_back(c);
  return label;
}

}  // namespace critplex::dataset
