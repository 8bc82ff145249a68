// BIDS file names: entities (key-label pairs) in the specification's order, a suffix and an
// extension. The rules we rely on (BIDS specification, "Common principles: Filenames" and
// the entity order of its schema, rules/entities.yaml):
//  - a name is <key>-<label>[_<key>-<label>...]_<suffix><extension>;
//  - labels and suffixes are letters and digits only; the extension starts at the first '.';
//  - entities appear in one fixed order (entity_order()), each at most once.
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace critplex::dataset {

using Entities = std::vector<std::pair<std::string, std::string>>;  // key, label

struct BidsName {
  Entities entities;
  std::string suffix;     // e.g. "bold"
  std::string extension;  // e.g. ".nii.gz" (from the first '.')
  // The label of `key`, "" when absent.
  std::string get(const std::string& key) const;
};

// Entity keys in the order the specification fixes for file names.
const std::vector<std::string>& entity_order();
// Position of a key in entity_order(); nothing when the key is not a BIDS entity.
std::optional<std::size_t> entity_rank(const std::string& key);

bool is_bids_label(const std::string& text);  // non-empty, letters and digits only

// Splits a file name (no folder); nothing when it does not have the BIDS shape (unknown
// keys, labels with other characters, a key twice, entities out of order).
std::optional<BidsName> parse_bids_name(const std::string& file_name);

// Builds a name: entities are put into the specification's order; an unknown key, a
// repeated key or a label that is not letters and digits is an error naming it.
std::string format_bids_name(Entities entities, const std::string& suffix, const std::string& extension);

// A label made of the letters and digits of `text` ("0.01-0.1 Hz" -> "00101Hz"); "" when none.
std::string label_from(const std::string& text);

}  // namespace critplex::dataset
